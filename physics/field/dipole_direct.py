"""Field of a set of point dipoles at many targets by the direct sum (numba), exact to rounding.

H(x) = sum_k (3 (m_k . r) r / r^5 - m_k / r^3) / (4 pi),  r = x - x_k
(J. D. Jackson, Classical Electrodynamics, 3rd ed., eq. 5.56, with B = mu0 H outside the sources).
dH_i/dx_j = 3 [(m_i r_j + m_j r_i + (m . r) delta_ij) / r^5 - 5 (m . r) r_i r_j / r^7] / (4 pi)
(derived here by differentiating the line above; symmetric since curl H = 0 off the sources).
Positions and targets in m, moments in A m^2, H in A/m, gradients in A/m^2.
A target closer than COINCIDENT_M to a source skips that source (no NaN, no inf).
The kernels are numba-parallel; physics.field.engine decides how many threads they get.
"""
from __future__ import annotations

import math

import numba
import numpy as np

from trapscape.physics.field.engine import serial_twin

COINCIDENT_M = 1e-12
_INV_4PI = 1.0 / (4.0 * math.pi)
_FASTMATH = {"contract", "reassoc", "arcp"}
# Target-dipole pairs below which the sum runs on one thread: a parallel call costs a thread
# start and join (about 0.1 ms of CPU at 10 targets, 1 ms on a busy machine), more than the sum of
# a few thousand pairs; the same bound as physics/field/families.py. Both kernels give the same
# numbers (tests/physics/field/test_serial_kernels.py).
PARALLEL_MIN_WORK = 50_000


def direct_dipole_H(targets, positions, moments, gradient=False):
    """H of point dipoles at the targets by the direct sum, and optionally its gradient.

    Parameters
    ----------
    targets : array_like, shape (N, 3)
        Evaluation points, m.
    positions : array_like, shape (K, 3)
        Dipole positions, m.
    moments : array_like, shape (K, 3)
        Dipole moments, A m^2.
    gradient : bool
        Also return dH_i/dx_j.

    Returns
    -------
    H : numpy.ndarray, shape (N, 3)
        A/m; a source closer than COINCIDENT_M to a target is skipped for that target.
    G : numpy.ndarray, shape (N, 3, 3)
        Only with gradient=True: G[n, i, j] = dH_i/dx_j, A/m^2.

    Raises
    ------
    ValueError
        An argument that is not of shape (N, 3) (as_points).

    References
    ----------
    J. D. Jackson, Classical Electrodynamics, 3rd ed., eq. 5.56; the gradient derived here.
    """
    targets, positions, moments = as_points(targets), as_points(positions), as_points(moments)
    source_columns = tuple(np.ascontiguousarray(c) for c in (*positions.T, *moments.T))
    parallel = len(targets) * len(positions) >= PARALLEL_MIN_WORK
    if gradient:
        kernel = _direct_H_gradient_kernel if parallel else _direct_H_gradient_serial
        H, G6 = kernel(targets, *source_columns)
        return H, symmetric_from_six(G6)
    return (_direct_H_kernel if parallel else _direct_H_serial)(targets, *source_columns)


def as_points(a) -> np.ndarray:
    """An array of points or vectors as a C-contiguous float64 array of shape (N, 3).

    Parameters
    ----------
    a : array_like, shape (N, 3)
        Points or vectors, any unit (kept as it is).

    Returns
    -------
    numpy.ndarray, shape (N, 3)
        float64, C-contiguous (``a`` itself when it already is).

    Raises
    ------
    ValueError
        When ``a`` is not two-dimensional with three columns.
    """
    a = np.ascontiguousarray(a, dtype=np.float64)
    if a.ndim != 2 or a.shape[1] != 3:
        raise ValueError(f"expected an array of shape (N, 3), got {a.shape}")
    return a


def symmetric_from_six(G6: np.ndarray) -> np.ndarray:
    """The full symmetric 3 x 3 tensors from their six independent components.

    Parameters
    ----------
    G6 : numpy.ndarray, shape (N, 6)
        Components ordered xx, yy, zz, xy, xz, yz; any unit (A/m^2 for dH/dx).

    Returns
    -------
    numpy.ndarray, shape (N, 3, 3)
        The symmetric tensors, same unit.
    """
    index = np.array([[0, 3, 4], [3, 1, 5], [4, 5, 2]])
    return G6[:, index]


@numba.njit(cache=True, fastmath=_FASTMATH)
def _H_at(i, targets, px, py, pz, mx, my, mz, out):
    k = px.shape[0]
    threshold = COINCIDENT_M * COINCIDENT_M
    tx, ty, tz = targets[i, 0], targets[i, 1], targets[i, 2]
    hx = 0.0
    hy = 0.0
    hz = 0.0
    for s in range(k):
        rx = tx - px[s]
        ry = ty - py[s]
        rz = tz - pz[s]
        r2 = rx * rx + ry * ry + rz * rz
        inv_r2 = 1.0 / r2 if r2 >= threshold else 0.0
        inv_r3 = inv_r2 * math.sqrt(inv_r2)
        a = 3.0 * (mx[s] * rx + my[s] * ry + mz[s] * rz) * inv_r2
        hx += (a * rx - mx[s]) * inv_r3
        hy += (a * ry - my[s]) * inv_r3
        hz += (a * rz - mz[s]) * inv_r3
    out[i, 0] = hx * _INV_4PI
    out[i, 1] = hy * _INV_4PI
    out[i, 2] = hz * _INV_4PI


@numba.njit(parallel=True, cache=True, fastmath=_FASTMATH)
def _direct_H_kernel(targets, px, py, pz, mx, my, mz):
    out = np.empty((targets.shape[0], 3))
    for i in numba.prange(targets.shape[0]):
        _H_at(i, targets, px, py, pz, mx, my, mz, out)
    return out


_direct_H_serial = serial_twin(_direct_H_kernel)


@numba.njit(cache=True, fastmath=_FASTMATH)
def _H_gradient_at(i, targets, px, py, pz, mx, my, mz, H, G):
    k = px.shape[0]
    threshold = COINCIDENT_M * COINCIDENT_M
    tx, ty, tz = targets[i, 0], targets[i, 1], targets[i, 2]
    hx = 0.0
    hy = 0.0
    hz = 0.0
    gxx = 0.0
    gyy = 0.0
    gzz = 0.0
    gxy = 0.0
    gxz = 0.0
    gyz = 0.0
    for s in range(k):
        rx = tx - px[s]
        ry = ty - py[s]
        rz = tz - pz[s]
        r2 = rx * rx + ry * ry + rz * rz
        inv_r2 = 1.0 / r2 if r2 >= threshold else 0.0
        inv_r3 = inv_r2 * math.sqrt(inv_r2)
        inv_r5 = inv_r3 * inv_r2
        mr = mx[s] * rx + my[s] * ry + mz[s] * rz
        a = 3.0 * mr * inv_r2
        hx += (a * rx - mx[s]) * inv_r3
        hy += (a * ry - my[s]) * inv_r3
        hz += (a * rz - mz[s]) * inv_r3
        b = 5.0 * mr * inv_r2
        gxx += (2.0 * mx[s] * rx + mr - b * rx * rx) * inv_r5
        gyy += (2.0 * my[s] * ry + mr - b * ry * ry) * inv_r5
        gzz += (2.0 * mz[s] * rz + mr - b * rz * rz) * inv_r5
        gxy += (mx[s] * ry + my[s] * rx - b * rx * ry) * inv_r5
        gxz += (mx[s] * rz + mz[s] * rx - b * rx * rz) * inv_r5
        gyz += (my[s] * rz + mz[s] * ry - b * ry * rz) * inv_r5
    H[i, 0] = hx * _INV_4PI
    H[i, 1] = hy * _INV_4PI
    H[i, 2] = hz * _INV_4PI
    c = 3.0 * _INV_4PI
    G[i, 0] = gxx * c
    G[i, 1] = gyy * c
    G[i, 2] = gzz * c
    G[i, 3] = gxy * c
    G[i, 4] = gxz * c
    G[i, 5] = gyz * c


@numba.njit(parallel=True, cache=True, fastmath=_FASTMATH)
def _direct_H_gradient_kernel(targets, px, py, pz, mx, my, mz):
    H, G = np.empty((targets.shape[0], 3)), np.empty((targets.shape[0], 6))
    for i in numba.prange(targets.shape[0]):
        _H_gradient_at(i, targets, px, py, pz, mx, my, mz, H, G)
    return H, G


_direct_H_gradient_serial = serial_twin(_direct_H_gradient_kernel)
