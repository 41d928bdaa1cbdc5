"""A rectangular block: dims (a, b, c), its edge lengths along body x, y, z, centred at the origin."""
from __future__ import annotations

import numpy as np

from trapscape.scene.shapes.axes import EQUAL
from trapscape.scene.shapes.base import BaseShape, Dim, as_directions, as_points
from trapscape.scene.shapes.frames import box_corners
from trapscape.scene.shapes.patches import box_faces

# the 12 outward triangles over box_corners' order (x slowest, z fastest)
_FACES = np.array([[0, 1, 3], [0, 3, 2], [4, 6, 7], [4, 7, 5], [0, 4, 5], [0, 5, 1],
                   [2, 3, 7], [2, 7, 6], [0, 2, 6], [0, 6, 4], [1, 5, 7], [1, 7, 3]], np.int64)


class Box(BaseShape):
    name = "box"
    dims = (Dim("x_size", "length"), Dim("y_size", "length"), Dim("z_size", "length"))
    keys = ("size",)
    size_example = "size = [10, 10, 5] (edge lengths along body x, y, z)"
    takes_named = False
    closed_form = "box"
    is_block = True

    def volume(self, part) -> float:
        """a b c, m^3 (textbook)."""
        d = part.dims
        return float(d[0] * d[1] * d[2])

    def corners(self, part) -> np.ndarray:
        half = np.asarray(part.dims, float) / 2.0
        return box_corners(-half, half)

    def support(self, part, directions) -> np.ndarray:
        """max over the corners of d . x, (K,) m (a box is the hull of its corners)."""
        return (self.corners(part) @ as_directions(directions).T).max(axis=0)

    def intent_axes(self, part) -> dict:
        """Thickness along the shortest edge, unless two are shortest (a cube leaves it open);
        a block has no axis."""
        edges = np.sort(part.dims)
        if edges[1] - edges[0] <= EQUAL * edges[2]:
            return {}
        return {"thickness": np.eye(3)[int(np.argmin(part.dims))]}

    def smallest(self, part) -> float:
        return float(min(part.dims))

    def sdf(self, part, points) -> np.ndarray:
        """|max(q, 0)| + min(max_i q_i, 0) with q = |p| - size / 2 (common practice for signed
        distance functions; I. Quilez, "distance functions")."""
        q = np.abs(as_points(points)) - 0.5 * np.asarray(part.dims, dtype=float)
        outside = np.linalg.norm(np.maximum(q, 0.0), axis=1)
        return outside + np.minimum(q.max(axis=1), 0.0)

    def tessellation(self, part, segments=None) -> tuple:
        """(8 corners, 12 outward triangles): exact."""
        return self.corners(part), _FACES.copy()

    def field_params(self, part) -> tuple:
        return (np.asarray(part.dims, float),)

    def patches(self, part, volume_charge=False) -> list:
        return [box_faces(part.dims)]


BOX = Box()
