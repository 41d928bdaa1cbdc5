"""The ray-parity inside test for meshes, on lattices (one ray per column) and scattered points."""
import numpy as np
import trimesh

from trapscape.scene.shapes.meshops import mesh_inside, winding_number


def test_parity_agrees_with_the_winding_number():
    # Jordan curve theorem in 3D: odd crossings inside (O'Rourke, Computational Geometry in C,
    # 7.4); the winding number (sum of solid angles / 4 pi) is the independent reference.
    mesh = trimesh.creation.torus(major_radius=1.0, minor_radius=0.4)  # not convex, a hole
    axis = np.linspace(-1.5, 1.5, 31) + 0.013  # off the surface, where either answer is right
    lattice = np.stack(np.meshgrid(axis, axis, axis / 2, indexing="ij"), -1).reshape(-1, 3)
    scattered = np.random.default_rng(0).uniform(-1.5, 1.5, (3000, 3)) * [1, 1, 0.5]
    for points in (lattice, scattered):
        expected = winding_number(points, mesh.vertices, mesh.faces) > 0.5
        inside = mesh_inside(points, mesh.vertices, mesh.faces)
        assert 0 < inside.sum() < len(points)
        assert np.array_equal(inside, expected)
