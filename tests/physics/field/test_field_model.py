"""The assembled field of a scene: images in steel plates, superposition, rotation of the whole
scene, B inside magnets, the far field and the differential identities outside the magnets."""
from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from trapscape.scene.units import MU0
from trapscape.physics.field.model import FieldModel
from trapscape.scene.loader import load_scene_text


def scene_of(body: str, plate: str = ""):
    return load_scene_text('units = "mm"\ngravity = [0, 0, 0]\n' + body + plate)


def dipole_B(points, position, moment):
    """Point-dipole field, Jackson, Classical Electrodynamics 3rd ed., eq. 5.56."""
    r = points - position
    d = np.linalg.norm(r, axis=1, keepdims=True)
    return MU0 / (4 * np.pi) * (3 * r * (r @ moment)[:, None] / d**5 - moment / d**3)


SPHERE = """
[[magnet]]
name = "ball"
shape = "sphere"
size = [6]
position = [1, 2, 10]
north = [0.6, 0, 0.8]
remanence = 1.3
"""
PLATE = """
[[steel_plate]]
name = "floor"
point = [0, 0, 0]
normal = [0, 0, 1]
thickness = 10
"""
MIXED = """
[[magnet]]
shape = "box"
size = [10, 6, 4]
position = [0, 0, 0]
rotation = [10, 20, 30]
north = "+z"
remanence = 1.2

[[magnet]]
shape = "cylinder"
size = [8, 5]
position = [15, 3, 2]
rotation = [90, 0, 0]
north = [1, 0, 1]
remanence = 1.1

[[magnet]]
shape = "ring"
size = [12, 5, 4]
position = [-14, 6, -3]
north = "-z"
remanence = 1.3

[[magnet]]
shape = "sphere"
size = [5]
position = [2, -14, 4]
north = "+y"
remanence = 1.0
"""


def moment_of_ball():
    m = 1.3 / MU0 * np.pi * 6e-3**3 / 6
    return m * np.array([0.6, 0.0, 0.8])


def test_image_of_a_dipole_in_a_permeable_plane():
    # Textbook image method (e.g. Jackson 5.11 / any magnetostatics text): across a mu -> inf
    # plane the image dipole sits at the mirror point with its normal component kept and its
    # tangential components reversed.
    model = FieldModel.from_scene(scene_of(SPHERE, PLATE))
    rng = np.random.default_rng(0)
    points = rng.uniform([-20, -20, 0], [20, 20, 25], (200, 3)) * 1e-3
    points = points[np.linalg.norm(points - [1e-3, 2e-3, 10e-3], axis=1) > 4e-3]
    m = moment_of_ball()
    image = m * np.array([-1.0, -1.0, 1.0])
    expected = dipole_B(points, np.array([1, 2, 10]) * 1e-3, m) + \
        dipole_B(points, np.array([1, 2, -10]) * 1e-3, image)
    assert np.allclose(model.B(points), expected, rtol=1e-9, atol=1e-12)


def test_field_meets_the_plate_face_at_right_angles():
    # At the surface of an infinitely permeable body H_tangential = 0 (boundary condition,
    # textbook magnetostatics), so B is normal to the face.
    model = FieldModel.from_scene(scene_of(SPHERE, PLATE))
    face = np.column_stack([np.linspace(-20, 20, 21), np.linspace(10, -10, 21), np.zeros(21)]) * 1e-3
    B = model.B(face)
    assert np.abs(B[:, :2]).max() < 1e-12 * np.abs(B[:, 2]).max() + 1e-15


def test_points_behind_a_plate_are_outside_the_model():
    model = FieldModel.from_scene(scene_of(SPHERE, PLATE))
    points = np.array([[0, 0, 5e-3], [0, 0, -1e-3], [3e-3, 0, 0.0]])
    assert model.in_model(points).tolist() == [True, False, True]


def test_superposition_of_parts():
    # Linear magnetostatics (rigid magnets, recoil permeability 1): fields add.
    whole = FieldModel.from_scene(scene_of(MIXED))
    points = np.random.default_rng(1).uniform(-30e-3, 30e-3, (300, 3))
    total = np.zeros_like(points)
    for magnet in whole.scene.magnets:
        alone = FieldModel.from_scene(replace(whole.scene, magnets=(magnet,)))
        total += alone.B(points)
    assert np.allclose(whole.B(points), total, rtol=1e-12, atol=1e-15)


def rotation_matrix(degrees_xyz):
    from scipy.spatial.transform import Rotation

    return Rotation.from_euler("xyz", degrees_xyz, degrees=True).as_matrix()


def test_rotating_the_whole_scene_rotates_the_field():
    # Symmetry: B'(R x) = R B(x) when every part is turned about the origin by R.
    scene = scene_of(MIXED)
    R = rotation_matrix([25, -40, 70])
    turned = replace(scene, magnets=tuple(
        replace(m, position=R @ m.position, rotation=R @ m.rotation) for m in scene.magnets))
    points = np.random.default_rng(2).uniform(-30e-3, 30e-3, (300, 3))
    B = FieldModel.from_scene(scene).B(points)
    B_turned = FieldModel.from_scene(turned).B(points @ R.T)
    assert np.allclose(B_turned, B @ R.T, rtol=1e-9, atol=1e-9 * np.abs(B).max())


def test_far_field_is_the_dipole_of_the_total_moment():
    # Multipole expansion (Jackson 5.6): far away the assembly looks like its total moment.
    model = FieldModel.from_scene(scene_of(MIXED))
    total = sum(s.moment for s in model.sources)
    direction = np.array([[0.3, -0.5, 0.81]]) / np.linalg.norm([0.3, -0.5, 0.81])
    for distance in (3.0, 10.0):
        point = direction * distance
        expected = dipole_B(point, np.zeros(3), total)
        # the next term is of relative order (assembly size / distance), ~0.03 m / r
        assert np.linalg.norm(model.B(point) - expected) < 0.1 / distance * np.linalg.norm(expected)


def test_B_inside_a_magnet_includes_its_magnetisation():
    # Centre of an axially magnetised cylinder of length L and diameter D:
    # Bz = Br L / sqrt(L^2 + D^2) (handbook, Furlani 2001, on-axis field of a cylinder).
    model = FieldModel.from_scene(scene_of('[[magnet]]\nshape = "cylinder"\nsize = [10, 20]\n'
                                           'north = "+z"\nremanence = 1.25\n'))
    Bz = model.B(np.zeros((1, 3)))[0, 2]
    assert Bz == pytest.approx(1.25 * 20 / np.sqrt(20**2 + 10**2), rel=1e-9)


def outside_points(model, count, seed):
    points = np.random.default_rng(seed).uniform(-25e-3, 25e-3, (count, 3))
    return points[model.clearance(points) > 1.5e-3]


def test_gradient_against_finite_differences_and_identities():
    # div B = 0 everywhere and curl H = 0 outside the magnets (Maxwell's equations for statics).
    model = FieldModel.from_scene(scene_of(MIXED))
    points = outside_points(model, 120, 3)
    B, G = model.B_and_gradient(points)
    h = 1e-7
    for j in range(3):
        step = np.zeros(3)
        step[j] = h
        fd = (model.B(points + step) - model.B(points - step)) / (2 * h)
        scale = np.abs(G).max(axis=(1, 2))
        assert np.all(np.abs(fd - G[:, :, j]).max(axis=1) < 1e-5 * scale)
    scale = np.abs(G).max(axis=(1, 2))
    assert np.all(np.abs(np.trace(G, axis1=1, axis2=2)) < 1e-8 * scale)
    assert np.all(np.abs(G - G.transpose(0, 2, 1)).max(axis=(1, 2)) < 1e-8 * scale)


def test_inside_and_clearance_agree_with_the_geometry():
    model = FieldModel.from_scene(scene_of(MIXED))
    centres = np.array([m.position for m in model.scene.magnets])
    assert model.inside_magnet(centres).tolist() == [0, 1, -1, 3]  # the ring's centre is its hole
    above_ball = np.array([[2e-3, -14e-3, 11.5e-3]])  # 5 mm over the top of the 5 mm sphere
    assert model.clearance(above_ball)[0] == pytest.approx(5e-3, rel=1e-9)
