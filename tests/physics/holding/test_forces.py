"""Forces and torques on the assembly's own parts (physics/forces.py)."""
import math

import numpy as np
import pytest

from forces_factory import akoun_yonnet_force, magnet, plate, scene, sphere_moment
from trapscape.physics.field.model import FieldModel
from trapscape.physics.holding.forces import force_on_part, lowest_point, part_forces

MU0 = 4e-7 * math.pi
M_N42 = 1.30 / MU0


def rotation_about(axis, angle):
    axis = np.asarray(axis, float) / np.linalg.norm(axis)
    K = np.array([[0, -axis[2], axis[1]], [axis[2], 0, -axis[0]], [-axis[1], axis[0], 0]])
    return np.eye(3) + math.sin(angle) * K + (1 - math.cos(angle)) * K @ K


def test_coaxial_spheres_feel_the_exact_dipole_force():
    d = 0.025
    parts = [magnet("sphere", (0.010,), (0, 0, 0)),
             magnet("sphere", (0.006,), (0, 0, d), remanence=1.1)]
    (_, f1, t1), (_, f2, t2) = part_forces(FieldModel.from_scene(scene(parts)))
    m1, m2 = sphere_moment(0.010), sphere_moment(0.006, 1.1)
    expected = 3 * MU0 * m1 * m2 / (2 * math.pi * d**4)
    # coaxial dipoles attract with 3 mu0 m1 m2 / (2 pi d^4): exact for uniformly magnetised
    # spheres (textbook, e.g. Jackson, Classical Electrodynamics, 5.6 and 5.7)
    assert f2[2] == pytest.approx(-expected, rel=1e-9)
    assert f1[2] == pytest.approx(expected, rel=1e-9)
    assert np.abs(f1[:2]).max() < 1e-12 * expected
    assert np.abs(np.concatenate([t1, t2])).max() < 1e-12 * expected * d


@pytest.mark.parametrize("offset, sizes", [
    ((0.0, 0.0, 0.012), ((0.010, 0.010, 0.005), (0.010, 0.010, 0.005))),  # coaxial, 7 mm gap
    ((0.0, 0.0, 0.0080), ((0.010, 0.010, 0.005), (0.010, 0.010, 0.005))),  # coaxial, 3 mm gap
    ((0.002, 0.001, 0.0061), ((0.010, 0.008, 0.005), (0.006, 0.006, 0.003))),  # offset, 2 mm
])
def test_parallel_blocks_match_akoun_yonnet(offset, sizes):
    first, second = sizes
    parts = [magnet("box", first, (0, 0, 0)), magnet("box", second, offset, remanence=1.2)]
    force, _ = force_on_part(FieldModel.from_scene(scene(parts)), 1)
    expected = akoun_yonnet_force(np.array(first) / 2, np.array(second) / 2, offset,
                                  M_N42, 1.2 / MU0)
    # Akoun & Yonnet, IEEE Trans. Magn. 20, 1962 (1984): closed-form force between cuboids
    assert np.linalg.norm(force - expected) < 1e-2 * np.linalg.norm(expected)
    assert force[2] == pytest.approx(expected[2], rel=1e-3)


def test_block_on_a_plate_in_contact_matches_akoun_yonnet_with_its_image():
    size = np.array([0.010, 0.010, 0.005])
    parts = [magnet("box", size, (0, 0, size[2] / 2))]
    force, _ = force_on_part(FieldModel.from_scene(scene(parts, [plate()])), 0)
    gap = 1e-9  # the closed form needs the faces apart; the force is continuous at contact
    expected = akoun_yonnet_force(size / 2, size / 2, (0, 0, size[2] + gap), M_N42, M_N42)
    # the image method (a mirror magnet across the face) with Akoun & Yonnet (1984)
    assert -force[2] == pytest.approx(-expected[2], rel=1e-4)


def test_newtons_third_law_for_tilted_parts():
    parts = [magnet("box", (0.012, 0.008, 0.004), (0, 0, 0), north=(1, 0, 1)),
             magnet("cylinder", (0.008, 0.006), (0.004, -0.003, 0.011), north=(0, 1, 1),
                    rotation=rotation_about((1, 1, 0), 0.4))]
    model = FieldModel.from_scene(scene(parts))
    (_, f1, t1), (_, f2, t2) = part_forces(model)
    scale = np.linalg.norm(f1)
    # action and reaction (Newton's third law), and no net torque about the origin
    assert np.linalg.norm(f1 + f2) < 1e-4 * scale
    total = t1 + t2 + np.cross(parts[1].position, f2)
    assert np.linalg.norm(total) < 1e-4 * scale * 0.01


def test_symmetric_neighbours_cancel():
    centre = magnet("ring", (0.012, 0.006, 0.004), (0, 0, 0), name="centre")
    parts = [centre, magnet("box", (0.01, 0.01, 0.004), (0, 0, 0.01), name="above"),
             magnet("box", (0.01, 0.01, 0.004), (0, 0, -0.01), name="below")]
    model = FieldModel.from_scene(scene(parts))
    _, force, torque = part_forces(model, ["centre"])[0]
    _, above, _ = part_forces(model, ["above"])[0]
    # mirror symmetry through z = 0 (derived here): the pulls from above and below cancel
    assert np.linalg.norm(force) < 1e-5 * abs(above[2])
    assert np.linalg.norm(torque) < 1e-5 * abs(above[2]) * 0.01


def test_a_triangulated_box_feels_the_force_of_the_box():
    a, b, c = 0.010, 0.006, 0.004
    corners = np.array([[x, y, z] for x in (-a / 2, a / 2) for y in (-b / 2, b / 2)
                        for z in (-c / 2, c / 2)])
    faces = np.array([[0, 1, 3], [0, 3, 2], [4, 6, 7], [4, 7, 5], [0, 4, 5], [0, 5, 1],
                      [2, 3, 7], [2, 7, 6], [0, 2, 6], [0, 6, 4], [1, 5, 7], [1, 7, 3]])
    other = magnet("cylinder", (0.008, 0.005), (0.003, 0.002, -0.0065), north=(1, 0, 2))
    box = magnet("box", (a, b, c), (0, 0, 0), north=(0, 1, 1))
    mesh = magnet("mesh", (), (0, 0, 0), north=(0, 1, 1), mesh_vertices=corners,
                  mesh_faces=faces, method="exact")
    f_box, t_box = force_on_part(FieldModel.from_scene(scene([box, other])), 0)
    f_mesh, t_mesh = force_on_part(FieldModel.from_scene(scene([mesh, other])), 0)
    # the same charges integrated over 12 triangles instead of 6 rectangles (derived here)
    assert np.linalg.norm(f_mesh - f_box) < 1e-4 * np.linalg.norm(f_box)
    assert np.linalg.norm(t_mesh - t_box) < 1e-4 * np.linalg.norm(f_box) * a


def test_a_full_arc_is_a_ring():
    ring = magnet("ring", (0.012, 0.006, 0.004), (0, 0, 0), north=(1, 0, 1))
    arc = magnet("arc", (0.012, 0.006, 0.004, 2 * math.pi), (0, 0, 0), north=(1, 0, 1))
    other = magnet("box", (0.006, 0.006, 0.006), (0.002, 0.0, 0.008))
    f_ring, _ = force_on_part(FieldModel.from_scene(scene([ring, other])), 0)
    f_arc, _ = force_on_part(FieldModel.from_scene(scene([arc, other])), 0)
    # a 360-degree arc has the ring's surfaces (derived here)
    assert np.linalg.norm(f_arc - f_ring) < 1e-5 * np.linalg.norm(f_ring)


def test_lowest_point_of_a_tilted_cylinder():
    R = rotation_about((1, 0, 0), 0.3)
    part = magnet("cylinder", (0.010, 0.004), (0, 0, 0.02), rotation=R)
    # the rim's lowest point: centre - h/2 cos(t) - r sin(t) (derived here)
    assert lowest_point(part, (0, 0, 1)) == pytest.approx(
        0.02 - 0.002 * math.cos(0.3) - 0.005 * math.sin(0.3), rel=1e-12)
