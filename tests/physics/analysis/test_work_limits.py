"""A trap search estimated past an hour or a quarter of the machine's memory is refused before
any work, in one sentence naming the key that lowers it; ordinary scenes pass."""
from __future__ import annotations

import math
import subprocess
import sys

import numpy as np
import pytest
from repo_paths import SAMPLES

from trapscape.physics.analysis import work_limits
from trapscape.physics.field.parts import part_sources
from trapscape.scene.errors import SceneError
from trapscape.scene.loader import load_scene, load_scene_text

SPHERE = """units = "mm"
[search_box]
min = [-10, -10, -10]
max = [10, 10, 10]
spacing = {spacing}
[[magnet]]
name = "ball"
shape = "sphere"
size = 10
remanence = 1.2
method = "dipoles"
cell_size = {cell}
"""


def test_the_cell_estimate_matches_the_lattice_that_is_built():
    scene = load_scene_text(SPHERE.format(spacing=1, cell=0.5))
    estimate = work_limits.lattice_cells(scene.magnets[0])
    built = len(part_sources(scene.magnets[0], 0)[0].dipole_positions)
    # a sphere of diameter 10 cells-of-0.5 wide: (4/3) pi 10^3 = 4189 cells by volume
    assert estimate == pytest.approx(4 / 3 * math.pi * 10**3, rel=1e-9)
    # the lattice also keeps the cells the surface cuts: at most a shell one cell thick more,
    # 3 c / R of the volume for a sphere of radius R
    assert estimate <= built <= estimate * (1 + 3 * 0.5 / 5)


def test_parts_with_closed_forms_cost_no_cells():
    scene = load_scene(str(SAMPLES / "level_gauge.toml"))
    assert all(work_limits.lattice_cells(m) == 0 for m in scene.magnets)
    work_limits.check_search_work(scene)  # no error


def test_the_estimate_grows_with_points_and_cells():
    small = work_limits.estimated_search_seconds(10_000, 1e4)
    assert work_limits.estimated_search_seconds(10_000, 0) == 0
    assert work_limits.estimated_search_seconds(100_000, 1e4) > small
    assert work_limits.estimated_search_seconds(10_000, 1e5) > small


def test_a_search_past_the_memory_budget_names_the_cell_size(monkeypatch):
    monkeypatch.setattr(work_limits, "machine_memory", lambda: 4e9)  # 1 GB for the search
    scene = load_scene_text(SPHERE.format(spacing=1, cell=0.05))  # 4.2 million cells, 10 GB
    with pytest.raises(SceneError, match=r"need about 9 GB.*all in 'ball'.*cell_size"):
        work_limits.check_search_work(scene)


def test_a_search_past_an_hour_names_cell_size_and_spacing(monkeypatch):
    monkeypatch.setattr(work_limits, "machine_memory", lambda: 1e15)
    monkeypatch.setattr(work_limits, "MAX_SEARCH_SECONDS", 1.0)
    scene = load_scene_text(SPHERE.format(spacing=0.5, cell=0.2))
    with pytest.raises(SceneError, match=r"take about .* hours.*cell_size.*spacing \(now 0.5 mm\)"):
        work_limits.check_search_work(scene)


def test_the_command_refuses_before_building_the_lattice(tmp_path):
    scene = tmp_path / "fine.toml"
    scene.write_text(SPHERE.format(spacing=0.25, cell=0.02))  # 65 million cells
    done = subprocess.run([sys.executable, "-m", "trapscape.viewers.cli", "traps", str(scene),
                           "-o", str(tmp_path / "t.json")], capture_output=True, text=True,
                          timeout=120)
    assert done.returncode == 2, done.stderr
    last = done.stderr.strip().splitlines()[-1]
    assert last.startswith("trapscape: the trap search would") and "cell_size" in last
    assert not (tmp_path / "t.json").exists()
    assert "Traceback" not in done.stderr
    np.testing.assert_equal(len(done.stderr.strip().splitlines()), 1)
