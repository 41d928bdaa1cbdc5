"""`trapscape check` from the real command line: the table, the JSON, and every bad input.

Each bad input runs `python -m trapscape.viewers.cli check ...` in a subprocess and must exit with code 2
and one line on stderr holding its own distinctive words. The subprocesses run a few at a time
(the machine has two cores) from one fixture, so the whole file stays fast.
"""
from __future__ import annotations

import json
import os
import subprocess
import sys
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest
import trimesh
from repo_paths import REPO  # noqa: E402

BASE = """units = "mm"
[params]
gap = 2
[[magnet]]
name = "block"
shape = "box"
size = [10, 10, 5]
position = [0, 0, "gap"]
grade = "N42"
"""
RING = BASE.replace('shape = "box"\nsize = [10, 10, 5]', 'shape = "ring"\nsize = [20, 10, 5]')


def _open_box(path):
    box = trimesh.creation.box(extents=[5, 5, 5])
    trimesh.Trimesh(box.vertices, box.faces[1:], process=False).export(path)


def _inverted_box(path):
    box = trimesh.creation.box(extents=[5, 5, 5])
    box.invert()
    box.export(path)


def _flat(path):
    trimesh.Trimesh([[0, 0, 0], [5, 0, 0], [0, 5, 0]], [[0, 1, 2], [0, 2, 1]],
                    process=False).export(path)


MESH = 'units = "mm"\n[[magnet]]\nname = "shell"\nshape = "mesh"\nfile = "{}"\nremanence = 1.2\n'

# name: (scene text or None for no file, extra arguments, distinctive words, mesh maker)
BAD = {
    "unknown top key": (BASE.replace("units", "unit"), [], 'unknown key \'unit\' (did you mean "units"?)', None),
    "unknown magnet key": (BASE.replace("grade", "grde"), [], 'unknown key \'grde\' (did you mean "grade"?)', None),
    "key of another shape": (BASE + "diameter = 3\n", [], "'diameter' does not belong here; a box takes size", None),
    "missing units": (BASE.replace('units = "mm"\n', ""), [], "the key 'units' is missing", None),
    "missing shape": (BASE.replace('shape = "box"\n', ""), [], "the key 'shape' is missing", None),
    "missing size": (BASE.replace("size = [10, 10, 5]\n", ""), [], "the key 'size' is missing", None),
    "no remanence or grade": (BASE.replace('grade = "N42"\n', ""), [], "neither grade nor remanence", None),
    "grade and remanence": (BASE + "remanence = 1.2\n", [], "both grade and remanence are given", None),
    "size twice": (BASE + "size = [1, 1, 1]\n", [], "the key 'size' is given twice", None),
    "table declared twice": (BASE.replace("[[magnet]]", "[magnet]") + "[magnet]\nshape = \"box\"\n", [], "the table [magnet] is declared twice; for a list of entries write [[magnet]]", None),
    "top-level key after a table": (BASE + "gravity = [0, 0, 0]\n", [], "'gravity' is a top-level key, but it comes after a [table] header", None),
    "size and diameter": (RING.replace("ring", "cylinder").replace("[20, 10, 5]", "[20, 5]") + "diameter = 4\n", [], "both size and diameter are given", None),
    "wrong type": (BASE.replace('position = [0, 0, "gap"]', "position = 5"), [], "must be a list of 3 numbers, got a number", None),
    "wrong type bool": (BASE.replace("[10, 10, 5]", "[10, true, 5]"), [], "must be a number or an expression in quotes, got true/false", None),
    "nan": (BASE.replace("[10, 10, 5]", "[10, nan, 5]"), [], "nan is not a finite number", None),
    "inf": (BASE.replace('"gap"]', "inf]"), [], "inf is not a finite number", None),
    "bad expression": (BASE.replace('"gap"]', '"gap +* 2"]'), [], 'cannot read the expression "gap +* 2"', None),
    "unknown parameter": (BASE.replace('"gap"]', '"gapp + 1"]'), [], "unknown parameter 'gapp' (did you mean \"gap\"?)", None),
    "zero size": (BASE.replace("[10, 10, 5]", "[10, 0, 5]"), [], "must be positive, got 0", None),
    "negative size": (BASE.replace("[10, 10, 5]", "[10, 10, -5]"), [], "must be positive, got -5", None),
    "inner not below outer": (RING.replace("[20, 10, 5]", "[10, 12, 5]"), [], "inner diameter (12 mm) must be smaller than the outer", None),
    "zero north": (BASE + "north = [0, 0, 0]\n", [], "the north vector is zero", None),
    "radial on a box": (BASE + 'north = "radial-out"\n', [], "is for rings and arcs only", None),
    "unknown grade": (BASE.replace('"N42"', '"N24"'), [], 'unknown grade "N24" (did you mean', None),
    "unknown unit": (BASE.replace('"mm"', '"mmm"'), [], "unknown length unit 'mmm' (did you mean \"mm\"?)", None),
    "toml syntax": (BASE.replace("[[magnet]]", "[[magnet]"), [], "not valid TOML", None),
    "zero search box": (BASE + "[search_box]\nmin = [0, 0, 0]\nmax = [10, 0, 10]\n", [], "the box has zero size along y", None),
    "grid too fine": (BASE + "[search_box]\nmargin = 100\nspacing = 0.01\n", [], "a search can scan in reasonable time; use spacing = ", None),
    "set unknown parameter": (BASE, ["--set", "gp=3"], "the scene has no parameter 'gp' (did you mean \"gap\"?)", None),
    "set malformed": (BASE, ["--set", "gap"], "write NAME=VALUE", None),
    "magnet behind plate": (BASE + "[[steel_plate]]\npoint = [0, 0, 0]\nnormal = [0, 0, 1]\nthickness = 5\n", [], "reaches 0.5 mm behind the plate's face", None),
    "missing scene file": (None, [], "scene file", None),
    "overlap": (BASE + '[[magnet]]\nname = "other"\nshape = "box"\nsize = [10, 10, 5]\n'
                'position = [8, 0, "gap"]\ngrade = "N42"\n', [],
                "magnets 'block' and 'other' overlap by about 2 mm; move them apart, or write "
                "allow_overlap = true", None),
    "mesh missing": (MESH.format("nothing.stl"), [], "mesh file nothing.stl not found", None),
    "mesh unreadable": (MESH.format("junk.stl"), [], "cannot read junk.stl as STL", lambda p: p.write_bytes(b"not a mesh " * 20)),
    "mesh not closed": (MESH.format("open.stl"), [], "open.stl is not closed", _open_box),
    "mesh zero volume": (MESH.format("flat.stl"), [], "flat.stl encloses zero volume", _flat),
}
GOOD = {  # exit 0 with a one-line warning on stderr
    "overlap allowed": ("allow_overlap = true\n" + BASE + '[[magnet]]\nname = "other"\n'
                        'shape = "box"\nsize = [10, 10, 5]\nposition = [8, 0, "gap"]\n'
                        'grade = "N42"\n', [],
                        "warning: scene.toml: magnets 'block' and 'other' overlap by about 2 mm",
                        None),
    "inside-out mesh repaired": (MESH.format("inverted.stl"), [],
                                 "inverted.stl is inside-out (its faces point inward); trimesh "
                                 "reversed every face", _inverted_box),
}


def run_check(folder: Path, text, extra, maker, mesh_name):
    folder.mkdir(parents=True)
    if maker:
        maker(folder / mesh_name)
    scene = folder / "scene.toml"
    if text is not None:
        scene.write_text(text)
    env = {**os.environ, "PYTHONPATH": str(REPO)}
    done = subprocess.run([sys.executable, "-m", "trapscape.viewers.cli", "check", str(scene), *extra],
                          capture_output=True, text=True, cwd=folder, env=env, timeout=120)
    return done.returncode, done.stdout, done.stderr


def _mesh_name(text):
    return text.split('file = "')[1].split('"')[0] if text and 'file = "' in text else ""


@pytest.fixture(scope="module")
def outcomes(tmp_path_factory):
    root = tmp_path_factory.mktemp("check")
    cases = {**BAD, **GOOD}
    with ThreadPoolExecutor(max_workers=3) as pool:
        futures = {name: pool.submit(run_check, root / f"case{k}", text, extra, maker,
                                     _mesh_name(text))
                   for k, (name, (text, extra, _, maker)) in enumerate(cases.items())}
        return {name: future.result() for name, future in futures.items()}


@pytest.mark.parametrize("name", list(BAD))
def test_bad_input_exits_2_with_its_own_sentence(outcomes, name):
    code, _, stderr = outcomes[name]
    assert code == 2, stderr
    lines = [line for line in stderr.splitlines() if not line.startswith("usage:")]
    assert len(lines) == 1, stderr  # one clear line, never a traceback
    assert lines[0].startswith("trapscape: ") and BAD[name][2] in lines[0], lines[0]


def test_bad_input_messages_are_all_different(outcomes):
    messages = [outcomes[name][2] for name in BAD]
    assert len(set(messages)) == len(messages)


@pytest.mark.parametrize("name", list(GOOD))
def test_warnings_are_one_line_and_the_check_still_succeeds(outcomes, name):
    code, stdout, stderr = outcomes[name]
    assert code == 0, stderr
    assert stderr.count("\n") == 1 and GOOD[name][2] in stderr, stderr
    assert "total moment" in stdout


def test_table_and_json_of_a_sample(tmp_path):
    out = tmp_path / "check.json"
    env = {**os.environ, "PYTHONPATH": str(REPO)}
    done = subprocess.run([sys.executable, "-m", "trapscape.viewers.cli", "check",
                           str(REPO / "samples" / "holding_plate.toml"), "--json", str(out),
                           "--set", "gap=1"], capture_output=True, text=True, env=env, timeout=120)
    assert done.returncode == 0, done.stderr
    assert "core" in done.stdout and "rim" in done.stdout and "bounding box" in done.stdout
    payload = json.loads(out.read_text())
    assert payload["length_unit"] == "mm" and len(payload["scene_sha256"]) == 64
    assert "trapscape_version" in payload
    names = [p["name"] for p in payload["parts"]]
    assert names == ["core", "rim"]
    for part in payload["parts"]:
        assert set(part) >= {"name", "shape", "volume_m3", "mass_kg", "moment_Am2",
                             "remanence_T", "north_world"}
    total = [sum(p["moment_Am2"][k] for p in payload["parts"]) for k in range(3)]
    assert payload["total_moment_Am2"] == pytest.approx(total)
    assert payload["bounding_box"]["min"][2] == pytest.approx(1.0)  # gap = 1 mm, in mm
    assert payload["bounding_box"]["max"][2] == pytest.approx(6.0)
    assert payload["parts"][0]["north_world"] == [0, 0, -1]
