"""Demagnetisation: the field inside a magnet sphere, and the coercivity at temperature."""
from __future__ import annotations

import math

import numpy as np
import pytest

from forces_factory import magnet, scene
from trapscape.physics.safety.assembly import AssemblyField
from trapscape.physics.safety.demagnetization import assess, interior_samples, reverse_fields
from trapscape.scene.grades import built_in_grades

MU0 = 4e-7 * math.pi


def test_the_field_inside_a_magnet_sphere_is_minus_a_third_of_m():
    # H = -M/3 everywhere inside a uniformly magnetised sphere (J. D. Jackson, Classical
    # Electrodynamics, 3rd ed., 5.10, eq. 5.103)
    part = magnet("sphere", (0.01,), (0.001, 0.002, -0.003), north=(1, -1, 2), remanence=1.3)
    field = AssemblyField(scene([part]))
    M = 1.3 / MU0
    points = interior_samples(part)
    assert len(points) > 20
    north = np.array([1, -1, 2]) / math.sqrt(6)
    assert np.allclose(field.H(points), -M / 3 * north, rtol=0, atol=1e-9 * M)
    assert reverse_fields(field)[0] == pytest.approx(M / 3, rel=1e-9)


def test_a_neighbour_pushing_back_raises_the_reverse_field():
    a = magnet("cylinder", (0.01, 0.002), (0, 0, 0), name="a")
    alone = reverse_fields(AssemblyField(scene([a])))[0]
    opposed = magnet("cylinder", (0.01, 0.002), (0, 0, 0.0021), north=(0, 0, -1), name="b")
    together = reverse_fields(AssemblyField(scene([a, opposed])))[0]
    assert together > alone * 1.2


def test_coercivity_falls_with_temperature_by_the_reversible_coefficient():
    grade = built_in_grades()["N42"]
    # HcJ(T) = HcJ(20) (1 + beta (T - 20) / 100), Br likewise with alpha (supplier datasheets;
    # the table's values are from memory)
    beta, alpha = grade.coercivity_temperature_coefficient, grade.temperature_coefficient
    reverse = 0.5 * grade.coercivity
    cold = assess("p", reverse, grade, [20.0], 0.8)
    hot = assess("p", reverse, grade, [20.0, 100.0], 0.8)
    assert cold.ratio == pytest.approx(0.5) and not cold.at_risk
    expected = 0.5 * (1 + alpha * 0.8) / (1 + beta * 0.8)
    assert hot.temperature_C == 100.0 and hot.ratio == pytest.approx(expected, rel=1e-12)
    assert hot.at_risk == (expected > 0.8) and hot.at_risk  # 0.5 * 0.904 / 0.52 = 0.87
    ferrite = built_in_grades()["Y30"]
    assert ferrite.coercivity_temperature_coefficient > 0  # ferrite's HcJ falls on cooling
    winter = assess("f", 0.5 * ferrite.coercivity, ferrite, [-40.0, 20.0], 0.8)
    assert winter.temperature_C == -40.0


def test_a_part_without_a_grade_says_why_it_has_no_ratio():
    result = assess("p", 1e5, None, [20.0], 0.8)
    assert result.ratio is None and not result.at_risk and "coercivity" in result.note
