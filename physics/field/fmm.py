"""Dipole fields by the fast multipole method (Greengard & Rokhlin, J. Comput. Phys. 73, 325 (1987)),
through fmm3dpy's Laplace FMM.

fmm3dpy's dipole potential is u(x) = sum_k m_k . (x - x_k) / (4 pi |x - x_k|^3) (the 1/(4 pi) is
included), so H = -grad u and dH_i/dx_j = -d2u/dx_i dx_j; its Hessian rows come ordered
xx, yy, zz, xy, xz, yz (fmm3dpy 2.1.0, checked by fmm_self_test against the direct sum, since
these conventions have changed between versions).
The wheel runs on one core: the targets are split over `processes` processes, each evaluating all
sources at its share of the targets (the calling process takes the first share). In the engine's
in-process mode (physics.field.engine) the same shares run one after another in the calling
process, so the numbers are the same in both modes.

Accuracy (measured 2026-12-01, 12 cubes of 15^3 dipoles, errors relative to the local field scale
of DESIGN.md): eps = 1e-4, 1e-5 and 1e-6 all give up to 8e-4 at weak-field targets 20-35 mm from
the dipoles (99% of targets below 8e-5); eps = 1e-7 gives 5e-7 at 1.8 times the time (1.65 times
with the gradient), eps = 1e-8 gives 2e-7 at 2.2 times.
"""
from __future__ import annotations

import concurrent.futures
import mmap
import multiprocessing
import sys

import numpy as np

from trapscape.physics.field import engine
from trapscape.physics.field.dipole_direct import COINCIDENT_M, direct_dipole_H, symmetric_from_six

# Each process gets at least this many targets: forking a worker costs 4-11 ms here (measured
# 2026-12-01), and an FMM target costs 2.6-65 us (physics.field.dipole_sum.FMM_COSTS), so a share of
# 5,000 targets saves more than the fork costs.
MIN_TARGETS_FOR_SPLIT = 5_000
# "fork" starts a worker in milliseconds and inherits the loaded modules; "spawn" re-imports
# numpy and fmm3dpy in the worker (measured on 2026-12-01: see the benchmark).
START_METHOD = "fork" if sys.platform.startswith("linux") else "spawn"
SELF_TEST_TOLERANCE = 1e-6

_self_tested = False
_executor: concurrent.futures.ProcessPoolExecutor | None = None
_executor_workers = 0


def fmm_dipole_H(targets, positions, moments, gradient=False, eps=1e-6, processes=2):
    """H of the point dipoles at the targets by the FMM, and optionally dH_i/dx_j.

    Targets within about 2e-12 m of a dipole are redone by the direct sum, which skips sources
    closer than COINCIDENT_M. The first call runs fmm_self_test.

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
    eps : float
        fmm3dpy's requested relative precision (relative to the field scale of the whole set, so
        weak-field targets carry a larger relative error; see the module docstring).
    processes : int
        Largest number of shares of the targets (split_count); they run in forked processes, or
        one after another here in the engine's in-process mode or a daemonic process.

    Returns
    -------
    H : numpy.ndarray, shape (N, 3)
        A/m.
    G : numpy.ndarray, shape (N, 3, 3)
        Only with gradient=True: G[n, i, j] = dH_i/dx_j, A/m^2.

    Raises
    ------
    RuntimeError
        From fmm_self_test, when fmm3dpy's conventions differ from the direct sum's.

    References
    ----------
    L. Greengard and V. Rokhlin, J. Comput. Phys. 73, 325 (1987), through fmm3dpy.
    """
    targets = np.ascontiguousarray(targets, dtype=np.float64).reshape(-1, 3)
    positions = np.ascontiguousarray(positions, dtype=np.float64).reshape(-1, 3)
    moments = np.ascontiguousarray(moments, dtype=np.float64).reshape(-1, 3)
    if len(targets) == 0 or len(positions) == 0:
        H = np.zeros((len(targets), 3))
        return (H, np.zeros((len(targets), 3, 3))) if gradient else H
    _ensure_self_test()
    shares = _split(len(targets), processes)
    if len(shares) == 1:
        H, G6 = _fmm_share(targets, positions, moments, gradient, eps)
    elif not engine.may_start_processes():
        H, G6 = _fmm_shares_here(targets, positions, moments, gradient, eps, shares)
    else:
        H, G6 = _fmm_in_processes(targets, positions, moments, gradient, eps, shares)
    G = symmetric_from_six(G6) if gradient else None
    _redo_coincident_targets_directly(targets, positions, moments, H, G)
    return (H, G) if gradient else H


def _redo_coincident_targets_directly(targets, positions, moments, H, G) -> None:
    """fmm3dpy drops a source only when a target sits on it to rounding; one 1e-13 m away gives
    ~1e38 A/m. Targets whose field is that large (|H| >= |m| / (4 pi (2 COINCIDENT_M)^3) for the
    weakest dipole, reached only within about 2e-12 m of one) are redone by the direct sum, which
    skips sources closer than COINCIDENT_M, as dipole_H promises."""
    strengths = np.linalg.norm(moments, axis=1)
    if not strengths.any():
        return
    weakest = strengths[strengths > 0].min()
    bound = weakest / (4.0 * np.pi * (2.0 * COINCIDENT_M) ** 3)
    suspect = ~np.isfinite(H).all(axis=1) | (np.linalg.norm(H, axis=1) >= bound)
    if not suspect.any():
        return
    redo = direct_dipole_H(targets[suspect], positions, moments, gradient=G is not None)
    if G is None:
        H[suspect] = redo
    else:
        H[suspect], G[suspect] = redo


def fmm_self_test() -> None:
    """Raise RuntimeError if fmm3dpy's sign, 1/(4 pi) or Hessian ordering differ from ours."""
    rng = np.random.default_rng(12345)
    positions = rng.uniform(-1.0, 1.0, (300, 3))
    moments = rng.normal(size=(300, 3))
    targets = rng.uniform(-3.0, 3.0, (200, 3))
    H_fmm, G6 = _fmm_share(targets, positions, moments, True, 1e-12)
    H_ref, G_ref = direct_dipole_H(targets, positions, moments, gradient=True)
    error_H = np.abs(H_fmm - H_ref).max() / np.abs(H_ref).max()
    error_G = np.abs(symmetric_from_six(G6) - G_ref).max() / np.abs(G_ref).max()
    if not (error_H < SELF_TEST_TOLERANCE and error_G < SELF_TEST_TOLERANCE):
        raise RuntimeError(
            f"fmm3dpy's conventions differ from the direct dipole sum (relative error {error_H:.1e} "
            f"in H, {error_G:.1e} in dH/dx); check physics/fmm.py against this fmm3dpy version")


def _ensure_self_test() -> None:
    global _self_tested
    if not _self_tested:
        fmm_self_test()
        _self_tested = True


def split_count(n_targets: int, processes: int) -> int:
    """How many processes share n_targets: each gets at least MIN_TARGETS_FOR_SPLIT.

    Parameters
    ----------
    n_targets : int
        Number of targets.
    processes : int
        Largest number of processes.

    Returns
    -------
    int
        Between 1 and ``processes``.
    """
    return max(1, min(int(processes), n_targets // MIN_TARGETS_FOR_SPLIT))


def _split(n_targets: int, processes: int) -> list[tuple[int, int]]:
    edges = np.linspace(0, n_targets, split_count(n_targets, processes) + 1).astype(int)
    return list(zip(edges[:-1], edges[1:]))


def _fmm_shares_here(targets, positions, moments, gradient, eps, shares):
    """Every share in this process, one after another (in-process mode)."""
    results = [_fmm_share(targets[a:b], positions, moments, gradient, eps) for a, b in shares]
    H = np.concatenate([r[0] for r in results])
    G6 = np.concatenate([r[1] for r in results]) if gradient else None
    return H, G6


def _fmm_in_processes(targets, positions, moments, gradient, eps, shares):
    if START_METHOD == "fork":
        return _fmm_in_forked_children(targets, positions, moments, gradient, eps, shares)
    return _fmm_in_pool(targets, positions, moments, gradient, eps, shares)


def _fmm_in_forked_children(targets, positions, moments, gradient, eps, shares):
    """Children forked for this call inherit the inputs and write into shared memory, so nothing
    is pickled. (A pool would not do: fmm3dpy holds the GIL, so while this process runs its own
    share, a pool's feeder thread could not even send the other shares out.)"""
    n = len(targets)
    H = _shared_array((n, 3))
    G6 = _shared_array((n, 6)) if gradient else None
    context = multiprocessing.get_context("fork")
    children = [context.Process(target=_fmm_share_into, args=(targets, positions, moments,
                                                              gradient, eps, a, b, H, G6))
                for a, b in shares[1:]]
    for child in children:
        child.start()
    a, b = shares[0]
    _fmm_share_into(targets, positions, moments, gradient, eps, a, b, H, G6)
    for child in children:
        child.join()
    if any(child.exitcode != 0 for child in children):
        raise RuntimeError("a worker process of the fast multipole method failed; "
                           "rerun with processes=1 to see its error")
    return np.array(H), (np.array(G6) if gradient else None)


def _shared_array(shape) -> np.ndarray:
    """A float64 array in anonymous shared memory (MAP_SHARED), visible to forked children."""
    size = int(np.prod(shape)) * 8
    buffer = mmap.mmap(-1, max(size, 8))
    return np.frombuffer(buffer, dtype=np.float64, count=int(np.prod(shape))).reshape(shape)


def _fmm_share_into(targets, positions, moments, gradient, eps, a, b, H, G6):
    H_share, G6_share = _fmm_share(targets[a:b], positions, moments, gradient, eps)
    H[a:b] = H_share
    if gradient:
        G6[a:b] = G6_share


def _fmm_in_pool(targets, positions, moments, gradient, eps, shares):
    """Every share goes to a pool worker and this process only waits (see the fork variant)."""
    executor = _get_executor(len(shares))
    futures = [executor.submit(_fmm_share, targets[a:b], positions, moments, gradient, eps)
               for a, b in shares]
    results = [f.result() for f in futures]
    H = np.concatenate([r[0] for r in results])
    G6 = np.concatenate([r[1] for r in results]) if gradient else None
    return H, G6


def _get_executor(workers: int) -> concurrent.futures.ProcessPoolExecutor:
    global _executor, _executor_workers
    if _executor is None or _executor_workers != workers:
        if _executor is not None:
            _executor.shutdown(wait=True)
        context = multiprocessing.get_context(START_METHOD)
        _executor = concurrent.futures.ProcessPoolExecutor(max_workers=workers, mp_context=context)
        _executor_workers = workers
    return _executor


def _fmm_share(targets, positions, moments, gradient, eps):
    """One process's work: all sources at these targets. Returns H (n, 3) and, with gradient,
    dH/dx as (n, 6) in fmm3dpy's order xx, yy, zz, xy, xz, yz (else None)."""
    import fmm3dpy

    out = fmm3dpy.lfmm3d(
        eps=eps,
        sources=np.asfortranarray(positions.T),
        dipvec=np.asfortranarray(moments.T),
        targets=np.asfortranarray(targets.T),
        pgt=3 if gradient else 2,
    )
    H = -np.asarray(out.gradtarg).reshape(3, -1).T
    G6 = -np.asarray(out.hesstarg).reshape(6, -1).T if gradient else None
    return np.ascontiguousarray(H), (np.ascontiguousarray(G6) if gradient else None)
