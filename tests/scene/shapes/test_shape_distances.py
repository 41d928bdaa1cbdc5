"""Signed distances and inside tests of the shapes (scene.shapes) and the sector tessellation."""
import math

import numpy as np
import pytest
import trimesh

from trapscape.scene.shapes import SHAPES
from trapscape.scene.shapes.arc import ARC_SAG_TOLERANCE, arc_mesh, arc_segments_for
from trapscape.scene.shapes.meshops import mesh_distance, mesh_sdf, winding_number
from scene_factory import shape_part as part

RNG = np.random.default_rng(11)
SQ2 = math.sqrt(2.0)

# Known distances below are elementary geometry (Pythagoras), worked out by hand.


def shape_sdf(shape, dims, points):
    return SHAPES[shape].sdf(part(shape, dims), np.asarray(points, float))


def box_sdf(points, size):
    return shape_sdf("box", tuple(size), points)


def sphere_sdf(points, diameter):
    return shape_sdf("sphere", (diameter,), points)


def cylinder_sdf(points, diameter, height):
    return shape_sdf("cylinder", (diameter, height), points)


def ring_sdf(points, outer, inner, height):
    return shape_sdf("ring", (outer, inner, height), points)


def arc_sdf(points, outer, inner, height, angle):
    return shape_sdf("arc", (outer, inner, height, angle), points)


def test_box_distances():
    size = (2.0, 4.0, 6.0)
    points = [[3, 0, 0], [0, 0, 0], [0.5, 0, 0], [2, 3, 0], [2, 3, 4], [0, -2, 0]]
    expected = [2.0, -1.0, -0.5, SQ2, math.sqrt(3.0), 0.0]
    np.testing.assert_allclose(box_sdf(np.array(points, float), size), expected, atol=1e-15)


def test_sphere_distances():
    np.testing.assert_allclose(sphere_sdf(np.array([[0, 0, 3.0], [0, 0, 0], [0.6, 0.8, 0]]), 2.0),
                               [2.0, -1.0, 0.0], atol=1e-15)


def test_cylinder_distances():
    points = [[3, 0, 0], [0, 0, 5], [2, 0, 3], [0, 0, 0], [0, 0, 1.5], [0, 1, 1]]
    expected = [2.0, 3.0, SQ2, -1.0, -0.5, 0.0]
    np.testing.assert_allclose(cylinder_sdf(np.array(points, float), 2.0, 4.0), expected, atol=1e-15)


def test_ring_distances():
    points = [[0, 0, 0], [1.5, 0, 0], [0, 1.5, 2], [0.5, 0, 0], [3, 0, 0], [0.5, 0, 2], [0, -1.8, 0.9]]
    expected = [1.0, -0.5, 1.0, 0.5, 1.0, math.sqrt(1.25), -0.1]
    np.testing.assert_allclose(ring_sdf(np.array(points, float), 4.0, 2.0, 2.0), expected, atol=1e-15)


def test_arc_distances():
    quarter = math.radians(90.0)  # spans -45 .. +45 degrees about +x
    points = [[1.5, 0, 0], [0, 1.5, 0], [-1, 0, 0], [0, 1.5, 2], [1.5, 0, 3]]
    expected = [-0.5, 1.5 / SQ2, math.sqrt((1 + 1 / SQ2) ** 2 + 0.5), math.sqrt(1.125 + 1.0), 2.0]
    np.testing.assert_allclose(arc_sdf(np.array(points, float), 4.0, 2.0, 2.0, quarter), expected,
                               atol=1e-14)
    # a pie slice (no hole) of 200 degrees: (-1, 0) lies beyond its ends at +-100 degrees
    pie = arc_sdf(np.array([[-1.0, 0, 0], [0.5, 0, 0]]), 4.0, 0.0, 2.0, math.radians(200.0))
    np.testing.assert_allclose(pie, [math.sin(math.radians(100.0)), -0.5], atol=1e-14)
    # a full turn is the ring
    p = RNG.uniform(-3, 3, size=(50, 3))
    np.testing.assert_allclose(arc_sdf(p, 4.0, 2.0, 2.0, 2 * math.pi), ring_sdf(p, 4.0, 2.0, 2.0))


def test_mesh_distance_of_a_box_mesh_equals_the_box_distance():
    size = (0.01, 0.02, 0.005)
    box = trimesh.creation.box(extents=size)
    p = RNG.uniform(-0.02, 0.02, size=(500, 3))
    np.testing.assert_allclose(mesh_sdf(p, box.vertices, box.faces), box_sdf(p, size), atol=1e-15)
    np.testing.assert_allclose(mesh_distance(p, box.vertices, box.faces), np.abs(box_sdf(p, size)), atol=1e-15)


def test_mesh_sdf_of_a_fine_arc_mesh_follows_the_arc_distance():
    dims = (0.04, 0.02, 0.01, math.radians(250.0))
    V, F = arc_mesh(*dims)
    p = RNG.uniform(-0.03, 0.03, size=(400, 3))
    # the mesh lies within (2/3) of the sag tolerance of the true arc (scene.shapes.sector docstring)
    bound = 2.0 / 3.0 * ARC_SAG_TOLERANCE * dims[0] / 2
    assert np.abs(mesh_sdf(p, V, F) - arc_sdf(p, *dims)).max() <= bound


@pytest.mark.parametrize("shape, dims", [
    ("box", (0.01, 0.02, 0.005)), ("cylinder", (0.02, 0.01)), ("ring", (0.03, 0.01, 0.01)),
    ("arc", (0.03, 0.01, 0.01, math.radians(120.0))), ("sphere", (0.02,)),
])
def test_inside_agrees_with_the_winding_number_of_the_tessellation(shape, dims):
    # the winding number (sum of solid angles / 4 pi; van Oosterom & Strackee 1983) of the
    # tessellation is an independent test; it differs from the true solid only within the
    # tessellation's sag (1e-4 of the radius for round parts), so points that close are skipped
    thing = part(shape, dims)
    V, F = SHAPES[shape].tessellation(thing)
    p = RNG.uniform(-0.02, 0.02, size=(1000, 3))
    d = SHAPES[shape].sdf(thing, p)
    clear = np.abs(d) > 1e-3 * max(dims[:3])
    inside = SHAPES[shape].inside(thing, p)
    np.testing.assert_array_equal(inside[clear], winding_number(p[clear], V, F) > 0.5)
    assert inside.any() and (~inside).any()


def test_points_on_the_surface_are_not_inside():
    on = {"box": ((0.01, 0.02, 0.005), [[0.005, 0.001, 0.0], [0.005, 0.01, 0.0025]]),
          "cylinder": ((0.02, 0.01), [[0.01, 0.0, 0.0], [0.0, 0.0, 0.005]]),
          "sphere": ((0.02,), [[0.0, 0.0, 0.01], [0.006, 0.008, 0.0]])}
    for shape, (dims, points) in on.items():
        assert not SHAPES[shape].inside(part(shape, dims), np.array(points)).any()
        assert SHAPES[shape].inside(part(shape, dims), np.zeros((1, 3))).all()


def test_winding_number_counts_points_on_a_face_as_outside():
    box = trimesh.creation.box(extents=(0.01, 0.02, 0.005))
    p = np.array([[0.0, 0.0, 0.0], [0.004, 0.009, 0.002], [0.006, 0.0, 0.0], [0.005, 0.0, 0.0]])
    np.testing.assert_array_equal(winding_number(p, box.vertices, box.faces) > 0.5,
                                  [True, True, False, False])  # the last one is on a face


# -- arc tessellation -------------------------------------------------------------------------

ARCS = [(0.04, 0.02, 0.01, math.radians(60.0)), (0.04, 0.02, 0.01, 2 * math.pi),
        (0.04, 0.0, 0.01, math.radians(200.0)), (0.04, 0.0, 0.01, 2 * math.pi),
        (0.03, 0.028, 0.002, math.radians(359.0))]


@pytest.mark.parametrize("dims", ARCS)
def test_arc_mesh_is_closed_outward_and_has_the_exact_volume(dims):
    V, F = arc_mesh(*dims)
    mesh = trimesh.Trimesh(V, F, process=False)
    assert mesh.is_watertight and mesh.is_winding_consistent
    assert mesh.volume > 0  # outward faces (trimesh's signed volume)
    Do, Di, h, angle = dims
    exact = angle / 2 * ((Do / 2) ** 2 - (Di / 2) ** 2) * h  # annular sector times height
    # the radii are scaled so each wedge keeps the sector's area (scene.shapes.sector docstring)
    assert mesh.volume == pytest.approx(exact, rel=1e-12)


def test_full_ring_has_no_faces_at_a_cut():
    V, F = arc_mesh(0.04, 0.02, 0.01, 2 * math.pi)
    a, b, c = V[F[:, 0]], V[F[:, 1]], V[F[:, 2]]
    n = np.cross(b - a, c - a)
    n /= np.linalg.norm(n, axis=1, keepdims=True)
    centre = (a + b + c) / 3
    phi_hat = np.stack([-centre[:, 1], centre[:, 0], np.zeros(len(F))], axis=1)
    phi_hat /= np.linalg.norm(phi_hat, axis=1, keepdims=True)
    # an end cap's normal would be along phi; walls and lids are off it by at most a segment/6
    assert np.abs(np.einsum("ij,ij->i", n, phi_hat)).max() < 0.1
    assert len(F) == 8 * arc_segments_for(ARC_SAG_TOLERANCE, 2 * math.pi)


def test_segment_count_is_the_fewest_meeting_the_sag_tolerance():
    for tol, angle in [(1e-4, 2 * math.pi), (1e-3, math.radians(60.0)), (1e-5, math.radians(300.0))]:
        n = arc_segments_for(tol, angle)
        sag = lambda k: 1 - math.cos(angle / (2 * k))  # chord sag over the radius (elementary)
        assert sag(n) <= tol
        assert n == 1 or sag(n - 1) > tol or angle / (n - 1) > math.pi / 2


def test_mesh_stays_within_two_thirds_of_the_tolerance_of_the_circle():
    Do = 0.04
    angle = 2 * math.pi
    V, F = arc_mesh(Do, 0.02, 0.01, angle)
    n = arc_segments_for(ARC_SAG_TOLERANCE, angle)
    R = Do / 2
    rho = np.hypot(V[:, 0], V[:, 1])
    outer = rho[rho > 0.75 * R]
    mid_chord = outer.max() * math.cos(angle / n / 2)
    assert outer.max() - R <= 2 / 3 * ARC_SAG_TOLERANCE * R
    assert R - mid_chord <= 2 / 3 * ARC_SAG_TOLERANCE * R


def test_bad_arc_dimensions_are_refused():
    with pytest.raises(ValueError):
        arc_mesh(0.02, 0.03, 0.01, 1.0)
    with pytest.raises(ValueError):
        arc_mesh(0.04, 0.02, 0.01, 7.0)
