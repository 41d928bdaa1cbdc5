"""The ring-stack sample swept over its ring count: the ball's main trap sits where the closed-form
on-axis field of the stack, with gravity, has its energy minimum, and moves down half a ring per
ring added (rings clamped under a fixed shelf grow downward)."""
from __future__ import annotations

import math

import numpy as np
import pytest
from repo_paths import SAMPLES
from scipy.optimize import minimize_scalar

from trapscape.physics.analysis.sweep import step_result
from trapscape.scene.loader import load_scene

MU0 = 4e-7 * math.pi
SCENE = str(SAMPLES / "ring_stack.toml")


def on_axis_B(z, inner, outer, length, remanence):
    """B_z on the axis of an axially magnetised ring from z = -length to 0 (SI): the difference
    of two uniformly magnetised cylinders' on-axis fields, B = (Br / 2) [(z - z1)/sqrt(R^2 +
    (z - z1)^2) - (z - z2)/sqrt(R^2 + (z - z2)^2)] (E. P. Furlani, Permanent Magnet and
    Electromechanical Devices, Academic Press 2001, sec. 4.3, the axial field of a cylinder)."""
    def cylinder(radius):
        return (z + length) / np.hypot(radius, z + length) - z / np.hypot(radius, z)
    return 0.5 * remanence * (cylinder(outer) - cylinder(inner))


def closed_form_trap(rings: int):
    """The ball's energy minimum near the stack's middle, the stiffness there (m, N/m) and the
    ball's polarisation mu0 M (T):
    U(z) = -V chi_e B^2 / (2 mu0) + m g z, chi_e = 3 chi / (3 + chi) for a linear sphere
    (J. D. Jackson, Classical Electrodynamics, 3rd ed., sec. 5.10), below saturation here."""
    scene = load_scene(SCENE, overrides={"rings": rings})
    ring = scene.magnets[0]
    outer, inner = ring.dims[0] / 2, ring.dims[1] / 2  # dims: outer and inner diameter, height
    length = rings * ring.dims[2]
    probe = scene.probe
    volume = math.pi * probe.diameter**3 / 6
    chi = probe.susceptibility
    chi_e = 3 * chi / (3 + chi)
    weight = probe.density * volume * -scene.gravity[2]

    def energy(z):
        b = on_axis_B(z, inner, outer, length, ring.remanence)
        return -volume * chi_e * b * b / (2 * MU0) + weight * z

    found = minimize_scalar(energy, bounds=(-length, 0.0), method="bounded",
                            options={"xatol": 1e-10})
    h = 1e-6
    stiffness = (energy(found.x + h) - 2 * energy(found.x) + energy(found.x - h)) / h**2
    polarisation = chi_e * abs(on_axis_B(found.x, inner, outer, length, ring.remanence))
    return found.x, stiffness, polarisation


@pytest.fixture(scope="module")
def steps():
    return {n: step_result(SCENE, {"rings": float(n)}) for n in (1, 2, 3, 4)}


@pytest.mark.parametrize("rings", [1, 2, 3, 4])
def test_the_main_trap_matches_the_closed_form_on_the_axis(steps, rings):
    z, stiffness, polarisation = closed_form_trap(rings)
    assert polarisation < 2.0  # the ball's saturation (the sample's 2 T): the linear law holds
    stable = [e for e in steps[rings]["equilibria"] if e["class"] == "stable"]
    main = min(stable, key=lambda e: abs(e["position"][2] * 1e-3 - z))
    # the sweep reports the finite ball (1.5 mm in a 6 mm bore); tolerances set before running:
    # 0.02 mm in position, 10 % in stiffness ((radius / field length)^2 ~ 6 % from its size)
    assert main["position"][2] * 1e-3 == pytest.approx(z, abs=2e-5)
    along = [k for k in main["stiffness_N_per_m"] if k is not None]
    assert min(along) == pytest.approx(stiffness, rel=0.10)


def test_each_ring_added_moves_the_trap_down_half_a_ring(steps):
    middles = [closed_form_trap(n)[0] for n in (1, 2, 3, 4)]
    thick = load_scene(SCENE).magnets[0].dims[2]
    np.testing.assert_allclose(np.diff(middles), -thick / 2, atol=0.02 * thick)
