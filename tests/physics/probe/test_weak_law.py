"""The weak probe's law (physics/probe/kinds/weak.py) against the diamagnetic levitation
condition of Berry & Geim, computed here."""
import numpy as np
import pytest

from trapscape.physics.probe.kinds.weak import WeakLaw
from trapscape.physics.probe.laws import ProbeLaw
from trapscape.scene.units import MU0
from scene_factory import make_scene, weak_probe

G_EARTH = np.array([0.0, 0.0, -9.81])


def weak_law(chi, density=2200.0, gravity=G_EARTH) -> WeakLaw:
    law = ProbeLaw.from_scene(make_scene([], weak_probe(1e-3, chi, density), (-1, -1, -1),
                                         (1, 1, 1), 0.1, gravity=gravity))
    assert isinstance(law, WeakLaw)
    return law


def test_graphite_floats_where_B_dB_dz_balances_its_weight():
    # Berry & Geim, Eur. J. Phys. 18, 307 (1997): a diamagnet floats where
    # B dB/dz = -mu0 rho g / |chi|; with the sphere's chi_eff (Jackson 5.11) the magnetic force
    # V chi_eff / mu0 B dB/dz then cancels the weight rho V g exactly
    chi, rho = -4.5e-4, 2200.0
    law = weak_law(chi, rho)
    chi_eff = 3 * chi / (3 + chi)
    B0 = 0.8
    slope = -MU0 * rho * 9.81 / abs(chi_eff) / B0
    B = np.array([[0.0, 0.0, B0]])
    G = np.zeros((1, 3, 3))
    G[0, 2, 2] = slope
    total = law.magnetic_force(B, G)[0] + law.gravity_force()
    assert np.allclose(total, 0.0, atol=1e-12 * law.mass * 9.81)
    assert law.levitation_threshold() == pytest.approx(B0 * abs(slope), rel=1e-12)


def test_water_needs_about_1400_T2_per_m():
    # Berry & Geim, Eur. J. Phys. 18, 307 (1997): water (chi = -9.0e-6, from memory) floats
    # where |B dB/dz| reaches about 1.4e3 T^2/m
    assert weak_law(-9.0e-6, density=1000.0).levitation_threshold() == pytest.approx(1.4e3, rel=0.03)


def test_diamagnet_energy_rises_with_the_field():
    # U = -V chi_eff B^2 / (2 mu0) (DESIGN.md, Physics; chi_eff from Jackson 5.11)
    law = weak_law(-4.5e-4)
    B = np.array([[0.0, 0.3, 0.4]])
    chi_eff = 3 * -4.5e-4 / (3 - 4.5e-4)
    assert law.magnetic_energy(B)[0] == pytest.approx(-law.volume * chi_eff * 0.25 / (2 * MU0),
                                                      rel=1e-12)
    assert law.magnetic_energy(B)[0] > 0


def test_only_the_diamagnet_escapes_earnshaw():
    # Earnshaw-Braunbek (DESIGN.md, Physics): only weak probes with chi < 0 can be fully stable
    diamagnet, paramagnet = weak_law(-4.5e-4), weak_law(3e-4)
    assert diamagnet.stable_in_free_space and not paramagnet.stable_in_free_space
    assert diamagnet.noun == "diamagnetic probe" and paramagnet.noun == "weakly magnetic probe"
    assert paramagnet.earnshaw_label == "paramagnetic weak"
    assert diamagnet.weakly_magnetic and diamagnet.linear_susceptibility == -4.5e-4
