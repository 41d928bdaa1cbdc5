"""Part forces of the safety figures against the published force between coaxial discs."""
from __future__ import annotations

import math

import numpy as np
import pytest

from forces_factory import coaxial_cylinders_force, magnet, scene
from trapscape.physics.analysis.safety import FORCE_RTOL, assembled_forces
from trapscape.physics.safety.assembly import AssemblyField

MU0 = 4e-7 * math.pi


@pytest.mark.parametrize("sign", [1, -1])
def test_two_coaxial_discs_against_vokoun_2009(sign):
    D1, h1, D2, h2, distance = 0.012, 0.004, 0.008, 0.003, 0.0065
    parts = [magnet("cylinder", (D1, h1), (0, 0, 0), name="lower"),
             magnet("cylinder", (D2, h2), (0, 0, distance), north=(0, 0, sign), name="upper")]
    M = 1.3 / MU0
    # D. Vokoun et al., J. Magn. Magn. Mater. 321, 3758 (2009), coaxial cylinders (Bessel
    # integral, tests/forces_factory.py): the axial force on the upper disc, + = repulsion
    expected = coaxial_cylinders_force(D1 / 2, h1, M, D2 / 2, h2, sign * M, distance)
    lower, upper = assembled_forces(AssemblyField(scene(parts)), rtol=1e-7)
    assert upper.force_N[2] == pytest.approx(expected, rel=1e-5)
    assert np.allclose(upper.force_N[:2], 0, atol=1e-7 * abs(expected))  # the quadrature rtol
    assert np.allclose(lower.force_N, -upper.force_N, rtol=0, atol=1e-6 * abs(expected))
    assert np.allclose(upper.torque_N_m, 0, atol=1e-7 * abs(expected) * D1)
    # the default tolerance of check keeps within it
    default = assembled_forces(AssemblyField(scene(parts)))[1]
    assert default.force_N[2] == pytest.approx(expected, rel=FORCE_RTOL)
