"""A straight prism: dims (outline, height), outline a tuple of K corners (x, y) in m in the
body frame, counter-clockwise (either winding is accepted in a scene file), the axis body z,
centred on z = 0. Its field is the exact polyhedron field of its tessellation (exact: a prism
is a polyhedron)."""
from __future__ import annotations

from functools import lru_cache

import numpy as np

from trapscape.scene.shapes import meshops
from trapscape.scene.shapes.base import BaseShape, Dim, DimError, as_directions, as_points
from trapscape.scene.shapes.patches import triangle_patches
from trapscape.scene.shapes.polygon import ear_clip, polygon_problem, polygon_sdf, signed_area
from trapscape.scene.shapes.sector import extrude

EXAMPLE = "outline = [[0, 0], [10, 0], [0, 10]] and height = 5"


@lru_cache(maxsize=64)
def prism_mesh(outline: tuple, height: float) -> tuple:
    """Closed outward mesh of the prism: bottom ring of corners, top ring, caps by ear clipping.

    Parameters
    ----------
    outline : tuple of K (x, y), m, counter-clockwise.
    height : float, m.

    Returns
    -------
    vertices : (2K, 3) float64, m (read-only).
    faces : (4K - 4, 3) int64 (read-only).

    References
    ----------
    Derived here; caps by ear clipping (polygon.ear_clip).
    """
    xy = np.asarray(outline, float)
    k = len(xy)
    vertices = np.vstack([np.column_stack([xy, np.full(k, z)]) for z in (-height / 2, height / 2)])
    cap = ear_clip(xy)
    i = np.arange(k)
    j = (i + 1) % k
    faces = np.concatenate([cap[:, ::-1], cap + k,  # bottom seen from -z, top from +z
                            np.stack([i, j, j + k], 1), np.stack([i, j + k, i + k], 1)])
    vertices.setflags(write=False)
    faces.setflags(write=False)
    return vertices, faces


class Prism(BaseShape):
    name = "prism"
    dims = (Dim("outline", "outline"), Dim("height", "length"))
    keys = ("outline", "height")
    size_example = EXAMPLE
    takes_size = False
    fit_far_field = True

    def validate(self, values, unit: str) -> None:
        problem = polygon_problem(values[0])
        if problem is not None:
            raise DimError(f"the outline is not a simple polygon: {problem}; list the corners "
                           f"[x, y] in order around the cross-section, e.g. {EXAMPLE}.", 0)
        corners = self.make_dims([values[0], 1.0])[0]
        try:
            ear_clip(np.asarray(corners, float))
        except ValueError:
            raise DimError(f"the outline could not be cut into triangles (corners too close to "
                           f"one another); list the corners [x, y] in order around the "
                           f"cross-section, e.g. {EXAMPLE}.", 0) from None
        if values[1] <= 0:
            raise DimError(f"the height must be positive, got {values[1]:g}; give a size above "
                           f"zero.", 1)

    def make_dims(self, values) -> tuple:
        """(outline counter-clockwise as a tuple of (x, y), height)."""
        corners = [(float(x), float(y)) for x, y in values[0]]
        if signed_area(corners) < 0:
            corners.reverse()
        return tuple(corners), float(values[1])

    def outline(self, part) -> np.ndarray:
        return np.asarray(part.dims[0], float)

    def volume(self, part) -> float:
        """Shoelace area times the height, m^3."""
        return abs(signed_area(self.outline(part))) * part.dims[1]

    def support(self, part, directions) -> np.ndarray:
        """The prism is the hull of its corners at z = +-h/2: max_k (x_k, y_k) . d_xy + |d_z| h/2."""
        d = as_directions(directions)
        return (self.outline(part) @ d[:, :2].T).max(axis=0) + np.abs(d[:, 2]) * part.dims[1] / 2.0

    def smallest(self, part) -> float:
        return meshops.mesh_thickness(*self.tessellation(part))

    def sdf(self, part, points) -> np.ndarray:
        """Exact: the polygon's 2-D distance extruded along z."""
        p = as_points(points)
        return extrude(polygon_sdf(p[:, 0], p[:, 1], self.outline(part)), p[:, 2], part.dims[1])

    def tessellation(self, part, segments=None) -> tuple:
        return prism_mesh(part.dims[0], part.dims[1])

    def patches(self, part, volume_charge=False) -> list:
        return [triangle_patches(*self.tessellation(part))]


PRISM = Prism()
