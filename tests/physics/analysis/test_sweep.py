"""Sweeps: the --vary form, following equilibria between steps, and a fold found where a derived
closed form puts it."""
from __future__ import annotations

import csv
import json
import subprocess
import sys

import numpy as np
import pytest
from repo_paths import SAMPLES

from trapscape.physics.analysis.sweep import (
    continued,
    find_folds,
    grid_of,
    narrowed,
    parse_vary,
    track_line,
    unexplained_ends,
)
from trapscape.scene.errors import SceneError
from trapscape.scene.units import MU0

CLI = [sys.executable, "-m", "trapscape.viewers.cli"]


def test_vary_gives_count_values_with_both_ends():
    vary = parse_vary("gap=2..6@5")
    assert vary.name == "gap" and vary.values == (2.0, 3.0, 4.0, 5.0, 6.0)
    assert parse_vary("x = -1.5 .. 1e-1 @ 2").values == (-1.5, 0.1)


@pytest.mark.parametrize("text", ["gap=2..6", "gap=2..2@3", "gap=a..6@3", "gap=2..6@1",
                                  "gap=2..6@100000", "=2..6@3", "gap=nan..6@3"])
def test_a_malformed_vary_is_one_sentence(text):
    with pytest.raises(SceneError, match="--vary"):
        parse_vary(text)


def test_a_grid_varies_the_first_parameter_fastest():
    grid = grid_of([parse_vary("a=0..1@2"), parse_vary("b=5..6@2")])
    assert grid == [{"a": 0, "b": 5}, {"a": 1, "b": 5}, {"a": 0, "b": 6}, {"a": 1, "b": 6}]
    with pytest.raises(SceneError):
        grid_of([parse_vary("a=0..1@2"), parse_vary("a=0..1@2")])


def _step(*equilibria):
    return {"params": {}, "weight_N": 1.0,
            "equilibria": [{"position": list(p), "class": c} for p, c in equilibria]}


def test_equilibria_are_followed_by_position_within_their_class():
    steps = [_step(((0, 0, 0), "stable"), ((0, 0, 5), "saddle")),
             _step(((0, 0, 4.8), "saddle"), ((0, 0, 0.3), "stable")),  # listed in another order
             _step(((0, 0, 0.6), "unstable"), ((0, 0, 4.5), "stable"))]  # classes swapped places
    tracks = track_line(steps, match_distance=1.0)
    stable, saddle = tracks[0], tracks[1]
    assert stable.members[:2] == [(0, 0), (1, 1)] and saddle.members[:2] == [(0, 1), (1, 0)]
    # at the third step neither may jump into the other class: both end, two new tracks start
    assert stable.last == 1 and saddle.last == 1 and len(tracks) == 4


def test_a_stable_and_an_unstable_track_ending_together_are_a_fold_and_bisection_narrows_it():
    # A saddle-node in normal form: x^2 = mu - p has the pair x = +-sqrt(mu - p) for p < mu
    # (Strogatz, Nonlinear Dynamics and Chaos, 3.1); mu = 0.37 here.
    mu = 0.37

    def search(p):
        if p >= mu:
            return _step()
        x = np.sqrt(mu - p)
        return _step(((0, 0, x), "stable"), ((0, 0, -x), "unstable"))

    values = [0.0, 0.25, 0.5, 0.75]
    steps = [search(p) for p in values]
    tracks = track_line(steps, match_distance=1.0)
    folds = find_folds(steps, tracks, values, match_distance=1.0)
    assert len(folds) == 1 and folds[0].kind == "lost" and folds[0].between == (0.25, 0.5)
    fold = narrowed(folds[0], search, match_distance=1.0, rounds=6)
    assert fold.between[0] <= mu <= fold.between[1]
    assert fold.between[1] - fold.between[0] == pytest.approx(0.25 / 64)


def _fold_radius(rho, diameter, chi, moment, r0=16e-3):
    """Where a bead on a vertical line at distance r from a dipole (north toward the line) is
    lost: its weight equals the largest upward pull along the line. Closed form of the dipole's
    field (Jackson, Classical Electrodynamics, 3rd ed., 5.56; exact outside a uniformly
    magnetised sphere, 5.10) with the point probe's energy -chi_eff V B^2 / (2 mu0),
    chi_eff = 3 chi / (chi + 3) (Jackson 4.56, the sphere's demagnetisation); the pull scales as
    r^-7, so r* = r0 (F_max(r0) / weight)^(1/7)."""
    z = np.linspace(-2 * r0, 0.0, 400_001)
    d2 = r0**2 + z**2
    B2 = (MU0 * moment / (4 * np.pi)) ** 2 / d2**5 * ((3 * r0**2 - d2) ** 2 + 9 * r0**2 * z**2)
    volume = np.pi / 6 * diameter**3
    pull = 3 * chi / (chi + 3) * volume / (2 * MU0) * np.gradient(B2, z)
    weight = rho * volume * 9.80665
    return r0 * (pull.max() / weight) ** (1 / 7)


FOLD_SCENE = """
title = "a sphere magnet and a steel bead on a vertical line beside it"
units = "mm"
[params]
r = 14.0
[[magnet]]
name = "ball"
shape = "sphere"
diameter = 10
position = [0, 0, 0]
north = "+x"
grade = "N42"
[probe]
kind = "soft"
diameter = 1.0
density = 7850
susceptibility = 1000
saturation = 2.0
[probe.constraint]
kind = "line"
point = ["r", 0, 0]
direction = [0, 0, 1]
[search_box]
min = ["r - 2", -2, -20]
max = ["r + 2", 2, 20]
resolution = 201
"""


def test_sweep_finds_the_fold_where_the_closed_form_puts_it(tmp_path):
    scene = tmp_path / "fold.toml"
    scene.write_text(FOLD_SCENE)
    run = subprocess.run(CLI + ["sweep", str(scene), "--vary", "r=14..17@4", "-o",
                                str(tmp_path / "out"), "--workers", "1"],
                         capture_output=True, text=True, timeout=900, check=False)
    assert run.returncode == 0, run.stderr
    payload = json.loads((tmp_path / "out" / "sweep.json").read_text())
    moment = 1.3 / MU0 * np.pi / 6 * 0.01**3  # N42 at 1.3 T (the project's grade table)
    expected = _fold_radius(7850, 1e-3, 1000, moment) * 1e3
    (fold,) = payload["folds"]
    lo, hi = fold["between"]
    assert fold["kind"] == "lost" and hi - lo == pytest.approx(1 / 16)
    # tolerance chosen before looking: the finite probe and the search's Newton, 0.3 % of r
    assert lo - 0.003 * expected <= expected <= hi + 0.003 * expected
    assert "meet and vanish (the trap is lost) between r = " in run.stdout
    rows = list(csv.DictReader((tmp_path / "out" / "sweep.csv").open()))
    stable = [row for row in rows if row["class"] == "stable"]
    assert [float(row["r"]) for row in stable] == [14, 15, 16]
    heights = [float(row["along_line_mm"]) for row in stable]
    assert heights == sorted(heights, reverse=True)  # the bead sinks as the line moves out
    assert (tmp_path / "out" / "sweep.png").stat().st_size > 10_000


@pytest.mark.parametrize("args, words", [
    (["--vary", "nope=1..2@2"], "no [params] value of that name"),
    (["--vary", "gap=1..2"], "NAME=START..STOP@COUNT"),
])
def test_bad_sweeps_are_one_sentence_and_exit_2(tmp_path, args, words):
    run = subprocess.run(CLI + ["sweep", str(SAMPLES / "level_gauge.toml"), *args, "-o",
                                str(tmp_path / "o")], capture_output=True, text=True,
                         timeout=300, check=False)
    assert run.returncode == 2 and words in run.stderr
    assert len(run.stderr.strip().splitlines()) <= 3  # usage lines at most, then the sentence


def test_an_output_that_is_a_file_is_refused_before_any_search(tmp_path):
    target = tmp_path / "taken"
    target.write_text("keep me")
    run = subprocess.run(CLI + ["sweep", str(SAMPLES / "level_gauge.toml"), "--vary", "gap=2..3@2",
                                "-o", str(target)], capture_output=True, text=True, timeout=300,
                         check=False)
    assert run.returncode == 2 and "give a folder" in run.stderr
    assert target.read_text() == "keep me"


def test_an_unstable_branch_meets_only_one_stable_branch():
    # two stable branches end beside one saddle (a symmetric pair): one fold, not two
    steps = [_step(((0, 0, -1), "stable"), ((0, 0, 0), "saddle"), ((0, 0, 1), "stable")),
             _step()]
    tracks = track_line(steps, match_distance=5.0)
    folds = find_folds(steps, tracks, [0.0, 1.0], match_distance=5.0)
    assert len(folds) == 1 and folds[0].tracks[1] == 2


def test_a_track_that_ends_without_a_fold_is_searched_again_from_its_neighbour():
    # a stable trap seen at steps 0 and 2 but missed at step 1 (no partner there: no fold)
    steps = [_step(((0, 0, 0), "stable")), _step(), _step(((0, 0, 0.2), "stable"))]
    tracks = track_line(steps, match_distance=1.0)
    folds = find_folds(steps, tracks, [0.0, 1.0, 2.0], 1.0)
    assert folds == [] and unexplained_ends(tracks, folds, 3) == [(1, (0, 2))]
    asked = []

    def search_from(s, starts):
        asked.append((s, np.asarray(starts).tolist()))
        return _step(((0, 0, 0.1), "stable"))  # the solve from the neighbour converges

    again, changed = continued(steps, tracks, folds, search_from)
    assert changed == [1] and again[1]["continued"] and len(again[1]["equilibria"]) == 1
    assert asked == [(1, [[0.0, 0.0, 0.0], [0.0, 0.0, 0.2]])]  # once, from both neighbours
    assert len(track_line(again, 1.0)) == 1  # now one trap across the whole line


def test_a_fold_is_not_searched_again():
    steps = [_step(((0, 0, 0), "stable"), ((0, 0, 0.4), "unstable")), _step()]
    tracks = track_line(steps, match_distance=1.0)
    folds = find_folds(steps, tracks, [0.0, 1.0], 1.0)
    assert len(folds) == 1 and unexplained_ends(tracks, folds, 2) == []


def test_starts_reach_an_equilibrium_the_grid_candidates_miss(monkeypatch):
    """The continuation path through the trap search: with no grid candidate at all, a start
    near the unstable middle between two facing discs converges onto it (it lies on the
    symmetry plane x = 0 by the mirror symmetry of the sample)."""
    import trapscape.physics.traps.refine as refine
    from trapscape.physics.traps.problem import TrapProblem
    from trapscape.physics.traps.scan import scan
    from trapscape.physics.field.model import FieldModel
    from trapscape.scene.loader import load_scene

    scene = load_scene(str(SAMPLES / "bead_pair.toml"))
    problem = TrapProblem.from_scene(FieldModel.from_scene(scene), scene)
    grid = scan(problem)
    assert any(abs(e.position[0]) < 1e-9 for e in refine.free_equilibria(problem, grid))
    monkeypatch.setattr(refine, "sign_change_cells", lambda grid: np.empty((0, 3)))
    assert refine.free_equilibria(problem, grid) == []
    found = refine.free_equilibria(problem, grid, starts=[[0.4e-3, 0.2e-3, 0.0]])
    assert len(found) == 1 and abs(found[0].position[0]) < 1e-9
    assert found[0].position[1] == 0.0  # put on the guide line first
