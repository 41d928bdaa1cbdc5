"""Volumes, masses, moments and extents of placed parts."""
from __future__ import annotations

import math

import numpy as np
import pytest
import trimesh

from trapscape.scene.loader import load_scene_text
from trapscape.scene.measures import bounding_box, mass, moment_world, volume

MU0 = 4e-7 * math.pi  # vacuum permeability (pre-2019 SI definition; CODATA 2018 differs < 1e-9)


def part(body: str, tmp_path=None):
    text = f'units = "mm"\n[[magnet]]\n{body}\n'
    return load_scene_text(text, base_dir=tmp_path or ".").magnets[0]


# closed forms written out here independently of scene/measures.py (any geometry handbook)
@pytest.mark.parametrize("body, closed_form_volume", [
    ('shape = "box"\nsize = [10, 20, 5]', 0.010 * 0.020 * 0.005),
    ('shape = "cylinder"\nsize = [10, 5]', math.pi * 0.005 ** 2 * 0.005),
    ('shape = "ring"\nsize = [20, 10, 5]', math.pi * (0.010 ** 2 - 0.005 ** 2) * 0.005),
    ('shape = "arc"\nsize = [40, 30, 10, 90]',
     (math.pi / 2) / 2 * (0.020 ** 2 - 0.015 ** 2) * 0.010),
    ('shape = "sphere"\nsize = 8', 4 / 3 * math.pi * 0.004 ** 3),
])
def test_moment_is_remanence_times_volume_over_mu0(body, closed_form_volume):
    magnet = part(body + '\nremanence = 1.25\nnorth = [0, 3, 4]\nrotation = [0, 0, 90]')
    assert volume(magnet) == pytest.approx(closed_form_volume, rel=1e-14)
    moment = moment_world(magnet)
    # M = Br / mu0 uniform along north (DESIGN.md, Physics definitions); Rz(90) sends y to -x
    expected = 1.25 * closed_form_volume / MU0 * np.array([-0.6, 0.0, 0.8])
    np.testing.assert_allclose(moment, expected, rtol=1e-13, atol=1e-16)


def test_radial_ring_has_no_net_moment_and_radial_arc_points_through_its_middle():
    ring = part('shape = "ring"\nsize = [20, 10, 5]\nnorth = "radial-out"\nremanence = 1')
    np.testing.assert_allclose(moment_world(ring), 0.0)
    arc = part('shape = "arc"\nsize = [40, 30, 10, 60]\nnorth = "radial-in"\nremanence = 1.2\n'
               'rotation = [0, 0, 90]')
    # integral of r_hat over the sector = h (Ro^2 - Ri^2)/2 * 2 sin(angle/2), along the middle
    integral = 0.010 * (0.020 ** 2 - 0.015 ** 2) / 2 * 2 * math.sin(math.radians(30))
    np.testing.assert_allclose(moment_world(arc), [0, -1.2 / MU0 * integral, 0], atol=1e-15)


def test_mass_uses_the_grade_density_and_is_unknown_without_one():
    cube = part('shape = "box"\nsize = [10, 10, 10]\ngrade = "N42"')
    assert mass(cube) == pytest.approx(7500 * 1e-6)  # sintered NdFeB ~7.5 g/cm^3 (from memory)
    assert mass(part('shape = "box"\nsize = [10, 10, 10]\nremanence = 1.3')) is None
    assert mass(part('shape = "box"\nsize = [10, 10, 10]\nremanence = 1.3\ndensity = 5000')) \
        == pytest.approx(5e-3)


@pytest.mark.parametrize("sections", [16, 64, 256])
def test_trimesh_cylinder_volume_is_within_its_tessellation_error(tmp_path, sections):
    radius, height = 5.0, 7.0
    trimesh.creation.cylinder(radius=radius, height=height, sections=sections).export(
        tmp_path / "cyl.stl")
    magnet = part('shape = "mesh"\nfile = "cyl.stl"\nremanence = 1', tmp_path)
    exact = math.pi * (radius * 1e-3) ** 2 * height * 1e-3
    # an inscribed regular n-gon has sin(2pi/n) / (2pi/n) of the circle's area (elementary
    # geometry); STL stores float32 vertices, so allow 1e-6 relative on top
    ratio = math.sin(2 * math.pi / sections) / (2 * math.pi / sections)
    assert volume(magnet) / exact == pytest.approx(ratio, abs=1e-6)
    assert exact * ratio * (1 - 1e-6) <= volume(magnet) <= exact


def test_bounding_box_of_a_tilted_cylinder_is_tight():
    tilted = part('shape = "cylinder"\nsize = [10, 20]\nrotation = [90, 0, 0]\nremanence = 1')
    low, high = bounding_box(tilted)
    np.testing.assert_allclose(high, [0.005, 0.010, 0.005], atol=1e-15)
    np.testing.assert_allclose(low, -high, atol=1e-15)
    arc = part('shape = "arc"\nsize = [40, 20, 10, 90]\nremanence = 1')
    low, high = bounding_box(arc)  # spans -45..45 degrees about +x
    np.testing.assert_allclose(high, [0.020, 0.020 * math.sin(math.pi / 4), 0.005], rtol=1e-12)
    np.testing.assert_allclose(low, [0.010 * math.cos(math.pi / 4), -0.020 * math.sin(math.pi / 4),
                                     -0.005], rtol=1e-12)
