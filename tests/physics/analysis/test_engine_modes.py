"""The engine's in-process mode: no child processes, one numba and one BLAS thread, and the FMM
working inside a daemonic pool worker (which may not start children)."""
from __future__ import annotations

import multiprocessing

import numba
import numpy as np
import pytest

from trapscape.physics.field import engine, fmm

N_TARGETS = 3 * fmm.MIN_TARGETS_FOR_SPLIT  # enough for the targets to be shared out


def dipoles_and_targets():
    rng = np.random.default_rng(7)
    positions = rng.uniform(-1.0, 1.0, (400, 3))
    moments = rng.normal(size=(400, 3))
    targets = rng.uniform(-3.0, 3.0, (N_TARGETS, 3))
    return targets, positions, moments


def fmm_in_worker(_):
    targets, positions, moments = dipoles_and_targets()
    H, G = fmm.fmm_dipole_H(targets, positions, moments, gradient=True)
    from threadpoolctl import threadpool_info

    blas = [pool["num_threads"] for pool in threadpool_info() if pool["user_api"] == "blas"]
    return H, G, multiprocessing.current_process().daemon, numba.get_num_threads(), blas


def test_fmm_inside_a_daemonic_pool_worker_in_in_process_mode():
    assert fmm.split_count(N_TARGETS, 2) == 2
    # forkserver: a child forked from this process (which has run OpenMP kernels) would hang
    context = multiprocessing.get_context("forkserver")
    with context.Pool(2, initializer=engine.use_in_process) as pool:
        H, G, daemonic, threads, blas = pool.map(fmm_in_worker, [0])[0]
    assert daemonic and threads == 1 and set(blas) <= {1}
    targets, positions, moments = dipoles_and_targets()
    H_here, G_here = fmm.fmm_dipole_H(targets, positions, moments, gradient=True)
    # the same shares, run one after another in the worker: the very same numbers
    np.testing.assert_array_equal(H, H_here)
    np.testing.assert_array_equal(G, G_here)


def test_in_process_mode_starts_no_process_and_is_restored(monkeypatch):
    targets, positions, moments = dipoles_and_targets()
    expected = fmm.fmm_dipole_H(targets, positions, moments)
    before = numba.get_num_threads()

    def no_processes(*args, **kwargs):
        raise AssertionError("in-process mode started a process")

    with engine.in_process_mode():
        assert engine.in_process() and numba.get_num_threads() == 1
        monkeypatch.setattr(multiprocessing, "get_context", no_processes)
        H = fmm.fmm_dipole_H(targets, positions, moments)
        monkeypatch.undo()
    np.testing.assert_array_equal(H, expected)
    assert not engine.in_process() and numba.get_num_threads() == before


def test_the_default_mode_still_shares_the_targets_out(monkeypatch):
    started = []
    real = fmm._fmm_in_forked_children

    def counting(*args):
        started.append(len(args[-1]))
        return real(*args)

    monkeypatch.setattr(fmm, "_fmm_in_forked_children", counting)
    targets, positions, moments = dipoles_and_targets()
    fmm.fmm_dipole_H(targets, positions, moments)
    assert started == [2] if fmm.START_METHOD == "fork" else pytest.skip("fork only")
