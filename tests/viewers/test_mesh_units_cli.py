"""A CAD mesh in the wrong unit, from the real command line (issue 10, item 3): a mesh part under
0.5 mm or over 2 m warns and names the likely mix-up and the key that fixes it; with
mesh_size_check = "error" it is an error (exit 2); file_units fixes it."""
from __future__ import annotations

import json
import math
import subprocess
import sys

import pytest
import trimesh

from repo_paths import SAMPLES

RADIUS_MM, HEIGHT_MM = 6.0, 5.0


def trapscape(*args, cwd):
    return subprocess.run([sys.executable, "-m", "trapscape.viewers.cli", *map(str, args)], cwd=cwd,
                          capture_output=True, text=True, timeout=300)


def scene(folder, units, file_unit_scale, extra_top="", extra_part=""):
    """A disc of 12 x 5 mm exported with coordinates in a unit of file_unit_scale metres."""
    mesh = trimesh.creation.cylinder(radius=RADIUS_MM * 1e-3 / file_unit_scale,
                                     height=HEIGHT_MM * 1e-3 / file_unit_scale, sections=64)
    mesh.export(folder / "disc.stl")
    path = folder / "scene.toml"
    path.write_text(f'units = "{units}"\n{extra_top}\n[[magnet]]\nname = "disc"\nshape = "mesh"\n'
                    f'file = "disc.stl"\n{extra_part}\nnorth = "+z"\ngrade = "N42"\n')
    return path


def test_metres_read_as_millimetres_warns_with_the_fix(tmp_path):
    done = trapscape("check", scene(tmp_path, "mm", 1.0), cwd=tmp_path)
    assert done.returncode == 0, done.stderr
    assert "looks like metres read as millimetres" in done.stderr
    assert 'file_units = "m"' in done.stderr and "'disc'" in done.stderr


def test_millimetres_read_as_metres_warns_with_the_fix(tmp_path):
    done = trapscape("check", scene(tmp_path, "m", 1e-3), cwd=tmp_path)
    assert done.returncode == 0, done.stderr
    assert "looks like millimetres read as metres" in done.stderr
    assert 'file_units = "mm"' in done.stderr


def test_strict_scene_refuses_it_with_one_sentence(tmp_path):
    path = scene(tmp_path, "mm", 1.0, extra_top='mesh_size_check = "error"')
    done = trapscape("check", path, cwd=tmp_path)
    assert done.returncode == 2
    lines = done.stderr.strip().splitlines()
    assert len(lines) == 1 and "Traceback" not in done.stderr
    assert "looks like metres read as millimetres" in lines[0] and 'file_units = "m"' in lines[0]


def test_file_units_fixes_it(tmp_path):
    path = scene(tmp_path, "mm", 1.0, extra_top='mesh_size_check = "error"', extra_part='file_units = "m"')
    done = trapscape("check", path, "--json", "out.json", cwd=tmp_path)
    assert done.returncode == 0, done.stderr
    assert "implausible" not in done.stderr
    (part,) = json.loads((tmp_path / "out.json").read_text())["parts"]
    # a 64-gon prism: n/2 sin(2 pi/n) r^2 h (area of a regular polygon, textbook), in m^3;
    # STL stores float32 coordinates (7 digits), hence 1e-6
    expected = 64 / 2 * math.sin(2 * math.pi / 64) * (RADIUS_MM * 1e-3) ** 2 * HEIGHT_MM * 1e-3
    volume = next(v for k, v in part.items() if k.startswith("volume"))
    assert volume == pytest.approx(expected, rel=1e-6)


def test_off_is_silent_and_a_bad_mode_is_one_sentence(tmp_path):
    quiet = trapscape("check", scene(tmp_path, "mm", 1.0, extra_top='mesh_size_check = "off"'),
                      cwd=tmp_path)
    assert quiet.returncode == 0 and "implausible" not in quiet.stderr
    bad = trapscape("check", scene(tmp_path, "mm", 1.0, extra_top='mesh_size_check = "loud"'),
                    cwd=tmp_path)
    assert bad.returncode == 2 and "mesh_size_check" in bad.stderr and "warn, error or off" in bad.stderr


def test_the_mesh_sample_loads_without_a_warning(tmp_path):
    done = trapscape("check", SAMPLES / "arc_rotor.toml", cwd=tmp_path)
    assert done.returncode == 0 and "warning" not in done.stderr, done.stderr
