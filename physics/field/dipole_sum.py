"""Field of a set of point dipoles at many targets: direct numba sum, FMM, or plain numpy.

H(x) = sum_k (3 (m_k . r) r / r^5 - m_k / r^3) / (4 pi),  r = x - x_k
(J. D. Jackson, Classical Electrodynamics, 3rd ed., eq. 5.56, with B = mu0 H outside the sources).
dH_i/dx_j = 3 [(m_i r_j + m_j r_i + (m . r) delta_ij) / r^5 - 5 (m . r) r_i r_j / r^7] / (4 pi)
(derived here by differentiating the line above; symmetric since curl H = 0 off the sources).
Positions and targets in m, moments in A m^2, H in A/m, gradients in A/m^2.
A target closer than COINCIDENT_M to a source skips that source (no NaN, no inf).
"""
from __future__ import annotations

import math

import numba
import numpy as np

COINCIDENT_M = 1e-12
_INV_4PI = 1.0 / (4.0 * math.pi)

# Cost model for method="auto", measured on this machine (2 cores, other jobs running, so from
# CPU time) on 2026-12-01 with `benchmarks/dipole_sum_speed.py --constants`, on 1, 4 and 12 cubes
# of 15^3 dipoles and 2e3..1.5e5 targets.
# Direct numba kernel: seconds per target-source pair, both cores.
DIRECT_S_PER_PAIR = 7.2e-10
DIRECT_GRADIENT_S_PER_PAIR = 9.5e-10
# FMM, one process (fmm3dpy is single-threaded): seconds per source (every process pays it) and
# per target (shared out over the processes), for H and for H with its gradient, at three eps;
# least-squares fits that miss single runs by up to 25% (55-80% at eps = 1e-3, short runs).
FMM_OVERHEAD_S = 0.1
FMM_COSTS = {  # eps: (per source, per target for H, per target for H and dH/dx)
    1e-3: (2.1e-5, 2.6e-6, 7.5e-6),
    1e-6: (6.4e-5, 6.8e-6, 2.8e-5),
    1e-9: (1.75e-4, 1.36e-5, 6.5e-5),
}


def dipole_H(targets, positions, moments, gradient=False, method="auto", eps=1e-6):
    """H (N, 3) of the dipoles at the targets, and with gradient=True also (N, 3, 3) = dH_i/dx_j.

    method: "direct" (numba, exact to rounding), "fmm" (fmm3dpy to tolerance eps, relative to the
    field scale of the whole set; see physics/fmm.py for what that means at weak-field targets),
    or "auto" (whichever the cost model above says is cheaper).
    """
    targets, positions, moments = _as_points(targets), _as_points(positions), _as_points(moments)
    if method == "auto":
        method = choose_method(len(targets), len(positions), gradient, eps)
    if method == "direct":
        return _direct(targets, positions, moments, gradient)
    if method == "fmm":
        from trapscape.physics.field.fmm import fmm_dipole_H

        return fmm_dipole_H(targets, positions, moments, gradient=gradient, eps=eps)
    raise ValueError(f"dipole_H: unknown method {method!r}; use 'auto', 'direct' or 'fmm'")


def choose_method(n_targets: int, n_sources: int, gradient: bool = False, eps: float = 1e-6) -> str:
    """'direct' or 'fmm', whichever the measured cost model says finishes first."""
    return "direct" if direct_cost_s(n_targets, n_sources, gradient) <= fmm_cost_s(
        n_targets, n_sources, gradient, eps) else "fmm"


def direct_cost_s(n_targets: int, n_sources: int, gradient: bool = False) -> float:
    per_pair = DIRECT_GRADIENT_S_PER_PAIR if gradient else DIRECT_S_PER_PAIR
    return float(n_targets) * float(n_sources) * per_pair


def fmm_cost_s(n_targets: int, n_sources: int, gradient: bool = False, eps: float = 1e-6,
               processes: int = 2) -> float:
    """Wall seconds of physics.field.fmm.fmm_dipole_H: FMM_COSTS interpolated in log(eps), log(cost)."""
    from trapscape.physics.field.fmm import split_count

    levels = sorted(FMM_COSTS)
    x = np.log10(levels)
    column = 2 if gradient else 1
    per_source, per_target = (
        10 ** np.interp(math.log10(eps), x, np.log10([FMM_COSTS[e][c] for e in levels]))
        for c in (0, column))
    shares = split_count(n_targets, processes)
    return FMM_OVERHEAD_S + n_sources * per_source + n_targets * per_target / shares


def dipole_H_numpy(targets, positions, moments, chunk_pairs: int = 250_000):
    """Plain numpy broadcast sum, the reference the benchmark compares to (chunked over targets
    so that at most chunk_pairs target-source pairs are held in memory at once)."""
    targets, positions, moments = _as_points(targets), _as_points(positions), _as_points(moments)
    H = np.zeros_like(targets)
    step = max(1, chunk_pairs // max(1, len(positions)))
    for start in range(0, len(targets), step):
        r = targets[start:start + step, None, :] - positions[None, :, :]
        r2 = np.einsum("nki,nki->nk", r, r)
        far = r2 >= COINCIDENT_M**2
        inv_r2 = np.divide(1.0, r2, out=np.zeros_like(r2), where=far)
        inv_r3 = inv_r2 * np.sqrt(inv_r2)
        m_dot_r = np.einsum("nki,ki->nk", r, moments)
        terms = (3.0 * (m_dot_r * inv_r2)[..., None] * r - moments[None]) * inv_r3[..., None]
        H[start:start + step] = terms.sum(axis=1) * _INV_4PI
    return H


def _as_points(a) -> np.ndarray:
    a = np.ascontiguousarray(a, dtype=np.float64)
    if a.ndim != 2 or a.shape[1] != 3:
        raise ValueError(f"expected an array of shape (N, 3), got {a.shape}")
    return a


def _direct(targets, positions, moments, gradient):
    source_columns = tuple(np.ascontiguousarray(c) for c in (*positions.T, *moments.T))
    if gradient:
        H, G6 = _direct_H_gradient_kernel(targets, *source_columns)
        return H, symmetric_from_six(G6)
    return _direct_H_kernel(targets, *source_columns)


def symmetric_from_six(G6: np.ndarray) -> np.ndarray:
    """(N, 6) ordered xx, yy, zz, xy, xz, yz -> (N, 3, 3)."""
    index = np.array([[0, 3, 4], [3, 1, 5], [4, 5, 2]])
    return G6[:, index]


@numba.njit(parallel=True, cache=True, fastmath={"contract", "reassoc", "arcp"})
def _direct_H_kernel(targets, px, py, pz, mx, my, mz):
    n = targets.shape[0]
    k = px.shape[0]
    out = np.empty((n, 3))
    threshold = COINCIDENT_M * COINCIDENT_M
    for i in numba.prange(n):
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
    return out


@numba.njit(parallel=True, cache=True, fastmath={"contract", "reassoc", "arcp"})
def _direct_H_gradient_kernel(targets, px, py, pz, mx, my, mz):
    n = targets.shape[0]
    k = px.shape[0]
    H = np.empty((n, 3))
    G = np.empty((n, 6))
    threshold = COINCIDENT_M * COINCIDENT_M
    for i in numba.prange(n):
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
    return H, G
