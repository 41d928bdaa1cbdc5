"""Circles of contacts in a scene with every rotation about an axis a symmetry: the orbit tools of
physics/traps/symmetry.py checked against rotations built here with scipy, the stiffness along a
circle projected out (contact.flat_along_orbit), and the finite-size re-solve solving one contact
per circle and turning it onto the others."""
import numpy as np
import pytest
from scipy.spatial.transform import Rotation

import trapscape.physics.traps.finite_size as finite_size
from trapscape.physics.field.model import FieldModel
from trapscape.physics.traps.contact import flat_along_orbit
from trapscape.physics.traps.contact_equilibria import contact_equilibria
from trapscape.physics.traps.problem import TrapProblem
from trapscape.physics.traps.scan import scan
from trapscape.physics.traps.symmetry import Symmetry, scene_symmetry
from scene_factory import cylinder_magnet, make_scene, soft_probe

AXIS = np.array([1.0, 2.0, 2.0]) / 3.0
CENTRE = np.array([0.01, -0.02, 0.005])


def _continuous():
    return Symmetry(centre=CENTRE, axis=AXIS, order=0, operations=(np.eye(3),), signs=(1,),
                    mirror_planes=0)


def _turned(points, angle):
    return CENTRE + Rotation.from_rotvec(angle * AXIS).apply(np.asarray(points) - CENTRE)


def test_carried_around_turns_by_the_angle_from_start_to_end():
    rng = np.random.default_rng(7)
    start = CENTRE + rng.normal(size=(5, 3)) * 0.01
    angles = rng.uniform(-3.0, 3.0, 5)
    end = np.array([_turned(s, a) for s, a in zip(start, angles)])
    points = CENTRE + rng.normal(size=(5, 3)) * 0.01
    expected = np.array([_turned(p, a) for p, a in zip(points, angles)])
    np.testing.assert_allclose(_continuous().carried_around(points, start, end), expected,
                               atol=1e-15)


def test_orbit_directions_are_the_unit_velocity_of_the_rotation():
    points = CENTRE + np.random.default_rng(3).normal(size=(6, 3)) * 0.01
    h = 1e-6
    velocity = (_turned(points, h) - _turned(points, -h)) / (2 * h)  # central difference
    expected = velocity / np.linalg.norm(velocity, axis=1, keepdims=True)
    np.testing.assert_allclose(_continuous().orbit_directions(points, 1e-9), expected, atol=1e-8)
    on_axis = CENTRE + 1e-4 * AXIS + [1e-12, 0, 0]
    assert not np.any(_continuous().orbit_directions(on_axis[None], 1e-9))


def test_circle_owners_group_points_of_one_circle():
    base = CENTRE + np.array([[0.004, 0.0, 0.0], [0.0, 0.006, -0.003]])  # two circles
    points = [_turned(base[k], a) for a, k in [(0.0, 0), (0.0, 1), (1.0, 0), (2.5, 1), (-2.0, 0)]]
    owners = _continuous().circle_owners(np.array(points), 1e-9)
    assert owners.tolist() == [0, 1, 0, 1, 0]


def test_flat_along_orbit_keeps_the_other_directions_stiffness():
    rng = np.random.default_rng(11)
    frames = np.linalg.qr(rng.normal(size=(4, 3, 3)))[0]
    tangents = frames[:, :2]  # (4, 2, 3): two directions along a surface
    A = rng.normal(size=(4, 2, 2))
    K = A @ A.transpose(0, 2, 1) + np.eye(2)
    angle = rng.uniform(0, np.pi, 4)
    orbit = np.cos(angle)[:, None] * tangents[:, 0] + np.sin(angle)[:, None] * tangents[:, 1]
    flat = flat_along_orbit(K, tangents, orbit)
    along = np.stack([np.cos(angle), np.sin(angle)], axis=1)
    across = np.stack([-np.sin(angle), np.cos(angle)], axis=1)
    np.testing.assert_allclose(np.einsum("nij,nj->ni", flat, along), 0.0, atol=1e-14)
    np.testing.assert_allclose(np.einsum("ni,nij,nj->n", across, flat, across),
                               np.einsum("ni,nij,nj->n", across, K, across), rtol=1e-14)


def test_the_finite_re_solve_solves_one_contact_per_circle(monkeypatch):
    scene = make_scene([cylinder_magnet("disc", (0, 0, 0), 0.01, 0.005)],
                       soft_probe(2e-3, saturation=2.0), (-0.008, -0.008, 0.0025),
                       (0.008, 0.008, 0.008), 1e-3, gravity=(0, 0, -9.81))
    problem = TrapProblem.from_scene(FieldModel.from_scene(scene), scene, finite_probe=True)
    symmetry = scene_symmetry(problem)
    assert symmetry.continuous
    grid = scan(problem)
    contacts = contact_equilibria(problem, grid, symmetry)
    solved_counts = []
    original = finite_size.surface_newton

    def counted(model, geometry, points, basis, **kwargs):
        solved_counts.append(len(points))
        return original(model, geometry, points, basis, **kwargs)

    monkeypatch.setattr(finite_size, "surface_newton", counted)
    equilibria, _, summary, _ = finite_size.with_finite_size(problem, grid, contacts, symmetry)
    resting = [e for e in equilibria if e.contact is not None]
    assert summary.used and len(resting) > 3
    coordinates = np.array(sorted(symmetry.circle_coordinates(e.position) for e in resting))
    gaps = np.abs(np.diff(coordinates, axis=0)).max(axis=1)
    assert np.all((gaps < 1e-9) | (gaps > 1e-5))  # members of one circle: one radius, height
    assert solved_counts == [1 + int(np.sum(gaps > 1e-5))] and solved_counts[0] < len(resting)
    assert all(e.classification == "marginal" for e in resting)
