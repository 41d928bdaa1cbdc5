"""Air transport: the field at a distance from the package against the dipole's closed form,
the classes of IATA packing instruction 953 at their limits, and cancelling moments."""
from __future__ import annotations

import math

import numpy as np
import pytest

from forces_factory import magnet, scene, sphere_moment
from trapscape.physics.safety.assembly import AssemblyField
from trapscape.physics.safety.limits import limits
from trapscape.physics.safety.shipping import (
    air_transport_class,
    distance_to_box,
    points_at_distance,
    strongest_H,
)


@pytest.mark.parametrize("distance", [2.1, 4.6])
def test_a_sphere_in_a_cubic_package_follows_the_axial_dipole_field(distance):
    # H = m / (2 pi (s + d)^3) on the axis through a face (Jackson 5.56, on the dipole's axis),
    # s the package's half size; the sphere is exactly a dipole outside (Jackson 5.104)
    diameter, half = 0.02, 0.15
    field = AssemblyField(scene([magnet("sphere", (diameter,), (0, 0, 0))]))
    m = sphere_moment(diameter)
    H = strongest_H(field, np.full(3, -half), np.full(3, half), distance)
    assert H == pytest.approx(m / (2 * math.pi * (half + distance) ** 3), rel=1e-6)


def test_the_points_lie_at_the_distance_from_the_box():
    rng = np.random.default_rng(1)
    u = rng.normal(size=(500, 3))
    u /= np.linalg.norm(u, axis=1, keepdims=True)
    low, high = np.array([-0.1, -0.2, 0.0]), np.array([0.3, 0.1, 0.05])
    points = points_at_distance(u, low, high, 2.1)
    assert np.allclose(distance_to_box(points, low, high), 2.1, rtol=1e-12, atol=0)


def test_classes_just_below_and_above_each_limit():
    rules = limits()["air_transport"]
    near, far = rules["near_limit_A_per_m"], rules["far_limit_A_per_m"]
    assert (near, far) == (0.159, 0.418)  # IATA DGR packing instruction 953 (from memory)
    below, above = 1 - 1e-9, 1 + 1e-9
    assert air_transport_class(near * below, far * 2, rules) == "not-restricted"
    assert air_transport_class(near * above, far * below, rules) == "magnetized-material"
    assert air_transport_class(near * above, far * above, rules) == "forbidden"
    assert air_transport_class(near, far * below, rules) == "magnetized-material"  # at the limit


def test_opposed_moments_give_a_hundredfold_weaker_field_than_aligned_ones():
    # two 10 mm cubes stacked: opposed, the dipoles cancel and a quadrupole ~ m s / r^4 is left,
    # about 3 s / (2 r) ~ 0.7% of the aligned field at 2.1 m (derived from the multipole series)
    def pair(sign):
        return AssemblyField(scene([magnet("box", (0.01,) * 3, (0, 0, -0.005), name="a"),
                                    magnet("box", (0.01,) * 3, (0, 0, 0.005),
                                           north=(0, 0, sign), name="b")]))

    low, high = np.full(3, -0.02), np.full(3, 0.02)
    aligned = strongest_H(pair(1), low, high, 2.1)
    opposed = strongest_H(pair(-1), low, high, 2.1)
    assert opposed * 100 <= aligned
    assert opposed > 0
