"""How the field engine uses the machine.

Default (the command line): the numba kernels run on every core and the FMM shares its targets
out over forked processes. In-process mode is for a worker of a pool that owns the parallelism
(a batch of analyses): numba and BLAS get one thread and the FMM evaluates its shares one after
another in the calling process, so no worker starts children (a daemonic pool worker cannot)
and two workers on two cores do not ask for four. Numbers do not depend on the mode: the shares
and the direct/FMM choice are the same, only where they run changes.
"""
from __future__ import annotations

import multiprocessing
import os

import numba

# Libraries that start their thread pools later (in a child process, say) read these.
THREAD_VARIABLES = ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS",
                    "NUMBA_NUM_THREADS")

_in_process = False
_blas_limit = None


def in_process() -> bool:
    """True when this process runs the engine on one thread with no child processes."""
    return _in_process


def use_in_process(enabled: bool = True) -> None:
    """Switch in-process mode on (or back off) for this process.

    A pool worker calls it once, e.g. as ``ProcessPoolExecutor(initializer=use_in_process)``;
    physics.analysis.batch does it at the start of every job. numba's thread count is kept per
    calling thread, so it is set again on each call.
    """
    global _in_process, _blas_limit
    _in_process = bool(enabled)
    numba.set_num_threads(1 if enabled else numba.config.NUMBA_NUM_THREADS)
    if enabled:
        for name in THREAD_VARIABLES:
            os.environ[name] = "1"
        if _blas_limit is None:
            from threadpoolctl import threadpool_limits

            _blas_limit = threadpool_limits(limits=1)
    elif _blas_limit is not None:
        _blas_limit.restore_original_limits()
        _blas_limit = None


def may_start_processes() -> bool:
    """Whether the engine may start child processes here: not in in-process mode, and never in
    a daemonic process (a multiprocessing pool worker), which Python forbids to have children."""
    return not _in_process and not multiprocessing.current_process().daemon
