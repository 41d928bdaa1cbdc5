"""`trapscape field` at points typed on a magnet's face, from the real command line (issue 10,
item 1): the face gets the outer side's field, not the outer H plus the magnet's mu0 M."""
from __future__ import annotations

import csv
import math
import subprocess
import sys

import pytest

from repo_paths import SAMPLES
from trapscape.scene.grades import built_in_grades

DISC = """units = "mm"
[[magnet]]
name = "disc"
shape = "cylinder"
size = [10, 5]
position = [0, 0, 3]
north = "+z"
grade = "N42"
"""


def field_at(scene, points, tmp_path):
    (tmp_path / "in.csv").write_text("x,y,z\n" + "".join(f"{x},{y},{z}\n" for x, y, z in points))
    done = subprocess.run([sys.executable, "-m", "trapscape.viewers.cli", "field", str(scene),
                           "--points", "in.csv", "--out", "out.csv", "--quiet"], cwd=tmp_path,
                          capture_output=True, text=True, timeout=300)
    assert done.returncode == 0, done.stderr
    with open(tmp_path / "out.csv", newline="") as handle:
        return [float(row["Bz_T"]) for row in csv.DictReader(handle)]


def on_axis_Bz(br, radius, height, z):
    """B_z on the axis of an axially magnetised cylinder, z from its top face (outside).

    Derived here from its two face charges +-M: a uniformly charged disc of radius R gives on its
    axis H = (sigma / 2) (1 - z / sqrt(z^2 + R^2)) (Griffiths, Introduction to Electrodynamics,
    the charged-disc example, from memory), so outside
    B = (Br / 2) ((z + L) / sqrt((z + L)^2 + R^2) - z / sqrt(z^2 + R^2)).
    """
    return br / 2 * ((z + height) / math.hypot(z + height, radius) - z / math.hypot(z, radius))


def test_disc_top_face_matches_the_on_axis_formula(tmp_path):
    scene = tmp_path / "disc.toml"
    scene.write_text(DISC)
    br = built_in_grades()["N42"].remanence
    face, above = field_at(scene, [(0, 0, 5.5), (0, 0, 5.5001)], tmp_path)
    # the face is the limit from outside; 0.1 um above it the formula at z = 1e-4 mm.
    # Tolerances chosen before running: the closed form is exact, so 1e-6 relative is rounding
    # headroom; before the fix the face read 1.760 T against 0.460 T.
    assert face == pytest.approx(on_axis_Bz(br, 5e-3, 5e-3, 0.0), rel=1e-6)
    assert above == pytest.approx(on_axis_Bz(br, 5e-3, 5e-3, 1e-7), rel=1e-6)


def test_holding_plate_face_equals_just_above(tmp_path):
    """The sample's core disc ends at z = 5.5 mm (gap 0.5 + height 5): the face and 1 nm above
    it differ by the field's change over 1 nm (|dB/dz| < 1e3 T/m here, so < 1e-6 T), not by
    mu0 M = 1.3 T as before the fix (1.845 T against 0.545 T)."""
    face, nm_above, above = field_at(SAMPLES / "holding_plate.toml",
                                     [(0, 0, 5.5), (0, 0, 5.500001), (0, 0, 5.5001)], tmp_path)
    assert abs(face - nm_above) < 1e-5
    assert abs(face - above) < 1e-3  # 0.1 um: the two values the issue compares
