"""A probe that is not small: the volume average and the exact linear sphere."""
import numpy as np
import pytest

from trapscape.scene.units import MU0
from trapscape.physics.field.model import FieldModel
from trapscape.physics.probe.finite import (AveragedProbe, MultipoleProbe, ball_rule,
                                  multipole_susceptibility, relative_energy_correction)
from trapscape.physics.probe.laws import PointProbe, ProbeLaw, effective_susceptibility
from trapscape.physics.field.sources import point_dipole
from scene_factory import (magnet_probe, make_scene, soft_probe,
                           sphere_magnet, weak_probe)



def test_ball_rule_integrates_degree_seven_exactly():
    # moments of the unit ball (derived here: <r^n> = 3/(n+3), angular means of the monomials)
    points, weights = ball_rule(7)
    x, y, z = points.T
    assert len(weights) == 104 and weights.sum() == pytest.approx(1.0, rel=1e-14)
    assert weights @ x**2 == pytest.approx(1 / 5, rel=1e-13)
    assert weights @ x**4 == pytest.approx(3 / 35, rel=1e-13)
    assert weights @ (x**2 * y**2) == pytest.approx(1 / 35, rel=1e-13)
    assert weights @ (x**2 * y**2 * z**2) == pytest.approx(1 / 315, rel=1e-12)
    assert abs(weights @ (x**3 * y**2 * z**2)) < 1e-15


def scene_with(probe, magnets):
    return make_scene(magnets, probe, (-0.05,) * 3, (0.05,) * 3, 1e-3)


def test_magnet_probe_average_is_its_centre_value():
    # mean-value theorem: B is harmonic outside the magnets, so <B> over the ball = B(centre)
    scene = scene_with(magnet_probe(4e-3), [sphere_magnet("m", (0, 0, 0), 0.01)])
    fm, law = FieldModel.from_scene(scene), ProbeLaw.from_scene(scene)
    x = np.array([[0.003, 0.0, 0.008], [0.0, 0.009, 0.002]])
    U_point, F_point = PointProbe(fm, law).magnetic_energy_and_force(x)
    U_mean, F_mean = AveragedProbe(fm, law).magnetic_energy_and_force(x)
    assert np.allclose(U_mean, U_point, rtol=1e-4)
    assert np.allclose(F_mean, F_point, rtol=1e-4, atol=1e-4 * np.abs(F_point).max())


def test_exact_sphere_equals_volume_average_for_small_chi():
    # U = -(mu0 chi / 2) integral H0^2 dV to first order in chi (Landau & Lifshitz,
    # Electrodynamics of Continuous Media, section 32): chi_l -> chi for every l
    scene = scene_with(weak_probe(3e-3, -1e-5), [sphere_magnet("m", (0, 0, 0), 0.01)])
    fm, law = FieldModel.from_scene(scene), ProbeLaw.from_scene(scene)
    x = np.array([[0.0, 0.0, 0.0075], [0.004, 0.0, 0.006]])
    exact = MultipoleProbe(fm, law, 12).magnetic_energy_and_force(x)
    mean = AveragedProbe(fm, law, 15).magnetic_energy_and_force(x)
    assert np.allclose(exact[0], mean[0], rtol=1e-3)
    assert np.allclose(exact[1], mean[1], rtol=3e-3)
    assert multipole_susceptibility(7.0, 1) == pytest.approx(effective_susceptibility(7.0))


def image_force_on_permeable_sphere(radius, source_offset, moment):
    """Force on a sphere of infinite permeability (centre at the origin) from a point dipole at
    source_offset. Images: the scalar potential is constant on the sphere and its net charge is
    zero, as for an insulated uncharged conducting sphere (Jackson, Classical Electrodynamics,
    3rd ed., 2.2-2.3: q' = -q a/D at a^2/D, plus -q' at the centre); differentiating the point
    charge's images with respect to the source (derived here) gives a dipole
    m' = -(a/D)^3 (m - 2 s (s.m)) and a charge a (m.s)/D^2 at a^2 s/D, and -a (m.s)/D^2 at
    the centre. Force = mu0 (sum q H_src + (m'.grad) H_src) over the images."""
    s = np.asarray(source_offset, float)
    m = np.asarray(moment, float)
    D = np.linalg.norm(s)
    unit = s / D
    image_point = radius**2 * s / D**2
    image_moment = -(radius / D) ** 3 * (m - 2 * unit * (unit @ m))
    charge = radius * (m @ unit) / D**2
    H_image, G_image = point_dipole(image_point[None], s, m, gradient=True)
    H_centre, _ = point_dipole(np.zeros((1, 3)), s, m)
    return MU0 * (charge * H_image[0] - charge * H_centre[0] + G_image[0] @ image_moment)


@pytest.mark.parametrize("direction", [(0, 0, 1), (1, 0, 0)])
def test_force_on_a_permeable_sphere_near_a_dipole(direction):
    a = 0.5e-3
    source = sphere_magnet("dipole", (0, 0, 0), 1e-4, north=(0, 0, 1), remanence=1.0)
    scene = scene_with(soft_probe(2 * a, susceptibility=1e12), [source])
    fm, law = FieldModel.from_scene(scene), ProbeLaw.from_scene(scene)
    moment = np.array([0, 0, 1.0]) * 1.0 / MU0 * np.pi * 1e-12 / 6
    models = {"point": PointProbe(fm, law), "average": AveragedProbe(fm, law, 15),
              "exact sphere": MultipoleProbe(fm, law, 15)}
    errors = {name: [] for name in models}
    for D in (3 * a, 5 * a, 10 * a):
        centre = D * np.asarray(direction, float)
        reference = image_force_on_permeable_sphere(a, -centre, moment)
        component = int(np.argmax(np.abs(direction)))
        for name, model in models.items():
            F = model.force(centre[None])[0]
            errors[name].append(F[component] / reference[component] - 1.0)
    errors = {name: np.abs(values) for name, values in errors.items()}
    # the point model is off by tens of percent two radii from the dipole, a few at ten
    assert errors["point"][0] > 0.1 and errors["point"][2] > 0.01
    # the volume average is closer but not exact for mu -> inf (the local approximation)
    assert np.all(errors["average"] < errors["point"])
    assert errors["average"][0] > 1e-3
    # the exact linear sphere reproduces Kelvin's images (1/chi = 1e-12 aside)
    assert np.all(errors["exact sphere"] < 1e-5)


def test_relative_correction_grows_with_the_probe():
    magnet = sphere_magnet("m", (0, 0, 0), 0.01)
    sizes, corrections = (0.2e-3, 2e-3), []
    for d in sizes:
        scene = scene_with(soft_probe(d), [magnet])
        fm, law = FieldModel.from_scene(scene), ProbeLaw.from_scene(scene)
        x = np.array([[0.0, 0.0, 0.005 + d]])
        corrections.append(relative_energy_correction(PointProbe(fm, law),
                                                      MultipoleProbe(fm, law), x)[0])
    # derived here: the leading correction scales as (d / distance)^2
    assert corrections[1] > 20 * corrections[0] > 0
