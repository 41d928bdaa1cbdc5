"""The probe models of DESIGN.md, Physics: induced moment, energies, forces and Hessians."""
import numpy as np
import pytest

from trapscape.scene.units import MU0
from trapscape.physics.field.model import FieldModel
from trapscape.physics.probe.laws import (PointProbe, ProbeLaw, allowed_basis, effective_susceptibility,
                           project_hessian, project_vectors, projected_force)
from scene_factory import (constraint, magnet_probe, make_scene,
                           soft_probe, sphere_magnet, weak_probe)



def two_spheres():
    return [sphere_magnet("a", (-0.012, 0.0, 0.001), 0.008, north=(0, 0, 1)),
            sphere_magnet("b", (0.011, 0.002, -0.001), 0.006, north=(1, 0, 1), remanence=1.1)]


def model_for(probe, gravity=(0, 0, -9.81)):
    scene = make_scene(two_spheres(), probe, (-0.02,) * 3, (0.02,) * 3, 1e-3, gravity=gravity)
    return PointProbe(FieldModel.from_scene(scene), ProbeLaw.from_scene(scene))


PROBES = {
    "soft": soft_probe(1e-3, 1000.0),
    "soft saturated": soft_probe(1e-3, 1000.0, saturation=0.05),
    "magnet free": magnet_probe(1e-3),
    "magnet fixed": magnet_probe(1e-3, orientation=(0.3, 0.0, 1.0)),
    "weak": weak_probe(1e-3, -4.5e-4),
}

# points between the magnets, well clear of both
POINTS = np.array([[0.0, 0.0, 0.004], [0.001, -0.003, 0.0], [-0.002, 0.004, 0.006],
                   [0.003, 0.005, -0.004]])


@pytest.mark.parametrize("chi", [-0.5, -4.5e-4, 0.3, 10.0, 1000.0])
def test_induced_moment_of_a_sphere_in_a_uniform_field(chi):
    # Jackson, Classical Electrodynamics, 3rd ed., 5.11 (permeable sphere in a uniform H0):
    # M = 3 (mu - mu0) / (mu + 2 mu0) H0, mu = mu0 (1 + chi)
    mu = MU0 * (1.0 + chi)
    H0 = np.array([[120.0, -40.0, 3.0e4]])
    scene = make_scene([], soft_probe(1e-3, chi) if chi > 0 else weak_probe(1e-3, chi),
                       (-1, -1, -1), (1, 1, 1), 0.1)
    law = ProbeLaw.from_scene(scene)
    expected = 3.0 * (mu - MU0) / (mu + 2.0 * MU0) * H0
    assert np.allclose(law.induced_magnetization(H0), expected, rtol=1e-12)
    assert effective_susceptibility(1000.0) == pytest.approx(2.991, abs=5e-4)  # DESIGN.md


def test_soft_energy_is_half_the_induced_moment_in_the_field():
    # U = -(mu0/2) V M . H0 for a linear body in a fixed external field (Landau & Lifshitz,
    # Electrodynamics of Continuous Media, section 32)
    law = model_for(soft_probe(1e-3, 50.0)).law
    H0 = np.array([[1e4, 2e4, -5e3]])
    M = law.induced_magnetization(H0)
    expected = -0.5 * MU0 * law.volume * np.sum(M * H0)
    assert law.magnetic_energy(MU0 * H0)[0] == pytest.approx(expected, rel=1e-12)


def test_saturated_energy_is_the_integral_of_the_capped_magnetisation():
    # U = -mu0 V integral_0^|H| M(h) dh (DESIGN.md, Physics): dU/d|H| = -mu0 V M(|H|) and U is
    # continuous at saturation (derived here)
    law = model_for(soft_probe(1e-3, 1000.0, saturation=0.5)).law
    Hs = law.saturation_H
    sizes = np.array([0.2, 0.999999, 1.000001, 3.0]) * Hs
    direction = np.array([0.6, 0.0, 0.8])
    U = law.magnetic_energy(MU0 * sizes[:, None] * direction)
    assert U[1] == pytest.approx(U[2], rel=1e-5)
    step = 1e-6 * Hs
    for size in (0.2 * Hs, 3.0 * Hs):
        up, down = law.magnetic_energy(MU0 * np.array([size + step, size - step])[:, None] * direction)
        M = np.linalg.norm(law.induced_magnetization(size * direction[None]))
        assert (up - down) / (2 * step) == pytest.approx(-MU0 * law.volume * M, rel=1e-6)


@pytest.mark.parametrize("name", list(PROBES))
def test_force_is_minus_the_gradient_of_the_energy(name):
    # derived here: central differences of U against the closed-form force
    model = model_for(PROBES[name])
    F = model.force(POINTS)
    h = 1e-7
    for axis in range(3):
        step = np.zeros(3)
        step[axis] = h
        dU = (model.energy(POINTS + step) - model.energy(POINTS - step)) / (2 * h)
        scale = np.abs(F).max()
        assert np.allclose(-dU, F[:, axis], rtol=1e-5, atol=1e-6 * scale)


@pytest.mark.parametrize("name", list(PROBES))
def test_hessian_matches_second_differences_of_the_energy(name):
    # derived here: the FD Hessian of the exact force against second differences of U
    model = model_for(PROBES[name])
    x = POINTS[:2]
    K = model.hessian(x)
    assert np.allclose(K, np.transpose(K, (0, 2, 1)))
    h = 2e-5
    eye = np.eye(3) * h
    for a in range(3):
        for b in range(3):
            second = (model.energy(x + eye[a] + eye[b]) - model.energy(x + eye[a] - eye[b])
                      - model.energy(x - eye[a] + eye[b]) + model.energy(x - eye[a] - eye[b])) / (4 * h * h)
            assert np.allclose(second, K[:, a, b], rtol=2e-3, atol=2e-3 * np.abs(K).max())


def test_gravity_adds_the_weight():
    # U_g = -m_p g . x (DESIGN.md, Physics)
    with_g, without = model_for(PROBES["soft"]), model_for(PROBES["soft"], gravity=(0, 0, 0))
    probe = PROBES["soft"]
    weight = probe.density * np.pi * probe.diameter**3 / 6 * np.array([0, 0, -9.81])
    assert np.allclose(with_g.force(POINTS) - without.force(POINTS), weight, rtol=1e-12)
    assert np.allclose(with_g.energy(POINTS) - without.energy(POINTS),
                       -POINTS @ weight, rtol=1e-12)


def test_projection_on_the_constraint():
    line = allowed_basis(constraint("line", direction=(1, 1, 0)))
    plane = allowed_basis(constraint("plane", direction=(0, 0, 2)))
    F = np.array([[1.0, 2.0, 3.0]])
    assert np.allclose(project_vectors(F, line), [[3.0 / np.sqrt(2)]])
    assert np.allclose(projected_force(F, line), [[1.5, 1.5, 0.0]])
    assert np.allclose(projected_force(F, plane), [[1.0, 2.0, 0.0]])
    H = np.diag([1.0, 2.0, 3.0])[None]
    assert np.allclose(np.linalg.eigvalsh(project_hessian(H, plane)[0]), [1.0, 2.0])


def test_hessian_step_stays_inside_the_clearance():
    model = model_for(PROBES["soft"])
    x = np.array([[-0.012, 0.0, 0.001 + 0.004 + 0.0005]])  # touching magnet "a"
    step = model.hessian_steps(x)[0]
    assert 0 < step < 1e-3 * model.field_model.clearance(x)[0]
