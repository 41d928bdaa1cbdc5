"""Uniformly magnetised sphere: a point dipole outside, a uniform demagnetising field inside.

H outside = (3 (m.r) r / r^5 - m / r^3) / (4 pi), m = M V; H inside = -M / 3
(J. D. Jackson, Classical Electrodynamics, 3rd ed., section 5.10).
Body frame: centred at the origin. Points (N, 3) in metres, M (3,) in A/m, H in A/m.
A point within 1e-12 of the diameter of the surface is on it and takes the outer side's value
(the convention of physics.field.cuboid).
"""
from __future__ import annotations

import numpy as np

SURFACE_TOL = 1e-12  # relative to the diameter: closer than this to the surface is "on" it


def _strictly_inside(r2, radius):
    return r2 < (radius - SURFACE_TOL * 2.0 * radius) ** 2


def sphere_H(points: np.ndarray, diameter: float, magnetization: np.ndarray) -> np.ndarray:
    """H of a uniformly magnetised sphere: its dipole outside, -M/3 inside.

    Parameters
    ----------
    points : ndarray, shape (N, 3)
        Body-frame points in m (the sphere is centred at the origin).
    diameter : float
        m.
    magnetization : ndarray, shape (3,)
        Uniform magnetisation M in A/m.

    Returns
    -------
    ndarray, shape (N, 3)
        H in A/m.

    References
    ----------
    J. D. Jackson, Classical Electrodynamics, 3rd ed., section 5.10.
    """
    points = np.asarray(points, dtype=float)
    M = np.asarray(magnetization, dtype=float)
    radius = diameter / 2.0
    r2 = np.einsum("ij,ij->i", points, points)
    inside = _strictly_inside(r2, radius)
    moment = M * (4.0 / 3.0) * np.pi * radius**3
    r2_safe = np.where(inside, radius**2, r2)
    r = np.sqrt(r2_safe)
    m_dot_r = points @ moment
    H = (3.0 * m_dot_r[:, None] * points / r2_safe[:, None] - moment) / (4.0 * np.pi * r[:, None] ** 3)
    H[inside] = -M / 3.0
    return H


def sphere_H_gradient(points: np.ndarray, diameter: float, magnetization: np.ndarray) -> np.ndarray:
    """Gradient of the sphere's H: the dipole's outside, zero inside (H is uniform there).

    Parameters
    ----------
    points : ndarray, shape (N, 3)
        Body-frame points in m (the sphere is centred at the origin).
    diameter : float
        m.
    magnetization : ndarray, shape (3,)
        Uniform magnetisation M in A/m.

    Returns
    -------
    ndarray, shape (N, 3, 3)
        dH_i/dx_j in A/m^2, [n, i, j].

    References
    ----------
    J. D. Jackson, Classical Electrodynamics, 3rd ed., section 5.10.
    """
    points = np.asarray(points, dtype=float)
    M = np.asarray(magnetization, dtype=float)
    radius = diameter / 2.0
    moment = M * (4.0 / 3.0) * np.pi * radius**3
    r2 = np.einsum("ij,ij->i", points, points)
    inside = _strictly_inside(r2, radius)
    r2 = np.where(inside, radius**2, r2)
    r = np.sqrt(r2)
    mr = points @ moment
    eye = np.eye(3)
    # d/dx_j [3 (m.r) r_i / r^5 - m_i / r^3] (derived from the dipole field above)
    G = (
        3.0 * (moment[None, :, None] * points[:, None, :] + moment[None, None, :] * points[:, :, None]
               + mr[:, None, None] * eye[None]) / r[:, None, None] ** 5
        - 15.0 * mr[:, None, None] * points[:, :, None] * points[:, None, :] / r[:, None, None] ** 7
    ) / (4.0 * np.pi)
    G[inside] = 0.0
    return G
