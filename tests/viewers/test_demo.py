"""`trapscape demo` runs the whole job on the bundled level gauge and says where each file went
and where the bead is caught."""
from __future__ import annotations

import json

from trapscape.viewers.render import prefer_egl

prefer_egl()

from trapscape.viewers.cli import main  # noqa: E402
from trapscape.viewers.commands.demo import samples_dir  # noqa: E402


def test_samples_are_found_beside_the_package():
    assert (samples_dir() / "level_gauge.toml").is_file()


def test_demo_writes_check_traps_and_pictures(tmp_path, capsys):
    out = tmp_path / "demo"
    assert main(["demo", "-o", str(out), "--size", "400x300", "--quiet"]) == 0
    printed = capsys.readouterr().out
    for name in ("check.json", "traps.json", "view.png", "polarity.png"):
        assert (out / name).is_file() and str(out / name) in printed
    traps = json.loads((out / "traps.json").read_text())
    check = json.loads((out / "check.json").read_text())
    assert traps["length_unit"] == check["length_unit"] == "mm"
    stable = [e for e in traps["equilibria"] if e["class"] == "stable"]
    assert stable
    headline, caution = printed.strip().splitlines()[-2:]
    assert "pinching" in caution and "implanted medical devices" in caution
    # the sentence names the stable rest point of the JSON (x to one decimal, in mm)
    assert "caught" in headline and f"{stable[0]['position'][0]:.1f}" in headline
    assert "mm" in headline


def test_demo_rejects_an_unknown_sample(tmp_path, capsys):
    assert main(["demo", "-o", str(tmp_path), "--sample", "nope.toml"]) == 2
    assert "level_gauge.toml" in capsys.readouterr().err
