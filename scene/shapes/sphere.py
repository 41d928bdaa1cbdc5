"""A sphere: dims (diameter,), centred at the origin."""
from __future__ import annotations

import numpy as np

from trapscape.scene.shapes.base import BaseShape, Dim, as_directions, as_points

DRAWING_RINGS = 32  # latitude steps of the drawn sphere (twice as many longitude steps)


def uv_sphere(radius: float, rings: int = DRAWING_RINGS) -> tuple:
    """Latitude-longitude tessellation of a sphere centred at the origin, poles on body z.

    Parameters
    ----------
    radius : float, m.
    rings : int, latitude steps (2 * rings longitude steps).

    Returns
    -------
    vertices : (V, 3) float64, m.
    faces : (F, 3) int64, counter-clockwise seen from outside.

    References
    ----------
    Common practice (a UV sphere).
    """
    theta = np.linspace(0.0, np.pi, rings + 1)[1:-1]
    phi = np.linspace(0.0, 2.0 * np.pi, 2 * rings, endpoint=False)
    t, p = np.meshgrid(theta, phi, indexing="ij")
    body = np.stack([np.sin(t) * np.cos(p), np.sin(t) * np.sin(p), np.cos(t)], axis=-1)
    vertices = radius * np.vstack([[0.0, 0.0, 1.0], body.reshape(-1, 3), [0.0, 0.0, -1.0]])
    n, m = len(theta), len(phi)
    grid = 1 + np.arange(n * m).reshape(n, m)
    right = np.roll(grid, -1, axis=1)
    top = np.column_stack([np.zeros(m, np.int64), grid[0], right[0]])
    bottom = np.column_stack([np.full(m, n * m + 1), right[-1], grid[-1]])
    a, b, c, d = grid[:-1], right[:-1], right[1:], grid[1:]
    sides = np.concatenate([np.stack([a, d, c], -1).reshape(-1, 3), np.stack([a, c, b], -1).reshape(-1, 3)])
    return vertices, np.concatenate([top, sides, bottom]).astype(np.int64)


class Sphere(BaseShape):
    name = "sphere"
    dims = (Dim("diameter", "length"),)
    keys = ("size", "diameter")
    size_example = "size = 10 or diameter = 10"
    is_ball = True
    closed_form = "sphere"

    def volume(self, part) -> float:
        """pi D^3 / 6, m^3 (textbook)."""
        return float(np.pi * part.dims[0] ** 3 / 6.0)

    def support(self, part, directions) -> np.ndarray:
        return part.dims[0] / 2.0 * np.linalg.norm(as_directions(directions), axis=1)

    def intent_axes(self, part) -> dict:
        """A sphere is magnetised across a diameter: body z (turn it with rotation)."""
        return {"diametral": np.array([0.0, 0.0, 1.0])}

    def smallest(self, part) -> float:
        return float(part.dims[0])

    def sdf(self, part, points) -> np.ndarray:
        """|p| - D / 2 (textbook)."""
        return np.linalg.norm(as_points(points), axis=1) - 0.5 * part.dims[0]

    def tessellation(self, part, segments=None) -> tuple:
        return uv_sphere(part.dims[0] / 2.0, segments or DRAWING_RINGS)

    def field_params(self, part) -> tuple:
        return tuple(float(v) for v in part.dims)

    def patches(self, part, volume_charge=False) -> list:
        raise ValueError("a sphere's forces have a closed form (is_ball); it has no patches")


SPHERE = Sphere()
