"""The mesh tree (scene/shapes/meshtree.py) against the brute force over every triangle
(meshops.brute_mesh_distance, brute_mesh_inside) on random points inside, near and far from
several meshes, and its normals against the geometry they must have."""
from __future__ import annotations

import numpy as np
import pytest
import trimesh

from repo_paths import SAMPLES
from trapscape.scene.shapes import meshops, meshtree

RTOL = 1e-12  # chosen before looking: the tree evaluates the same per-triangle arithmetic


def _sample_part():
    mesh = trimesh.load(SAMPLES / "parts" / "rotor-segment-2.stl")
    return np.asarray(mesh.vertices, float) * 1e-3, np.asarray(mesh.faces, np.int64)


def _trimesh(mesh):
    return np.asarray(mesh.vertices, float), np.asarray(mesh.faces, np.int64)


MESHES = {
    "arc segment (sample part, m)": _sample_part,
    "icosphere": lambda: _trimesh(trimesh.creation.icosphere(subdivisions=3, radius=0.01)),
    "disc with fan faces": lambda: _trimesh(trimesh.creation.cylinder(0.005, 0.005, sections=400)),
    "ring (not convex)": lambda: _trimesh(trimesh.creation.annulus(0.004, 0.01, 0.003, sections=64)),
    "box": lambda: _trimesh(trimesh.creation.box([0.01, 0.02, 0.005])),
}


def _random_points(vertices, faces, seed=1):
    """Inside and around the bounding box, within 1e-3 of the size of the surface, and far."""
    rng = np.random.default_rng(seed)
    low, high = vertices.min(axis=0), vertices.max(axis=0)
    centre, size = (low + high) / 2, float((high - low).max())
    around = centre + (rng.random((3000, 3)) - 0.5) * 1.3 * (high - low)
    mesh = trimesh.Trimesh(vertices, faces, process=False)
    on, face = trimesh.sample.sample_surface(mesh, 2000, seed=seed)
    near = on + mesh.face_normals[face] * size * 1e-3 * rng.uniform(-1, 1, (len(on), 1))
    far = centre + rng.normal(size=(500, 3)) * 10 * size
    return np.concatenate([around, near, far])


def _brute_sdf(points, vertices, faces):
    inside = meshops.brute_mesh_inside(points, vertices, faces)
    return np.where(inside, -1.0, 1.0) * meshops.brute_mesh_distance(points, vertices, faces)


@pytest.mark.parametrize("name", MESHES)
def test_distance_inside_and_sign_equal_the_brute_force(name):
    vertices, faces = MESHES[name]()
    p = _random_points(vertices, faces)
    inside = meshops.brute_mesh_inside(p, vertices, faces)
    assert 100 < inside.sum() < len(p) - 100  # the points do test both sides
    np.testing.assert_allclose(meshops.mesh_distance(p, vertices, faces),
                               meshops.brute_mesh_distance(p, vertices, faces), rtol=RTOL, atol=0)
    np.testing.assert_array_equal(meshops.mesh_inside(p, vertices, faces), inside)
    brute = _brute_sdf(p, vertices, faces)
    exact = meshtree.tree_signed_distance(p, meshtree.mesh_tree(vertices, faces))[0]
    np.testing.assert_allclose(exact, brute, rtol=RTOL, atol=0)
    far = meshops._far_from(vertices, p)
    assert 100 < far.sum() < len(p) - 100
    sdf = meshops.mesh_sdf(p, vertices, faces)
    np.testing.assert_allclose(sdf[~far], brute[~far], rtol=RTOL, atol=0)
    # far out, the nearest vertex's distance (the former rule, kept): at most one edge more
    nearest_vertex = np.linalg.norm(p[far, None, :] - vertices[None], axis=2).min(axis=1)
    np.testing.assert_allclose(sdf[far], nearest_vertex, rtol=RTOL, atol=0)
    longest_edge = np.linalg.norm(vertices[faces] - vertices[np.roll(faces, 1, axis=1)], axis=2).max()
    assert np.all((sdf[far] >= brute[far]) & (sdf[far] <= brute[far] + longest_edge))


@pytest.mark.parametrize("name", MESHES)
def test_normal_points_from_the_closest_point_and_is_the_distance_gradient(name):
    """The gradient of a signed distance is the unit vector from the closest surface point q
    (J. A. Baerentzen and H. Aanaes, IEEE TVCG 11, 243 (2005)): q = p - sdf n must lie on the
    surface, and halfway to it the signed distance is half (the ball about the halfway point
    through q lies inside the empty ball about p, so nothing else comes closer)."""
    vertices, faces = MESHES[name]()
    p = _random_points(vertices, faces, seed=2)
    sdf, normal = meshtree.tree_signed_distance(p, meshtree.mesh_tree(vertices, faces))
    size = meshops.mesh_size(vertices)
    np.testing.assert_allclose(np.linalg.norm(normal, axis=1), 1.0, rtol=1e-12)
    closest = p - sdf[:, None] * normal
    assert meshops.brute_mesh_distance(closest, vertices, faces).max() < 1e-12 * size
    halfway = _brute_sdf(p - 0.5 * sdf[:, None] * normal, vertices, faces)
    np.testing.assert_allclose(halfway, 0.5 * sdf, rtol=1e-9, atol=1e-13 * size)


def test_normal_of_a_box_mesh_is_the_box_distance_gradient():
    """Outside a box of half-sizes h the distance is |max(|p| - h, 0)| and its gradient is
    sign(p) max(|p| - h, 0) / distance (textbook); inside, the normal of the nearest face."""
    h = np.array([0.005, 0.01, 0.0025])
    vertices, faces = _trimesh(trimesh.creation.box(2 * h))
    rng = np.random.default_rng(3)
    p = (rng.random((2000, 3)) - 0.5) * 6 * h
    outside = np.any(np.abs(p) > h, axis=1)
    sdf, normal = meshops.mesh_sdf_and_normal(p, vertices, faces)
    excess = np.maximum(np.abs(p) - h, 0.0)
    expected = np.sign(p) * excess / np.linalg.norm(excess, axis=1, keepdims=True).clip(1e-300)
    np.testing.assert_allclose(normal[outside], expected[outside], atol=1e-12)
    depth = h - np.abs(p[~outside])
    axis = np.argmin(depth, axis=1)
    np.testing.assert_allclose(sdf[~outside], -depth[np.arange(len(axis)), axis], rtol=1e-12)
    expected_in = np.zeros((len(axis), 3))
    expected_in[np.arange(len(axis)), axis] = np.sign(p[~outside][np.arange(len(axis)), axis])
    np.testing.assert_allclose(normal[~outside], expected_in, atol=1e-12)


def test_points_on_vertices_and_edges_are_on_the_surface_and_outside():
    vertices, faces = _sample_part()
    edges = 0.5 * (vertices[faces[:, 0]] + vertices[faces[:, 1]])
    p = np.concatenate([vertices, edges])
    sdf, normal = meshops.mesh_sdf_and_normal(p, vertices, faces)
    assert np.abs(sdf).max() < 1e-15
    np.testing.assert_array_equal(meshops.mesh_inside(p, vertices, faces),
                                  meshops.brute_mesh_inside(p, vertices, faces))
    np.testing.assert_allclose(np.linalg.norm(normal, axis=1), 1.0, rtol=1e-12)


def test_a_triangle_soup_takes_its_sign_from_parity():
    """Unmerged corners (every face its own vertices): no edge is shared, so pseudonormals
    cannot decide the sign and the ray parity does."""
    vertices, faces = _trimesh(trimesh.creation.icosphere(subdivisions=2, radius=0.01))
    soup_vertices = vertices[faces].reshape(-1, 3)
    soup_faces = np.arange(len(soup_vertices)).reshape(-1, 3)
    assert not meshtree.build_tree(soup_vertices, soup_faces).manifold
    p = _random_points(vertices, faces, seed=4)
    soup = meshtree.mesh_tree(soup_vertices, soup_faces)
    np.testing.assert_allclose(meshtree.tree_signed_distance(p, soup)[0],
                               _brute_sdf(p, vertices, faces), rtol=RTOL, atol=0)


def test_the_tree_is_built_once_per_mesh_and_again_when_an_array_changes():
    vertices, faces = _trimesh(trimesh.creation.icosphere(subdivisions=1, radius=0.01))
    frozen_vertices, frozen_faces = vertices.copy(), faces.copy()
    frozen_vertices.setflags(write=False)
    frozen_faces.setflags(write=False)
    assert meshtree.mesh_tree(frozen_vertices, frozen_faces) is meshtree.mesh_tree(
        frozen_vertices, frozen_faces)
    first = meshtree.mesh_tree(vertices, faces)
    assert meshtree.mesh_tree(vertices, faces) is first
    vertices *= 2.0  # the same array, changed in place
    assert meshtree.mesh_tree(vertices, faces) is not first
    p = np.array([[0.015, 0.0, 0.0]])
    np.testing.assert_allclose(meshops.mesh_distance(p, vertices, faces),
                               meshops.brute_mesh_distance(p, vertices, faces), rtol=RTOL)


def test_many_points_take_the_parallel_kernels_with_the_same_answers():
    vertices, faces = MESHES["ring (not convex)"]()
    p = _random_points(vertices, faces, seed=5)
    assert len(p) >= meshtree.PARALLEL_FROM
    few = np.concatenate([meshops.mesh_sdf(chunk, vertices, faces)
                          for chunk in np.array_split(p, len(p) // 1000 + 1)])
    np.testing.assert_array_equal(meshops.mesh_sdf(p, vertices, faces), few)
