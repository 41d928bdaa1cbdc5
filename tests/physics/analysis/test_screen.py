"""Screening: spec files, verdicts and ranks on known figures, and a batch that survives bad
layouts, time-outs and being killed."""
from __future__ import annotations

import csv
import json
import shutil
import signal
import subprocess
import sys
import time

import pytest
from repo_paths import SAMPLES

from trapscape.physics.analysis.screen import RowLog, finished_rows, layouts_from
from trapscape.physics.analysis.spec import Requirement, Spec, load_spec, scores, verdict
from trapscape.scene.errors import SceneError

CLI = [sys.executable, "-m", "trapscape.viewers.cli", "screen"]
GAUGE = str(SAMPLES / "level_gauge.toml")
GAUGE_SPEC = str(SAMPLES / "level_gauge.spec.toml")


def test_the_sample_spec_reads():
    spec = load_spec(GAUGE_SPEC)
    assert [r.figure for r in spec.requirements] == ["trap_along_line", "escape_over_weight",
                                                     "B_at"]
    assert spec.requirements[2].key == "B_T@(60,0,0)" and spec.rank["magnet_mass_g"] == -0.5


@pytest.mark.parametrize("text, words", [
    ("", "no [[require]]"),
    ("[[require]]\nfigure = 'nope'\nat_least = 1\n", "figure must be one of"),
    ("[[require]]\nfigure = 'escape_force_N'\n", "give at_least"),
    ("[[require]]\nfigure = 'escape_force_N'\nbetween = [3, 1]\n", "LOW <= HIGH"),
    ("[[require]]\nfigure = 'pull_N'\nat_least = 1\n", "needs gap"),
    ("[[require]]\nfigure = 'B_at'\npoint = [0, 0]\nat_most = 1\n", "point = [x, y, z]"),
    ("[[require]]\nfigure = 'escape_force_N'\nat_least = nan\n", "not a finite number"),
    ("[[require]]\nfigure = 'escape_force_N'\nat_least = 1\n[rank]\nB_at = 1\n", "to rank by"),
    ("colour = 1\n", "unknown key 'colour'"),
])
def test_a_bad_spec_is_one_sentence(tmp_path, text, words):
    path = tmp_path / "s.spec.toml"
    path.write_text(text)
    with pytest.raises(SceneError, match=words.replace("[", r"\[").replace("]", r"\]")):
        load_spec(path)


def test_the_first_unmet_requirement_is_named_with_the_layouts_value():
    spec = Spec("t", (Requirement("trap_along_line", -1.0, 1.0),
                      Requirement("escape_over_weight", low=3.0)), {})
    assert verdict(spec, {"trap_along_line": 0.2, "escape_over_weight": 4.0}) == (True, None)
    assert verdict(spec, {"trap_along_line": 0.2, "escape_over_weight": 1.07}) == (
        False, "escape_over_weight at least 3: 1.07")
    passed, failing = verdict(spec, {"trap_along_line": None, "escape_over_weight": None})
    assert not passed and failing.startswith("trap_along_line between -1 and 1: no value")


def test_scores_weigh_figures_by_their_median_so_units_do_not_matter():
    spec = Spec("t", (), {"escape_over_weight": 1.0, "magnet_mass_g": -1.0})
    rows = [{"passed": True, "figures": {"escape_over_weight": 2.0, "magnet_mass_g": 10.0}},
            {"passed": True, "figures": {"escape_over_weight": 4.0, "magnet_mass_g": 30.0}},
            {"passed": False, "figures": {"escape_over_weight": 9.0, "magnet_mass_g": 1.0}}]
    # medians over the passing rows 3 and 20: 2/3 - 10/20 and 4/3 - 30/20
    result = scores(spec, rows)
    assert result[0] == pytest.approx(2 / 3 - 0.5) and result[1] == pytest.approx(4 / 3 - 1.5)
    assert result[2] is None


def test_folders_give_their_scenes_without_the_specs(tmp_path):
    shutil.copy(GAUGE, tmp_path / "a.toml")
    shutil.copy(GAUGE_SPEC, tmp_path / "a.spec.toml")
    layouts = layouts_from([str(tmp_path)], [{"gap": 2.0}, {"gap": 3.0}])
    assert [x.key for x in layouts] == [f"{tmp_path / 'a.toml'} gap=2.0",
                                        f"{tmp_path / 'a.toml'} gap=3.0"]
    with pytest.raises(SceneError, match="no such scene file or folder"):
        layouts_from([str(tmp_path / "missing.toml")])


def test_a_row_cut_short_by_a_kill_is_dropped_and_the_log_goes_on(tmp_path):
    path = tmp_path / "rows.jsonl"
    path.write_text(json.dumps({"key": "a"}) + "\n" + '{"key": "b", "fig')
    log = RowLog(path)
    log.append({"key": "c"})
    log.close()
    assert [r["key"] for r in finished_rows(path)] == ["a", "c"]


def _screen(tmp_path, *args, timeout=600):
    return subprocess.run(CLI + [*args, "-o", str(tmp_path / "out.csv")], capture_output=True,
                          text=True, timeout=timeout, check=False)


def test_the_gauge_screen_passes_the_close_tubes_and_names_why_the_others_fail(tmp_path):
    run = _screen(tmp_path, GAUGE, "--spec", GAUGE_SPEC, "--vary", "gap=2..6@3",
                  "--workers", "2")
    assert run.returncode == 0, run.stderr
    rows = list(csv.DictReader((tmp_path / "out.csv").open()))
    by_gap = {r["overrides"]: r for r in rows}
    assert by_gap["gap=2.0"]["passed"] == "yes" and by_gap["gap=2.0"]["rank"] == "1"
    # the figures decide: the verdict agrees with them and with the spec's bounds
    for row in rows:
        ratio = row["escape_over_weight"]
        held = ratio != "" and float(ratio) >= 3 and -1.5 <= float(row["trap_along_line"]) <= 1.5
        assert (row["passed"] == "yes") == held
    assert "escape_over_weight at least 3" in by_gap["gap=4.0"]["failing"]
    assert "no value" in by_gap["gap=6.0"]["failing"]
    assert len((tmp_path / "out.jsonl").read_text().splitlines()) == 3
    assert (tmp_path / "out.png").stat().st_size > 10_000  # the figures against the gap


def test_a_broken_scene_and_a_timed_out_layout_are_rows_and_the_batch_goes_on(tmp_path):
    folder = tmp_path / "layouts"
    folder.mkdir()
    shutil.copy(GAUGE, folder / "good.toml")
    (folder / "broken.toml").write_text("title = 'no units'\n")
    shutil.copy(SAMPLES / "graphite_stage.toml", folder / "slow.toml")  # tens of seconds
    run = _screen(tmp_path, str(folder), "--spec", GAUGE_SPEC, "--timeout", "1.5",
                  "--workers", "1")
    assert run.returncode == 3, run.stderr
    rows = {r["scene"].rsplit("/", 1)[-1]: r for r in
            csv.DictReader((tmp_path / "out.csv").open())}
    assert "units" in rows["broken.toml"]["error"]
    assert rows["slow.toml"]["error"] == "timed out after 1.5 s"
    assert rows["good.toml"]["error"] == "" or "timed out" in rows["good.toml"]["error"]
    assert "could not be run" in run.stdout


def test_a_killed_batch_resumes_with_no_row_lost_or_repeated(tmp_path):
    args = CLI + [GAUGE, "--spec", GAUGE_SPEC, "--vary", "gap=2..4.5@6", "--workers", "1",
                  "-o", str(tmp_path / "out.csv")]
    process = subprocess.Popen(args, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    log = tmp_path / "out.jsonl"
    deadline = time.monotonic() + 600
    while time.monotonic() < deadline and process.poll() is None:
        if log.exists() and len(finished_rows(log)) >= 2:
            break
        time.sleep(0.2)
    process.send_signal(signal.SIGKILL)
    process.wait()
    before = len(finished_rows(log))
    assert 2 <= before < 6
    run = subprocess.run(args, capture_output=True, text=True, timeout=600, check=False)
    assert run.returncode == 0, run.stderr
    keys = [r["key"] for r in finished_rows(log)]
    assert len(keys) == 6 == len(set(keys))
    assert f"({before} already in" in run.stdout
    assert len(list(csv.DictReader((tmp_path / "out.csv").open()))) == 6


def test_a_dask_local_cluster_gives_the_process_pools_table(tmp_path):
    pytest.importorskip("distributed")
    args = [GAUGE, "--spec", GAUGE_SPEC, "--vary", "gap=2..6@3", "--workers", "2"]
    tables = []
    for name, extra in (("pool", []), ("dask", ["--dask", "local"])):
        run = subprocess.run(CLI + args + extra + ["-o", str(tmp_path / f"{name}.csv")],
                             capture_output=True, text=True, timeout=900, check=False)
        assert run.returncode == 0, run.stderr
        rows = list(csv.DictReader((tmp_path / f"{name}.csv").open()))
        tables.append([{k: v for k, v in r.items() if k != "seconds"} for r in rows])
    assert tables[0] == tables[1] and len(tables[0]) == 3


def test_a_changed_spec_redoes_the_layouts_judged_by_the_old_one(tmp_path):
    spec = tmp_path / "s.spec.toml"
    spec.write_text("[[require]]\nfigure = 'magnet_mass_g'\nat_most = 1\n")
    args = [GAUGE, "--spec", str(spec), "--workers", "1"]
    first = _screen(tmp_path, *args)
    assert first.returncode == 0 and "0 pass" in first.stdout
    spec.write_text("[[require]]\nfigure = 'magnet_mass_g'\nat_least = 1\n")
    second = _screen(tmp_path, *args)
    assert second.returncode == 0 and "1 pass" in second.stdout and "already" not in second.stdout
    rows = list(csv.DictReader((tmp_path / "out.csv").open()))
    assert len(rows) == 1 and rows[0]["passed"] == "yes"


STAND = [str(SAMPLES / "stand.template.toml"), str(SAMPLES / "stand_parts.csv"),
         str(SAMPLES / "stand.spec.toml")]


def _stand_exports(folder, radii=("15", "20")):
    subprocess.run([sys.executable, str(SAMPLES / "make_assembly.py"), "--variants",
                    str(folder)], check=True, capture_output=True)
    for exported in folder.glob("*.3mf"):
        if exported.stem.removeprefix("stand-r") not in radii:
            exported.unlink()


def test_a_folder_of_cad_exports_is_screened_through_one_template_and_parts_list(tmp_path):
    import trimesh

    exports = tmp_path / "exports"
    _stand_exports(exports)
    open_box = trimesh.creation.box(extents=[5, 5, 5])
    open_box.update_faces(list(range(len(open_box.faces) - 2)))  # one side left open
    open_box.export(exports / "open.stl")
    template, parts, spec = STAND
    run = _screen(tmp_path, str(exports), "--template", template, "--parts", parts,
                  "--spec", spec, "--workers", "1")
    assert run.returncode == 3, run.stderr  # the open export could not be run
    rows = {r["cad_export"].rsplit("/", 1)[-1]: r for r in
            csv.DictReader((tmp_path / "out.csv").open())}
    assert set(rows) == {"stand-r15.3mf", "stand-r20.3mf", "open.stl"}
    assert "not closed" in rows["open.stl"]["error"]
    for name in ("stand-r15.3mf", "stand-r20.3mf"):
        row = rows[name]
        assert row["passed"] == "yes", row
        assert 0 <= float(row["trap_along_line"]) <= 4  # inside the ring, as the spec asks
    # the scene each export became: the template's probe and box, the six discs and the ring
    # (the base plate ignored as the parts list says)
    from trapscape.scene.loader import load_scene

    scene = load_scene(str(tmp_path / "out-layouts" / "stand-r15.toml"))
    assert sorted(m.name for m in scene.magnets) == [f"disc-{i}" for i in range(1, 7)] + ["ring"]
    assert scene.constraint.kind == "line" and scene.probe.diameter == pytest.approx(2e-3)
    again = _screen(tmp_path, str(exports), "--template", template, "--parts", parts,
                    "--spec", spec, "--workers", "1")
    assert "3 already in" in again.stdout  # resumed: nothing imported or searched twice


def test_a_template_with_magnets_of_its_own_is_one_sentence(tmp_path):
    exports = tmp_path / "exports"
    _stand_exports(exports, radii=("15",))
    template = tmp_path / "template.toml"
    template.write_text((SAMPLES / "stand.template.toml").read_text()
                        + '\n[[magnet]]\nshape = "sphere"\nsize = 2\nremanence = 1\n')
    run = _screen(tmp_path, str(exports), "--template", str(template), "--spec", STAND[2])
    assert run.returncode == 2
    assert run.stderr.strip().splitlines()[-1].startswith("trapscape: ")
    assert "holds no [[magnet]]" in run.stderr and "Traceback" not in run.stderr
