"""Field of a set of point dipoles at many targets: the direct numba sum or the FMM, whichever
the measured cost model says is cheaper, and a plain numpy sum as the benchmarks' reference.

The direct sum lives in physics.field.dipole_direct, the FMM in physics.field.fmm (which uses the
direct sum for coincident targets); this module only chooses, so the imports run one way.
"""
from __future__ import annotations

import math
from functools import lru_cache

import numpy as np

from trapscape.physics.field.dipole_direct import (_INV_4PI, COINCIDENT_M, as_points,
                                                   direct_dipole_H)
from trapscape.physics.field.fmm import fmm_dipole_H, split_count

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
    """H of point dipoles at the targets, and optionally its gradient, by the cheaper method.

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
    method : {"auto", "direct", "fmm"}
        "direct" (numba, exact to rounding), "fmm" (fmm3dpy to tolerance eps, relative to the
        field scale of the whole set; see physics/field/fmm.py for what that means at weak-field
        targets), or "auto" (whichever the cost model above says is cheaper).
    eps : float
        The FMM's requested relative precision (dimensionless).

    Returns
    -------
    H : numpy.ndarray, shape (N, 3)
        A/m.
    G : numpy.ndarray, shape (N, 3, 3)
        Only with gradient=True: G[n, i, j] = dH_i/dx_j, A/m^2.

    Raises
    ------
    ValueError
        An unknown method, or an argument that is not of shape (N, 3).

    References
    ----------
    J. D. Jackson, Classical Electrodynamics, 3rd ed., eq. 5.56 (the direct sum);
    L. Greengard and V. Rokhlin, J. Comput. Phys. 73, 325 (1987) (the FMM).
    """
    targets, positions, moments = as_points(targets), as_points(positions), as_points(moments)
    if method == "auto":
        method = choose_method(len(targets), len(positions), gradient, eps)
    if method == "direct":
        return direct_dipole_H(targets, positions, moments, gradient)
    if method == "fmm":
        return fmm_dipole_H(targets, positions, moments, gradient=gradient, eps=eps)
    raise ValueError(f"dipole_H: unknown method {method!r}; use 'auto', 'direct' or 'fmm'")


@lru_cache(maxsize=4096)  # a trap search asks for the same sizes thousands of times
def choose_method(n_targets: int, n_sources: int, gradient: bool = False, eps: float = 1e-6) -> str:
    """'direct' or 'fmm', whichever the measured cost model says finishes first.

    The estimate is for the command line's setting (both cores). Deliberately the same in the
    engine's in-process mode, so a batch worker gets the very numbers the command line gives.

    Parameters
    ----------
    n_targets : int
        Number of targets N.
    n_sources : int
        Number of dipoles K.
    gradient : bool
        Whether dH/dx is wanted too.
    eps : float
        The FMM's requested relative precision (dimensionless).

    Returns
    -------
    str
        "direct" or "fmm".
    """
    return "direct" if direct_cost_s(n_targets, n_sources, gradient) <= fmm_cost_s(
        n_targets, n_sources, gradient, eps) else "fmm"


def direct_cost_s(n_targets: int, n_sources: int, gradient: bool = False) -> float:
    """Estimated seconds of the direct numba sum on both cores (DIRECT_S_PER_PAIR per pair).

    Parameters
    ----------
    n_targets : int
        Number of targets N.
    n_sources : int
        Number of dipoles K.
    gradient : bool
        Whether dH/dx is computed too (DIRECT_GRADIENT_S_PER_PAIR per pair).

    Returns
    -------
    float
        Seconds.
    """
    per_pair = DIRECT_GRADIENT_S_PER_PAIR if gradient else DIRECT_S_PER_PAIR
    return float(n_targets) * float(n_sources) * per_pair


def fmm_cost_s(n_targets: int, n_sources: int, gradient: bool = False, eps: float = 1e-6,
               processes: int = 2) -> float:
    """Wall seconds of fmm.fmm_dipole_H: FMM_COSTS interpolated in log(eps), log(cost).

    Parameters
    ----------
    n_targets : int
        Number of targets N.
    n_sources : int
        Number of dipoles K.
    gradient : bool
        Whether dH/dx is computed too.
    eps : float
        The FMM's requested relative precision (dimensionless).
    processes : int
        Processes the targets may be shared out over (fmm.split_count decides how many are used).

    Returns
    -------
    float
        Seconds: FMM_OVERHEAD_S, plus the per-source cost, plus the per-target cost divided by the
        number of shares.
    """
    levels = sorted(FMM_COSTS)
    x = np.log10(levels)
    column = 2 if gradient else 1
    per_source, per_target = (
        10 ** np.interp(math.log10(eps), x, np.log10([FMM_COSTS[e][c] for e in levels]))
        for c in (0, column))
    shares = split_count(n_targets, processes)
    return FMM_OVERHEAD_S + n_sources * per_source + n_targets * per_target / shares


def dipole_H_numpy(targets, positions, moments, chunk_pairs: int = 250_000):
    """H of point dipoles by a plain numpy broadcast sum, the reference the benchmark compares to.

    The sum is chunked over targets so that at most chunk_pairs target-source pairs are held in
    memory at once.

    Parameters
    ----------
    targets : array_like, shape (N, 3)
        Evaluation points, m.
    positions : array_like, shape (K, 3)
        Dipole positions, m.
    moments : array_like, shape (K, 3)
        Dipole moments, A m^2.
    chunk_pairs : int
        Largest number of target-source pairs held at once.

    Returns
    -------
    numpy.ndarray, shape (N, 3)
        H, A/m; a source closer than COINCIDENT_M to a target is skipped for that target.

    Raises
    ------
    ValueError
        An argument that is not of shape (N, 3).

    References
    ----------
    J. D. Jackson, Classical Electrodynamics, 3rd ed., eq. 5.56.
    """
    targets, positions, moments = as_points(targets), as_points(positions), as_points(moments)
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


