"""A solid from a mesh file: no dims; the closed, outward triangle mesh in part.mesh_vertices
(V, 3) m and part.mesh_faces (F, 3), in the body frame (the file's own origin)."""
from __future__ import annotations

import numpy as np

from trapscape.scene.shapes import meshops, meshtree
from trapscape.scene.shapes.base import BaseShape, as_directions
from trapscape.scene.shapes.patches import triangle_patches


class Mesh(BaseShape):
    name = "mesh"
    keys = ("file", "file_units")
    size_example = 'file = "parts/a.stl"'
    takes_size = False
    takes_named = False
    from_file = True
    cheap_distance = False  # a tree search (meshtree.py), not a closed form
    fit_far_field = True

    def tessellation(self, part, segments=None) -> tuple:
        return np.asarray(part.mesh_vertices, float), np.asarray(part.mesh_faces, np.int64)

    def volume(self, part) -> float:
        return meshops.mesh_volume(part.mesh_vertices, part.mesh_faces)

    def support(self, part, directions) -> np.ndarray:
        return (np.asarray(part.mesh_vertices, float) @ as_directions(directions).T).max(axis=0)

    def smallest(self, part) -> float:
        return meshops.mesh_thickness(part.mesh_vertices, part.mesh_faces)

    def sdf(self, part, points) -> np.ndarray:
        return meshops.mesh_sdf(points, *self.tessellation(part))

    def search_tree(self, part):
        return meshtree.mesh_tree(*self.tessellation(part))

    def sdf_and_normal(self, part, points) -> tuple:
        """The distance and the closest feature's outward normal, from one tree search."""
        return meshops.mesh_sdf_and_normal(points, *self.tessellation(part))

    def inside(self, part, points) -> np.ndarray:
        """Ray parity through the mesh's cached tree."""
        return meshops.mesh_inside(points, *self.tessellation(part))

    def patches(self, part, volume_charge=False) -> list:
        return [triangle_patches(*self.tessellation(part))]

    def reference_point(self, part) -> np.ndarray:
        """The solid's volume centroid (a file's origin may lie anywhere)."""
        return meshops.volume_centroid(*self.tessellation(part))


MESH = Mesh()
