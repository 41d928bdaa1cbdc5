"""The soft probe's law (physics/probe/kinds/soft.py) against closed forms computed here."""
import numpy as np
import pytest

from trapscape.physics.probe.kinds.soft import SoftLaw
from trapscape.physics.probe.laws import ProbeLaw
from trapscape.scene.units import MU0
from scene_factory import make_scene, soft_probe

D = 1e-3
V = np.pi * D**3 / 6


def soft_law(chi=1000.0, saturation=None) -> SoftLaw:
    law = ProbeLaw.from_scene(make_scene([], soft_probe(D, chi, saturation=saturation),
                                         (-1, -1, -1), (1, 1, 1), 0.1))
    assert isinstance(law, SoftLaw)
    return law


def jackson_chi_eff(chi):
    # J. D. Jackson, Classical Electrodynamics, 3rd ed., 5.11: M = 3 (mu - mu0)/(mu + 2 mu0) H0
    mu = MU0 * (1.0 + chi)
    return 3.0 * (mu - MU0) / (mu + 2.0 * MU0)


def vertical_gradient_field(z, B0=0.2, slope=30.0):
    """B = (0, 0, B0 + slope z) along the z axis and its gradient (a field of uniform gradient
    on the axis; the transverse terms of a real field vanish there)."""
    z = np.asarray(z, float)
    B = np.zeros((len(z), 3))
    B[:, 2] = B0 + slope * z
    G = np.zeros((len(z), 3, 3))
    G[:, 2, 2] = slope
    return B, G


@pytest.mark.parametrize("chi", [0.5, 20.0, 1000.0])
def test_unsaturated_sphere_in_a_uniform_gradient(chi):
    # U = -(mu0/2) V M.H0 with M = chi_eff H0 (Jackson 5.11; Landau & Lifshitz, Electrodynamics
    # of Continuous Media, section 32); F_z = -dU/dz of that closed form
    law = soft_law(chi)
    z = np.array([-2e-3, 0.0, 1e-3])
    B, G = vertical_gradient_field(z)
    chi_eff = jackson_chi_eff(chi)
    expected_U = -0.5 * MU0 * V * chi_eff * (B[:, 2] / MU0) ** 2
    expected_Fz = V * chi_eff / MU0 * B[:, 2] * 30.0
    assert np.allclose(law.magnetic_energy(B), expected_U, rtol=1e-12)
    F = law.magnetic_force(B, G)
    assert np.allclose(F[:, 2], expected_Fz, rtol=1e-12)
    assert np.all(F[:, :2] == 0.0)


def test_steel_chi_eff_is_about_three():
    # DESIGN.md, Physics: chi_eff = 2.991 at chi = 1000 (Jackson 5.11)
    assert soft_law(1000.0).chi_eff == pytest.approx(2.991, abs=5e-4)


def test_saturated_branch_meets_the_linear_one_at_the_knee():
    # U = -mu0 V integral_0^|H| M dh (DESIGN.md, Physics): U and dU/d|H| = -mu0 V |M| are
    # continuous at the knee |H_k| = Js / (mu0 chi_eff), where |M| = Js / mu0 (derived here)
    Js = 0.5
    law = soft_law(1000.0, saturation=Js)
    knee = Js / (MU0 * jackson_chi_eff(1000.0))
    assert law.saturation_H == pytest.approx(knee, rel=1e-12)
    direction = np.array([0.0, 0.6, 0.8])
    below, above = MU0 * knee * (1 - 1e-9) * direction, MU0 * knee * (1 + 1e-9) * direction
    U_below, U_above = law.magnetic_energy(np.array([below, above]))
    assert U_above == pytest.approx(U_below, rel=1e-8)
    assert U_below == pytest.approx(-0.5 * V * Js * knee, rel=1e-8)  # -mu0 V chi_eff H_k^2 / 2
    # slope along a uniform gradient: both branches give |F| = V Js / mu0 |grad |B|| at the knee
    G = np.zeros((2, 3, 3))
    G[:, 2, 2] = 10.0
    F_below, F_above = law.magnetic_force(np.array([below, above]), G)
    assert np.allclose(F_below, F_above, rtol=1e-8)


def test_deeply_saturated_bead_pulls_like_a_fixed_moment():
    # a moment of fixed size m_s = Js V / mu0 along B feels F = m_s grad |B| (Jackson 5.69,
    # F = grad(m.B), with m parallel to B); its energy is -m_s |B| + V Js^2 / (2 mu0 chi_eff)
    Js = 0.04
    law = soft_law(1.0, saturation=Js)
    B, G = vertical_gradient_field(np.array([0.0, 1e-3]), B0=0.5, slope=-80.0)
    m_s = Js * V / MU0
    assert np.allclose(law.magnetic_force(B, G)[:, 2], m_s * -80.0, rtol=1e-12)
    expected = -m_s * B[:, 2] + V * Js**2 / (2 * MU0 * jackson_chi_eff(1.0))
    assert np.allclose(law.magnetic_energy(B), expected, rtol=1e-12)
    M = law.induced_magnetization(B / MU0)
    assert np.allclose(np.linalg.norm(M, axis=1), Js / MU0, rtol=1e-12)


def test_a_saturation_never_reached_changes_nothing():
    # below the knee the capped law is the linear one (DESIGN.md, Physics)
    linear, capped = soft_law(300.0), soft_law(300.0, saturation=1e3)
    B = np.array([[0.3, -0.1, 0.5], [1.2, 0.0, 0.0]])
    G = np.arange(18.0).reshape(2, 3, 3)
    assert np.array_equal(linear.magnetic_energy(B), capped.magnetic_energy(B))
    assert np.array_equal(linear.magnetic_force(B, G), capped.magnetic_force(B, G))
    assert capped.saturates and not linear.saturates
