"""`trapscape field` from the real command line: CSV in and out, lines, planes, bad input."""
from __future__ import annotations

import csv
import subprocess
import sys

import numpy as np
import pytest

from trapscape.scene.units import MU0

SCENE = """units = "mm"
[[magnet]]
name = "ball"
shape = "sphere"
size = [10]
north = "+z"
remanence = 1.2
"""


def trapscape(*args, cwd):
    return subprocess.run([sys.executable, "-m", "trapscape.viewers.cli", *map(str, args)], cwd=cwd,
                          capture_output=True, text=True, timeout=300)


@pytest.fixture
def scene(tmp_path):
    path = tmp_path / "ball.toml"
    path.write_text(SCENE)
    return path


def read_rows(path):
    with open(path, newline="") as handle:
        return list(csv.DictReader(handle))


def test_points_csv_round_trip(scene, tmp_path):
    (tmp_path / "in.csv").write_text("x,y,z\n0,0,20\n0,0,0\n")
    result = trapscape("field", scene, "--points", "in.csv", "--out", "out.csv", cwd=tmp_path)
    assert result.returncode == 0, result.stderr
    rows = read_rows(tmp_path / "out.csv")
    assert list(rows[0])[:4] == ["x_mm", "y_mm", "z_mm", "Bx_T"]
    # On the axis of a magnetised sphere: Bz = 2 Br a^3 / (3 z^3) outside, 2 Br / 3 inside
    # (Jackson, Classical Electrodynamics 5.10).
    assert float(rows[0]["Bz_T"]) == pytest.approx(2 * 1.2 * 5**3 / (3 * 20**3), rel=1e-7)
    assert float(rows[1]["Bz_T"]) == pytest.approx(2 * 1.2 / 3, rel=1e-7)
    assert float(rows[1]["Hz_A_per_m"]) == pytest.approx(-1.2 / MU0 / 3, rel=1e-7)


def test_line_and_plane_with_plots(scene, tmp_path):
    line = trapscape("field", scene, "--line", "0,0,6", "0,0,30", "25", "--out", "line.csv",
                     "--plot", "line.png", cwd=tmp_path)
    assert line.returncode == 0, line.stderr
    B = np.array([float(r["B_T"]) for r in read_rows(tmp_path / "line.csv")])
    assert len(B) == 25 and np.all(np.diff(B) < 0)  # falls away from the sphere
    plane = trapscape("field", scene, "--plane", "y=0", "--resolution", "21", "--plot", "plane.png",
                      "--out", "plane.csv", cwd=tmp_path)
    assert plane.returncode == 0, plane.stderr
    assert (tmp_path / "plane.png").stat().st_size > 10_000
    assert len(read_rows(tmp_path / "plane.csv")) > 100


@pytest.mark.parametrize("content, args, message", [
    ("x,y\n1,2\n", ["--points", "in.csv", "--out", "o.csv"], "header x,y,z"),
    ("x,y,z\n1,two,3\n", ["--points", "in.csv", "--out", "o.csv"], "'two' is not a number"),
    ("x,y,z\n1,nan,3\n", ["--points", "in.csv", "--out", "o.csv"], "not a finite number"),
    (None, ["--points", "missing.csv", "--out", "o.csv"], "cannot read the points file"),
    (None, ["--line", "0,0", "0,0,1", "5", "--out", "o.csv"], "three numbers"),
    (None, ["--line", "0,0,0", "0,0,1", "1", "--out", "o.csv"], "at least 2"),
    (None, ["--section", "w=3", "-o", "o.csv"], "write an axis x, y or z"),
    (None, ["--section", "z", "-o", "o.csv"], "field needs the plane's level"),
    (None, ["--section", "z=nan", "-o", "o.csv"], "is not a finite number"),
    (None, ["--section", "z=0"], "-o OUT.csv"),
    (None, ["--points", "in.csv", "--line", "0,0,0", "1,1,1", "3"], "not allowed with"),
])
def test_bad_input_gets_one_sentence_and_exit_2(scene, tmp_path, content, args, message):
    if content is not None:
        (tmp_path / "in.csv").write_text(content)
    result = trapscape("field", scene, *args, cwd=tmp_path)
    assert result.returncode == 2
    assert message in result.stderr
    assert "Traceback" not in result.stderr
