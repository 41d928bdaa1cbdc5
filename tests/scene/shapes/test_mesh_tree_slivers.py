"""The mesh tree (scene/shapes/meshtree.py) on the fans of long thin triangles that CAD puts on a
cylinder's end caps, and on the sample meshes, against the brute force: meshops' distance and
parity over every triangle, and a tree of one leaf, which tries every triangle in face order with
the same arithmetic (the first of equally near triangles wins, as in a plain loop)."""
from __future__ import annotations

import numpy as np
import pytest
import trimesh

from repo_paths import SAMPLES
from trapscape.scene.shapes import meshops, meshtree

NORMAL_ATOL = 1e-12  # chosen before looking; widened where triangles tie (below, after looking)


def _disc(sections):
    """10 mm across and 5 mm high, made in mm as CAD exports it (trimesh drops the faces of a
    25,000-section disc made in m as degenerate), in m."""
    mesh = trimesh.creation.cylinder(radius=5.0, height=5.0, sections=sections)
    assert len(mesh.faces) == 4 * sections
    return np.asarray(mesh.vertices, float) * 1e-3, np.asarray(mesh.faces, np.int64)


def _sample_part():
    mesh = trimesh.load(SAMPLES / "parts" / "rotor-segment-2.stl")
    return np.asarray(mesh.vertices, float) * 1e-3, np.asarray(mesh.faces, np.int64)


MESHES = {  # name: (mesh, random points); a 25,000-section disc has 100,000 triangles
    "disc, 8 sections": (lambda: _disc(8), 3000),
    "disc, 250 sections": (lambda: _disc(250), 3000),
    "disc, 2,500 sections": (lambda: _disc(2500), 2000),
    "disc, 25,000 sections": (lambda: _disc(25000), 600),
    "arc segment (sample part)": (_sample_part, 3000),
    "ring": (lambda: (lambda m: (np.asarray(m.vertices, float), np.asarray(m.faces, np.int64)))(
        trimesh.creation.annulus(0.004, 0.01, 0.003, sections=512)), 3000),
}


def _points(vertices, faces, count, seed=5):
    """Around and inside the bounding box, far out, on and just off the surface (1e-9 and 1e-5
    of the size along the face normal), on vertices, on edge midpoints, and about the rims: on
    the cap edges' outer ends and beyond them, half way between the side and the cap."""
    rng = np.random.default_rng(seed)
    low, high = vertices.min(axis=0), vertices.max(axis=0)
    centre, size = (low + high) / 2, float((high - low).max())
    around = centre + (rng.random((count, 3)) - 0.5) * 1.6 * (high - low)
    far = centre + rng.normal(size=(count // 10, 3)) * 5 * size
    mesh = trimesh.Trimesh(vertices, faces, process=False)
    on, face = trimesh.sample.sample_surface(mesh, count // 2, seed=seed)
    off = size * np.array([1e-9, -1e-9, 1e-5, -1e-5])[rng.integers(0, 4, len(on)), None]
    near = on + mesh.face_normals[face] * off
    picks = rng.choice(len(faces), min(len(faces), count // 4), replace=False)
    corners = vertices[faces[picks, rng.integers(0, 3, len(picks))]]
    edges = 0.5 * (vertices[faces[picks, 0]] + vertices[faces[picks, 1]])
    radial = np.hypot(corners[:, 0], corners[:, 1])[:, None]
    outward = np.column_stack([corners[:, :2] / np.where(radial > 0, radial, 1.0),
                               np.sign(corners[:, 2:])])
    beyond = corners + outward * size * rng.choice([1e-9, 1e-6, 1e-3, 0.3], (len(corners), 1))
    return np.concatenate([around, far, on, near, corners, edges, beyond])


def _one_leaf_tree(vertices, faces, monkeypatch):
    with monkeypatch.context() as patch:
        patch.setattr(meshtree, "LEAF_SIZE", len(faces))
        tree = meshtree.build_tree(vertices, faces)
    assert tree.count[0] == len(faces)  # one leaf, rows in face order
    np.testing.assert_array_equal(tree.face_index, np.arange(len(faces)))
    return tree


@pytest.mark.parametrize("name", MESHES)
def test_signed_distance_normal_and_inside_equal_the_brute_force(name, monkeypatch):
    make, count = MESHES[name]
    vertices, faces = make()
    p = _points(vertices, faces, count)
    tree = meshtree.build_tree(vertices, faces)
    sdf, normal = meshtree.tree_signed_distance(p, tree)
    brute_sdf, brute_normal = meshtree.tree_signed_distance(p, _one_leaf_tree(vertices, faces,
                                                                                 monkeypatch))
    distance = meshops.brute_mesh_distance(p, vertices, faces)
    np.testing.assert_array_equal(np.abs(sdf), distance)  # bit for bit
    np.testing.assert_array_equal(np.abs(brute_sdf), distance)
    np.testing.assert_array_equal(meshtree.tree_distance(p, tree), distance)
    inside = meshops.brute_mesh_inside(p, vertices, faces)
    np.testing.assert_array_equal(meshtree.tree_inside(p, tree), inside)
    # Farther from the surface than parity's jitter (meshtree.JITTER, 1e-9 of the size), the sign
    # is parity's.
    size = meshops.mesh_size(vertices)
    clear = distance > 1e-8 * size
    assert 50 < (inside & clear).sum() < clear.sum() - 50 and (~clear).sum() > 50
    np.testing.assert_array_equal(sdf[clear] < 0, inside[clear])
    np.testing.assert_array_equal(sdf[clear], brute_sdf[clear])
    # The normal is (p - q) / |p - q|. Where triangles tie exactly (a shared edge or vertex, or
    # coplanar neighbours), the tree may find another of them than the loop (main's tree does
    # the same); their closest points q agree only to the rounding of an ill-conditioned
    # triangle (up to 1e4 ulps of the size seen on the sample part), so the normals agree to
    # that over the distance. On the surface either one is a valid pseudonormal.
    off = distance > 1e-6 * size
    rounding = NORMAL_ATOL + 1e-10 * size / distance[off]
    assert np.all(np.abs(normal[off] - brute_normal[off]) <= rounding[:, None])
    np.testing.assert_allclose(np.linalg.norm(normal, axis=1), 1.0, rtol=1e-12)


def test_every_corner_lies_in_its_nodes_turned_box():
    """The turned box bounds the node's triangles (their corners, hence their hulls): the
    search's lower bound holds."""
    vertices, faces = _disc(2500)
    tree = meshtree.build_tree(vertices, faces)
    span = np.where(tree.count > 0, tree.count, 0)
    for node in range(len(tree.count) - 1, -1, -1):  # children come after their parent
        if tree.count[node] == 0:
            span[node] = span[tree.left[node]] + span[tree.left[node] + 1]
    for node in range(len(tree.count)):
        corners = tree.triangles[tree.first[node]:tree.first[node] + span[node]].reshape(-1, 3)
        centre, half = tree.bounds[node, 6:9], tree.bounds[node, 9:12]
        axes = tree.bounds[node, 12:21].reshape(3, 3)
        np.testing.assert_allclose(axes @ axes.T, np.eye(3), atol=1e-14)
        assert np.all(np.abs((corners - centre) @ axes.T) <= half)


def test_the_turned_boxes_of_a_cap_fan_are_thin():
    """A leaf of neighbouring slivers on a cap is a thin wedge: its turned box covers far less of
    the cap than its axis-aligned box (the reason the turned boxes exist)."""
    vertices, faces = _disc(25000)
    tree = meshtree.build_tree(vertices, faces)
    lower, upper = tree.bounds[:, 0:3], tree.bounds[:, 3:6]
    cap = (tree.count > 0) & (upper[:, 2] == lower[:, 2])
    assert cap.sum() > 1000
    flat = np.prod(np.sort(upper - lower, axis=1)[:, 1:], axis=1)  # the two larger sides
    turned = np.prod(np.sort(2 * tree.bounds[:, 9:12], axis=1)[:, 1:], axis=1)
    assert np.median(turned[cap] / flat[cap]) < 0.05


def test_jacobi_eigenvectors_diagonalise_like_numpy():
    """Against numpy.linalg.eigh (LAPACK): the rows are orthonormal and diagonalise the matrix."""
    rng = np.random.default_rng(7)
    for k in range(200):
        m = rng.normal(size=(3, 3)) * 10.0 ** rng.uniform(-8, 0, 3)
        a = m @ m.T
        if k % 4 == 0:
            a[0, 1] = a[1, 0] = 0.0
        axes = meshtree._eigenvectors(a.copy())
        np.testing.assert_allclose(axes @ axes.T, np.eye(3), atol=1e-14)
        turned = axes @ a @ axes.T
        np.testing.assert_allclose(turned - np.diag(np.diag(turned)), 0.0,
                                   atol=1e-10 * np.abs(a).max())
        np.testing.assert_allclose(np.sort(np.diag(turned)), np.linalg.eigh(a)[0],
                                   atol=1e-10 * np.abs(a).max())


def test_forest_of_a_fan_disc_and_a_part_equals_the_nearest_of_each():
    disc, part = _disc(2500), _sample_part()
    shift = np.array([0.02, 0.0, 0.0])
    meshes = [disc, (part[0] + shift, part[1])]
    trees = [meshtree.build_tree(*mesh) for mesh in meshes]
    p = np.concatenate([_points(*disc, 1000), _points(part[0] + shift, part[1], 1000)])
    each = np.column_stack([meshtree.tree_signed_distance(p, tree)[0] for tree in trees])
    lower = [mesh[0].min(axis=0) for mesh in meshes]
    upper = [mesh[0].max(axis=0) for mesh in meshes]
    box = np.column_stack([np.linalg.norm(np.maximum(np.maximum(lo - p, p - hi), 0.0), axis=1)
                           for lo, hi in zip(lower, upper)])
    bodies = np.stack([p, p])
    found = meshtree.forest_signed_distance(bodies, meshtree.pack_trees(trees),
                                            np.full(len(p), np.inf), np.ones((len(p), 2), bool),
                                            box)
    np.testing.assert_array_equal(found, each.min(axis=1))
