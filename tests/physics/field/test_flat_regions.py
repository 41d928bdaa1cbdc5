"""Flat regions (coplanar faces of one charge) summed through their boundary chains.

References: the face-by-face polyhedron sum (Guptasarma & Singh 1999, itself checked against
the cuboid closed form and surface quadrature in test_polyhedron.py) for the same mesh, and the
closed form of an axially magnetised cylinder (Derby & Olbert 2010, physics/field/cylinder.py)
for a faceted disc as its facets shrink. Tolerances were set from the module's error bound
(NODE_TOLERANCE per chain, a few hundred chains: under 1e-6) and from the chord error of an
n-gon, before the runs.
"""
import numpy as np
import pytest
import trimesh

from trapscape.physics.field import flat_regions, polyhedron
from trapscape.physics.field.cylinder import cylinder_H
from trapscape.physics.field.polyhedron import polyhedron_H, polyhedron_H_and_gradient

MM = 1e-3


def _face_by_face(monkeypatch, points, V, F, M):
    """The same field with every face summed on its own (no flat regions)."""
    with monkeypatch.context() as patch:
        patch.setattr(flat_regions, "MIN_FACES", 10**9)
        polyhedron._charge_tables.cache_clear()
        H, G = polyhedron_H_and_gradient(points, V, F, M)
    polyhedron._charge_tables.cache_clear()
    return H, G


def _disc(sections, radius=5.0, height=5.0):
    mesh = trimesh.creation.cylinder(radius=radius, height=height, sections=sections)
    return np.asarray(mesh.vertices) * MM, np.asarray(mesh.faces)


def _ring(sections):
    mesh = trimesh.creation.annulus(r_min=2.0, r_max=5.0, height=3.0, sections=sections)
    return np.asarray(mesh.vertices) * MM, np.asarray(mesh.faces)


def _tiled_box():
    """A 10 x 6 x 4 mm box whose faces are tiled by many small triangles (not fans)."""
    mesh = trimesh.creation.box(extents=(10.0, 6.0, 4.0))
    for _ in range(4):
        mesh = mesh.subdivide()
    return np.asarray(mesh.vertices) * MM, np.asarray(mesh.faces)


def _points(size, count=400, seed=7):
    """Points in and around the part (many within a few per cent of a surface) and farther out."""
    rng = np.random.default_rng(seed)
    near = rng.uniform(-0.55, 0.55, (count, 3)) * size
    wide = rng.uniform(-2.0, 2.0, (count // 4, 3)) * size
    return np.concatenate([near, wide])


MESHES = {
    "disc, 2,000 sections": (_disc(2000), [0.0, 0.0, 9.5e5]),
    "disc, oblique M": (_disc(600), [3.0e5, -2.0e5, 8.0e5]),
    "ring (caps with holes)": (_ring(800), [0.0, 0.0, -9.0e5]),
    "tiled box": (_tiled_box(), [4.0e5, 5.0e5, 6.0e5]),
}


@pytest.mark.parametrize("name", MESHES)
def test_regions_equal_the_face_by_face_sum(monkeypatch, name):
    (V, F), M = MESHES[name]
    size = float(np.ptp(V, axis=0).max())
    tables = polyhedron.mesh_tables(V, F)
    assert flat_regions.flat_regions(tables, tables.unit_normal @ np.asarray(M)) is not None
    points = _points(size)  # inside too: H is the same formula there
    H, G = polyhedron_H_and_gradient(points, V, F, M)
    H0, G0 = _face_by_face(monkeypatch, points, V, F, M)
    scale = np.linalg.norm(M)
    np.testing.assert_allclose(H, H0, rtol=0, atol=1e-8 * scale)
    np.testing.assert_allclose(G, G0, rtol=0, atol=1e-8 * scale / size)


def test_points_in_a_region_plane_are_summed_face_by_face(monkeypatch):
    V, F = _disc(2000)
    M = [0.0, 0.0, 9.5e5]
    angle = np.linspace(0.0, 6.0, 7)
    on_cap = np.c_[3.0 * np.cos(angle), 3.0 * np.sin(angle), np.full(7, 2.5)] * MM
    rim_and_centre = np.array([[5.0, 0.0, 2.5], [0.0, 0.0, -2.5], [1.0, 2.0, -2.5]]) * MM
    points = np.concatenate([on_cap, rim_and_centre])
    H, G = polyhedron_H_and_gradient(points, V, F, M)
    H0, G0 = _face_by_face(monkeypatch, points, V, F, M)
    assert np.all(np.isfinite(H)) and np.all(np.isfinite(G))
    np.testing.assert_allclose(H, H0, rtol=1e-12, atol=1e-9 * np.linalg.norm(M))


def test_a_fine_faceted_disc_tends_to_the_cylinder():
    """The n-gon's area falls short of the circle's by (pi / n)^2 / 3 (relative), so the field a
    few mm off the disc approaches the cylinder's as 1 / n^2: four times the sections, about a
    sixteenth of the difference."""
    M = np.array([0.0, 0.0, 9.5e5])
    points = np.array([[1.0, 0.5, 4.0], [3.0, -1.0, 3.5], [0.0, 0.0, -6.0], [7.0, 2.0, 1.0]]) * MM
    exact = cylinder_H(points, 10.0 * MM, 5.0 * MM, M)
    errors = []
    for sections in (1000, 4000):
        V, F = _disc(sections)
        errors.append(np.abs(polyhedron_H(points, V, F, M) - exact).max() / np.linalg.norm(M))
    assert errors[0] < 1e-4
    assert 8.0 < errors[0] / errors[1] < 32.0


def test_a_turned_disc_from_a_binary_stl_is_one_region_per_cap(monkeypatch, tmp_path):
    """A binary STL rounds coordinates to single precision, so a turned cap's slivers are
    coplanar only to that rounding (their normals spread by about 1e-4). Each cap is still one
    region; against the face-by-face sum of the rounded mesh, at 50 um to 2 mm off the top cap,
    the difference is bounded by the corners' offset (about 1e-9 m) over the distance: 2e-5."""
    mesh = trimesh.creation.cylinder(radius=5.0, height=5.0, sections=1500)
    turn = trimesh.transformations.rotation_matrix(0.5, [1.0, 0.3, 0.1])
    mesh.apply_transform(turn)
    mesh.apply_translation([12.3, -4.1, 7.7])
    mesh.export(tmp_path / "turned.stl")
    rounded = trimesh.load(tmp_path / "turned.stl", process=True)
    V, F = np.asarray(rounded.vertices) * MM, np.asarray(rounded.faces)
    axis = turn[:3, :3] @ np.array([0.0, 0.0, 1.0])
    M = 9.5e5 * axis
    tables = polyhedron.mesh_tables(V, F)
    groups = flat_regions._groups(tables, tables.unit_normal @ M)
    assert sorted(len(g[0]) for g in groups) == [1500, 1500]
    rng = np.random.default_rng(3)
    across = np.cross(axis, [1.0, 0.0, 0.0])
    across /= np.linalg.norm(across)
    other = np.cross(axis, across)
    angle, radius = rng.uniform(0.0, 2.0 * np.pi, 200), rng.uniform(0.0, 5.5, 200)
    height = rng.uniform(0.05, 2.0, 200)
    top = turn[:3, :3] @ np.array([0.0, 0.0, 2.5]) + [12.3, -4.1, 7.7]
    points = (top + (radius * np.cos(angle))[:, None] * across
              + (radius * np.sin(angle))[:, None] * other + height[:, None] * axis) * MM
    H, _ = polyhedron_H_and_gradient(points, V, F, M)
    H0, _ = _face_by_face(monkeypatch, points, V, F, M)
    np.testing.assert_allclose(H, H0, rtol=0, atol=2e-5 * np.linalg.norm(M))


def test_meshes_with_few_coplanar_faces_keep_the_face_by_face_sum():
    V, F = _disc(100)
    tables = polyhedron.mesh_tables(V, F)
    assert flat_regions.flat_regions(tables, tables.unit_normal @ np.array([0.0, 0.0, 1e6])) is None


def test_loops_touching_at_a_vertex_are_left_to_the_faces():
    """Two squares of one plane sharing a corner: the boundary meets that vertex twice."""
    faces = np.array([[0, 1, 2], [0, 2, 3], [2, 4, 5], [2, 5, 6]])
    assert flat_regions._loops(faces, 7) is None
    assert len(flat_regions._loops(faces[:2], 7)) == 1
