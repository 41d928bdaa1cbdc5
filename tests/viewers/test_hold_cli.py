"""`trapscape hold` end to end, in a subprocess (viewers/commands/hold.py)."""
import json
import subprocess
import sys

import pytest

SCENE = """
title = "disc on steel"
units = "mm"

[[magnet]]
name = "disc"
shape = "cylinder"
size = [12, 4]
position = [0, 0, 3]
north = "-z"
grade = "N42"
"""

PLATE = """
[[steel_plate]]
name = "table"
point = [0, 0, 0]
normal = [0, 0, 1]
thickness = {thickness}
"""


def run_hold(tmp_path, *arguments, plate=True, thickness=10):
    path = tmp_path / "scene.toml"
    path.write_text(SCENE + (PLATE.format(thickness=thickness) if plate else ""))
    return subprocess.run([sys.executable, "-m", "trapscape.viewers.cli", "hold", str(path), *arguments],
                          capture_output=True, text=True, cwd=tmp_path, timeout=120)


def test_table_json_and_plot(tmp_path):
    done = run_hold(tmp_path, "--gap", "0..2@3", "--friction", "0.3", "--json", "out.json",
                    "--plot", "out.png", "--quiet", thickness=0.3)
    assert done.returncode == 0, done.stderr
    assert "pinch" in done.stdout and "implanted" in done.stdout and "supplier" in done.stdout
    payload = json.loads((tmp_path / "out.json").read_text())
    assert payload["length_unit"] == "mm" and "scene_sha256" in payload
    rows = payload["rows"]
    assert [r["gap"] for r in rows] == [0.0, 1.0, 2.0]
    assert set(rows[0]) >= {"gap", "pull_N", "slip_N", "saturation_warning", "peel_torque_N_m"}
    assert rows[0]["pull_N"] > rows[1]["pull_N"] > rows[2]["pull_N"] > 0
    assert rows[0]["slip_N"] == pytest.approx(0.3 * rows[0]["pull_N"])
    assert rows[0]["saturation_warning"] is True  # 0.3 mm of steel under an N42 disc
    assert payload["saturation_onset_gap"] > 0
    assert (tmp_path / "out.png").stat().st_size > 1000


def test_without_friction_slip_is_null(tmp_path):
    done = run_hold(tmp_path, "--gap", "1", "--json", "out.json")
    assert done.returncode == 0, done.stderr
    payload = json.loads((tmp_path / "out.json").read_text())
    assert payload["rows"][0]["slip_N"] is None
    assert payload["saturation_onset_gap"] is None  # 10 mm of steel


@pytest.mark.parametrize("arguments, plate, words", [
    (("--gap", "0-2@3"), True, "START..STOP@COUNT"),
    (("--gap", "0..2@3", "--part", "lid"), True, "lid"),
    (("--gap", "0..2@3"), False, "steel_plate"),
    (("--gap", "0..2@3", "--friction", "grippy"), True, "friction"),
])
def test_bad_input_exits_2_with_one_line(tmp_path, arguments, plate, words):
    done = run_hold(tmp_path, *arguments, plate=plate)
    assert done.returncode == 2
    message = [line for line in done.stderr.splitlines() if line.startswith("trapscape:")]
    assert len(message) == 1 and words in message[0]
