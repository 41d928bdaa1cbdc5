"""`trapscape check`'s safety and shipping figures as a user meets them: the JSON keys of issue 16,
the lines a person reads, the [package] and [safety] tables and their bad input."""
from __future__ import annotations

import json
import subprocess
import sys

import pytest

CLI = [sys.executable, "-m", "trapscape.viewers.cli"]
SCENE = """units = "mm"
[[magnet]]
name = "lower"
shape = "cylinder"
size = [12, 4]
grade = "N42"
[[magnet]]
name = "upper"
shape = "cylinder"
size = [12, 4]
position = [0, 0, 4]
grade = "N42"
"""
SAFETY_KEYS = {"implant_limit_T", "implant_distance_from_surface", "implant_radius",
               "part_forces", "demagnetization", "flux_index"}
SHIPPING_KEYS = {"H_at_2_1m_A_per_m", "H_at_4_6m_A_per_m", "class", "package_size"}


def check(tmp_path, text, *extra):
    (tmp_path / "scene.toml").write_text(text)
    done = subprocess.run([*CLI, "check", "scene.toml", *extra], cwd=tmp_path, text=True,
                          capture_output=True, stdin=subprocess.DEVNULL, timeout=300)
    return done.returncode, done.stdout, done.stderr


def test_the_json_and_the_lines_a_person_reads(tmp_path):
    text = SCENE + "[package]\nsize = [100, 100, 60]\n[safety]\nmax_temperature_C = 120\n"
    code, out, err = check(tmp_path, text, "--json", "out.json")
    assert code == 0 and err == "", err
    result = json.loads((tmp_path / "out.json").read_text())
    safety, shipping = result["safety"], result["shipping"]
    assert SAFETY_KEYS <= set(safety) and SHIPPING_KEYS <= set(shipping)
    assert shipping["class"] in ("not-restricted", "magnetized-material", "forbidden")
    assert shipping["package_size"] == pytest.approx([100, 100, 60])
    assert shipping["package_given"] is True
    # two N42 discs stacked in contact attract: the table has equal and opposite forces
    lower, upper = safety["part_forces"]
    assert upper["force_N"][2] < -10 and lower["force_N"][2] == pytest.approx(
        -upper["force_N"][2], rel=1e-2)
    assert safety["pinch_warning"] is True
    hot = {d["name"]: d for d in safety["demagnetization"]}
    assert hot["lower"]["temperature_C"] == 120
    for words in ("implant shell, |B| = 0.5 mT", "pinch", "demagnetisation", "flux index",
                  "H at 2.1 m", "swallowed", "brittle", "licensed practice"):
        assert words.lower() in out.lower(), words


def test_without_a_package_the_bounding_box_is_used_with_a_warning(tmp_path):
    code, out, err = check(tmp_path, SCENE, "--json", "out.json")
    assert code == 0
    shipping = json.loads((tmp_path / "out.json").read_text())["shipping"]
    assert shipping["package_given"] is False
    assert shipping["package_size"] == pytest.approx([12, 12, 8])
    assert "warning: no [package]" in out


@pytest.mark.parametrize("table, words", [
    ("[package]\nsize = [5, 5, 5]\n", "the package does not hold every magnet"),
    ("[package]\nsize = [50, 50, 50]\nmin = [0, 0, 0]\n", "give size, or min and max"),
    ("[safety]\nmax_temperature_C = 20\nmin_temperature_C = 60\n", "swap them"),
    ("[safety]\nimplant_limit_mT = 0\n", "must be positive"),
    ("[safety]\nimplant_limit = 0.5\n", "unknown key 'implant_limit'"),
])
def test_bad_safety_input_is_one_sentence_and_exit_2(tmp_path, table, words):
    code, out, err = check(tmp_path, SCENE + table)
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and words in err, err
