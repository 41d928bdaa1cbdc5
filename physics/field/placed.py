"""Numba helpers shared by the kernels that evaluate a whole family of placed parts in one call
(physics/field/families.py): a world point into a part's body frame, a body-frame H and dH/dx
rotated back and added, and the far-field point dipole.

A part maps a world point x to its body frame by x_b = R^T (x - c) and its body-frame field back
by H = R H_b, dH/dx = R (dH_b/dx_b) R^T (physics/field/sources.py); R may be a reflection (a
plate image). Doing the 3 x 3 products here, inside the kernel, replaces the many small BLAS
calls of one part at a time (each woke BLAS's threads for 9 multiplications).
"""
from __future__ import annotations

import math

from numba import njit

_INV_4PI = 1.0 / (4.0 * math.pi)


@njit(cache=True, inline="always")
def body_offset(px, py, pz, center, R):
    """x_b = R^T (x - c) for one point (x - c, then its components along R's columns).

    Parameters
    ----------
    px, py, pz : float
        The world point, m.
    center : numpy.ndarray, shape (3,)
        The part's centre c, m.
    R : numpy.ndarray, shape (3, 3)
        Body -> world matrix.

    Returns
    -------
    tuple of six floats
        x - c (world, m), then x_b (body frame, m).
    """
    dx = px - center[0]
    dy = py - center[1]
    dz = pz - center[2]
    bx = dx * R[0, 0] + dy * R[1, 0] + dz * R[2, 0]
    by = dx * R[0, 1] + dy * R[1, 1] + dz * R[2, 1]
    bz = dx * R[0, 2] + dy * R[1, 2] + dz * R[2, 2]
    return dx, dy, dz, bx, by, bz


@njit(cache=True, inline="always")
def add_rotated_H(R, hb, H):
    """H += R hb.

    Parameters
    ----------
    R : numpy.ndarray, shape (3, 3)
        Body -> world matrix.
    hb : numpy.ndarray, shape (3,)
        Body-frame H, A/m.
    H : numpy.ndarray, shape (3,)
        World accumulator, A/m, changed in place.
    """
    for i in range(3):
        H[i] += R[i, 0] * hb[0] + R[i, 1] * hb[1] + R[i, 2] * hb[2]


@njit(cache=True, inline="always")
def add_rotated_G(R, gb, G):
    """G += R gb R^T.

    Parameters
    ----------
    R : numpy.ndarray, shape (3, 3)
        Body -> world matrix.
    gb : numpy.ndarray, shape (3, 3)
        Body-frame dH_i/dx_j, A/m^2.
    G : numpy.ndarray, shape (3, 3)
        World accumulator, A/m^2, changed in place.
    """
    for i in range(3):
        t0 = R[i, 0] * gb[0, 0] + R[i, 1] * gb[1, 0] + R[i, 2] * gb[2, 0]
        t1 = R[i, 0] * gb[0, 1] + R[i, 1] * gb[1, 1] + R[i, 2] * gb[2, 1]
        t2 = R[i, 0] * gb[0, 2] + R[i, 1] * gb[1, 2] + R[i, 2] * gb[2, 2]
        for j in range(3):
            G[i, j] += t0 * R[j, 0] + t1 * R[j, 1] + t2 * R[j, 2]


@njit(cache=True)
def add_point_dipole(rx, ry, rz, moment, want_g, H, G):
    """Add the field of a point dipole at offset r from it (and its gradient).

    H = (3 (m.r) r / r^2 - m) / (4 pi r^3); dH_i/dx_j = 3 (m_i r_j + m_j r_i + (m.r) delta_ij)
    / (4 pi r^5) - 15 (m.r) r_i r_j / (4 pi r^7) (J. D. Jackson, Classical Electrodynamics, 3rd
    ed., eq. 5.56 and its derivative, as physics/field/sphere.py).

    Parameters
    ----------
    rx, ry, rz : float
        The point's offset from the dipole, m (not zero).
    moment : numpy.ndarray, shape (3,)
        World moment, A m^2.
    want_g : bool
        Also add dH_i/dx_j.
    H : numpy.ndarray, shape (3,)
        Accumulator, A/m, changed in place.
    G : numpy.ndarray, shape (3, 3)
        Accumulator, A/m^2, changed in place with want_g.
    """
    r2 = rx * rx + ry * ry + rz * rz
    r = math.sqrt(r2)
    mr = moment[0] * rx + moment[1] * ry + moment[2] * rz
    inv_r3 = 1.0 / (r2 * r)
    a = 3.0 * mr / r2
    H[0] += (a * rx - moment[0]) * inv_r3 * _INV_4PI
    H[1] += (a * ry - moment[1]) * inv_r3 * _INV_4PI
    H[2] += (a * rz - moment[2]) * inv_r3 * _INV_4PI
    if not want_g:
        return
    rv = (rx, ry, rz)
    c3 = 3.0 * inv_r3 / r2 * _INV_4PI
    c5 = 15.0 * mr * inv_r3 / (r2 * r2) * _INV_4PI
    for i in range(3):
        for j in range(3):
            same = mr if i == j else 0.0
            G[i, j] += c3 * (moment[i] * rv[j] + moment[j] * rv[i] + same) - c5 * rv[i] * rv[j]
