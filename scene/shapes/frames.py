"""Frames and rotations: body <-> world maps of a placed part, and a right-handed frame about
a direction.

A placed part has a position c (3,) and a rotation R (3, 3) from body to world: a body point p
is at R p + c in the world (scene.model.Magnet).
"""
from __future__ import annotations

import numpy as np


def to_body(points, position, rotation) -> np.ndarray:
    """World points (N, 3) into the body frame, p = R^T (x - c) (rigid motion, textbook).

    Parameters
    ----------
    points : (N, 3) float, m, world frame.
    position : (3,) float, m, the body origin in the world.
    rotation : (3, 3) float, body -> world (orthogonal).

    Returns
    -------
    (N, 3) float64, m, body frame.

    References
    ----------
    Rigid-body change of frame (common practice).
    """
    return (np.asarray(points, float).reshape(-1, 3) - position) @ rotation


def to_world(points, position, rotation) -> np.ndarray:
    """Body points (N, 3) into the world, x = R p + c (the inverse of to_body).

    Parameters
    ----------
    points : (N, 3) float, m, body frame.
    position : (3,) float, m.
    rotation : (3, 3) float, body -> world.

    Returns
    -------
    (N, 3) float64, m, world frame.

    References
    ----------
    Rigid-body change of frame (common practice).
    """
    return np.asarray(points, float).reshape(-1, 3) @ np.asarray(rotation, float).T + position


def perpendicular_pair(direction) -> np.ndarray:
    """Two unit vectors (2, 3) u, v with (u, v, d) a right-handed orthonormal frame.

    u is d x e_k for the axis e_k least aligned with d (no division by a small cross product),
    v = d x u.

    Parameters
    ----------
    direction : (3,) float, a unit vector.

    Returns
    -------
    (2, 3) float64, dimensionless.

    References
    ----------
    Derived here (the least-aligned axis keeps |d x e_k| >= |d| sqrt(2/3)).
    """
    d = np.asarray(direction, float)
    helper = np.eye(3)[np.argmin(np.abs(d))]
    u = np.cross(d, helper)
    u /= np.linalg.norm(u)
    return np.array([u, np.cross(d, u)])


def frame_along(direction) -> np.ndarray:
    """(3, 3) rotation whose columns are u, v, d / |d| (perpendicular_pair): it turns body +z
    onto the direction.

    Parameters
    ----------
    direction : (3,) float, any length > 0.

    Returns
    -------
    (3, 3) float64, orthogonal, det +1.

    References
    ----------
    Derived here.
    """
    d = np.asarray(direction, float)
    d = d / np.linalg.norm(d)
    u, v = perpendicular_pair(d)
    return np.column_stack([u, v, d])


def box_corners(lower, upper) -> np.ndarray:
    """The 8 corners (8, 3) of the axis-aligned box [lower, upper], x slowest, z fastest.

    Parameters
    ----------
    lower, upper : (3,) float, m.

    Returns
    -------
    (8, 3) float64, m.

    References
    ----------
    Common practice.
    """
    return np.array([lower, upper])[_CORNER_SIDES, _AXES].T  # (laid out as meshgrid's was)


# which of (lower, upper) each corner takes along x (row 0), y, z: x slowest, z fastest
_CORNER_SIDES = np.ascontiguousarray(
    np.array([[i, j, k] for i in (0, 1) for j in (0, 1) for k in (0, 1)]).T)
_AXES = np.arange(3)[:, None]

