"""The magnet probe's law (physics/probe/kinds/magnet.py): free and fixed orientation against
the textbook force between two dipoles, computed here."""
import numpy as np
import pytest

from trapscape.physics.probe.kinds.magnet import MagnetLaw
from trapscape.physics.probe.laws import ProbeLaw
from trapscape.scene.units import MU0
from scene_factory import magnet_probe, make_scene

D, BR = 1e-3, 1.3
M_PROBE = BR * (np.pi * D**3 / 6) / MU0  # m = Br V / mu0 (DESIGN.md, Physics)


def magnet_law(orientation=None) -> MagnetLaw:
    law = ProbeLaw.from_scene(make_scene([], magnet_probe(D, BR, orientation=orientation),
                                         (-1, -1, -1), (1, 1, 1), 0.1))
    assert isinstance(law, MagnetLaw)
    return law


def dipole_field(points, moment):
    """B and dB_i/dx_j of a point dipole at the origin (Jackson 5.56 and its derivative)."""
    r = np.asarray(points, float)
    size = np.linalg.norm(r, axis=1)
    mr = r @ moment
    B = MU0 / (4 * np.pi) * (3 * mr[:, None] * r / size[:, None] ** 5 - moment / size[:, None] ** 3)
    eye = np.eye(3)
    G = 3 * MU0 / (4 * np.pi) * (
        (mr[:, None, None] * eye + moment[:, None] * r[:, None, :] + r[:, :, None] * moment)
        / size[:, None, None] ** 5
        - 5 * mr[:, None, None] * r[:, :, None] * r[:, None, :] / size[:, None, None] ** 7)
    return B, G


def test_moment_is_remanence_times_volume_over_mu0():
    assert magnet_law().moment == pytest.approx(M_PROBE, rel=1e-14)


def test_coaxial_dipoles_attract_with_3_mu0_m1_m2_over_2_pi_r4():
    # two coaxial dipoles: F = 3 mu0 m1 m2 / (2 pi r^4) (D. J. Griffiths, Introduction to
    # Electrodynamics, problem 6.3); a free probe turns along B and is pulled in, a fixed one
    # pointing against B is pushed out with the same force
    m1, r = 0.05, 0.012
    B, G = dipole_field(np.array([[0.0, 0.0, r]]), np.array([0.0, 0.0, m1]))
    textbook = 3 * MU0 * m1 * M_PROBE / (2 * np.pi * r**4)
    free = magnet_law().magnetic_force(B, G)[0]
    against = magnet_law(orientation=(0, 0, -1)).magnetic_force(B, G)[0]
    assert free[2] == pytest.approx(-textbook, rel=1e-12)
    assert against[2] == pytest.approx(textbook, rel=1e-12)
    assert np.allclose(free[:2], 0.0, atol=1e-12 * textbook)


def test_free_orientation_is_the_lowest_fixed_one():
    # U = -m n.B is least for n along B (Jackson 5.72): the free probe's -m|B| bounds every
    # fixed orientation from below and equals the one along B
    rng = np.random.default_rng(7)
    B = rng.normal(size=(5, 3)) * 0.1
    free = magnet_law().magnetic_energy(B)
    for n in rng.normal(size=(6, 3)):
        assert np.all(free <= magnet_law(n).magnetic_energy(B) + 1e-18)
    along = magnet_law(B[0]).magnetic_energy(B[:1])
    assert along[0] == pytest.approx(free[0], rel=1e-12)
    assert free[0] == pytest.approx(-M_PROBE * np.linalg.norm(B[0]), rel=1e-12)


def test_free_probe_at_a_field_zero_feels_no_force_and_says_so():
    # -m|B| is a cone at B = 0 (DESIGN.md, Physics: unstable by rule): the force is set to 0
    B, G = np.zeros((1, 3)), np.ones((1, 3, 3))
    assert np.array_equal(magnet_law().magnetic_force(B, G), np.zeros((1, 3)))
    assert magnet_law().cone_at_field_zero and not magnet_law((0, 0, 1)).cone_at_field_zero


def test_volume_average_averages_the_field_first():
    # a rigid uniformly magnetised sphere: U = -m . <B> (Jackson 5.72 over the volume), so the
    # free probe's averaged energy is -m |<B>|, not <-m |B|>
    B = np.array([[[0.1, 0.0, 0.0], [-0.1, 0.0, 0.2]]])
    G = np.zeros((1, 2, 3, 3))
    weights = np.array([0.5, 0.5])
    U, F = magnet_law().volume_averaged(B, G, weights)
    assert U[0] == pytest.approx(-M_PROBE * 0.1, rel=1e-12)
    assert magnet_law().point_model_is_exact and magnet_law().finite_model(None) is None
