"""The flux index: pole area and the field at the pole against closed forms."""
from __future__ import annotations

import math

import pytest

from forces_factory import magnet, scene
from trapscape.physics.safety.assembly import AssemblyField
from trapscape.physics.safety.flux_index import LIFT, flux_index, is_small_part, pole_area
from trapscape.physics.safety.limits import limits

RULES = limits()["flux_index"]


def test_pole_areas():
    assert pole_area(magnet("box", (0.01, 0.004, 0.002), (0, 0, 0))) == pytest.approx(4e-5)
    assert pole_area(magnet("box", (0.01, 0.004, 0.002), (0, 0, 0), north=(1, 0, 0))) == \
        pytest.approx(8e-6)
    # the cylinder's tessellation keeps its area (scene.shapes.sector)
    assert pole_area(magnet("cylinder", (0.01, 0.003), (0, 0, 0))) == \
        pytest.approx(math.pi * 0.005**2, rel=1e-9)


def test_a_sphere_pole_field_and_index():
    # outside a sphere on its axis B = (2/3) Br (R / r)^3 (Jackson 5.104): at the pole plus LIFT
    diameter, remanence = 0.006, 1.3
    field = AssemblyField(scene([magnet("sphere", (diameter,), (0, 0, 0), remanence=remanence)]))
    result = flux_index(field, 0, RULES)
    R = diameter / 2
    B = 2 / 3 * remanence * (R / (R + LIFT)) ** 3
    assert result.B_max_T == pytest.approx(B, rel=1e-9)
    area = result.pole_area_m2  # the tessellated sphere's projected area
    assert area == pytest.approx(math.pi * R**2, rel=2e-2)
    assert result.index_kG2_mm2 == pytest.approx((10 * B) ** 2 * area * 1e6, rel=1e-12)
    assert result.over_limit and result.small_part


def test_small_parts_by_the_cylinder():
    d, length = RULES["small_part_diameter_m"], RULES["small_part_length_m"]
    assert is_small_part(magnet("box", (d, d, length), (0, 0, 0)), d, length)
    assert not is_small_part(magnet("box", (d * 1.01, d * 1.01, 0.001), (0, 0, 0)), d, length)
    assert not is_small_part(magnet("cylinder", (0.01, length * 1.01), (0, 0, 0)), d, length)
