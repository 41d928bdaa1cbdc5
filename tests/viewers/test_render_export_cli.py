"""`trapscape render` and `trapscape export` from the command line: the files they write are
what was asked for, and bad options exit 2 with one line on stderr."""
from __future__ import annotations

import struct

import numpy as np
import pytest
from repo_paths import SAMPLES

from trapscape.viewers.cli import main

CHIP = str(SAMPLES / "bead_chip.toml")
FAST = ["--resolution", "16", "--quiet"]


def png_size(path):
    """(width, height) from the PNG's IHDR chunk (PNG specification, section 11.2.2)."""
    data = path.read_bytes()[:24]
    assert data[:8] == b"\x89PNG\r\n\x1a\n" and data[12:16] == b"IHDR"
    return struct.unpack(">II", data[16:24])


def test_render_writes_a_png_of_the_requested_size(tmp_path, capsys):
    out = tmp_path / "chip.png"
    assert main(["render", CHIP, "-o", str(out), "--size", "320x240", *FAST]) == 0
    assert png_size(out) == (320, 240)
    assert "wrote" in capsys.readouterr().out
    assert not [p for p in tmp_path.iterdir() if p != out]  # nothing left beside it


def test_render_of_the_polarity_map(tmp_path):
    out = tmp_path / "polarity.png"
    assert main(["render", CHIP, "--view", "polarity", "-o", str(out), "--size", "300x200",
                 "--quiet"]) == 0
    assert png_size(out) == (300, 200)


def test_export_vti_is_readable_with_the_field(tmp_path):
    import pyvista as pv

    out = tmp_path / "chip.vti"
    assert main(["export", CHIP, "-o", str(out), *FAST]) == 0
    grid = pv.read(out)
    assert isinstance(grid, pv.ImageData) and grid.n_points > 100
    for name in ("B_T", "B_abs_T", "probe_energy_J", "probe_fits"):
        assert name in grid.point_data
    assert np.isfinite(grid["B_T"]).all() and grid["B_abs_T"].max() > 0.01  # NdFeB blocks: > 10 mT


def test_export_vtp_is_readable_with_the_magnets(tmp_path):
    import pyvista as pv

    out = tmp_path / "chip.vtp"
    assert main(["export", CHIP, "-o", str(out), *FAST]) == 0
    geometry = pv.read(out)
    assert geometry.n_points > 0 and geometry.n_cells > 0


@pytest.mark.parametrize("command, options, words", [
    ("render", ["-o", "x.png", "--size", "10x10"], "--size"),
    ("render", ["-o", "x.jpg"], ".png"),
    ("render", ["-o", "x.png", "--layers", "magnetz"], "--layers"),
    ("render", ["-o", "x.png", "--resolution", "4"], "--resolution"),
    ("export", ["-o", "x.xyz"], "extension"),
    ("export", ["-o", "x.vti", "--camera", "sideways"], "--camera"),
])
def test_bad_options_exit_2_with_one_line(tmp_path, capsys, command, options, words):
    options = [str(tmp_path / o) if o.startswith("x.") else o for o in options]
    assert main([command, CHIP, *options, "--quiet"]) == 2
    lines = [line for line in capsys.readouterr().err.splitlines()
             if line.startswith("trapscape:")]
    assert len(lines) == 1 and words in lines[0]
    assert not list(tmp_path.iterdir())  # nothing written


def test_a_subprocess_run_exits_2_on_a_missing_scene(tmp_path):
    import subprocess
    import sys

    done = subprocess.run([sys.executable, "-m", "trapscape.viewers.cli", "render",
                           str(tmp_path / "none.toml"), "-o", str(tmp_path / "x.png")],
                          capture_output=True, text=True, timeout=120)
    assert done.returncode == 2
    assert done.stderr.strip().count("\n") == 0 and "not found" in done.stderr
