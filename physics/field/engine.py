"""How the field engine uses the machine.

Default (the command line): the numba kernels run on every core and the FMM shares its targets
out over forked processes. In-process mode is for a worker of a pool that owns the parallelism
(a batch of analyses): numba and BLAS get one thread and the FMM evaluates its shares one after
another in the calling process, so no worker starts children (a daemonic pool worker cannot)
and two workers on two cores do not ask for four. The kernels (each iteration the same compiled
code whatever the thread count), the FMM's shares and the direct/FMM choice do not depend on the
mode; OpenBLAS does: its results change in the last bits with its thread count (so do the
command line's, between machines of different core counts), so an in-process run matches
another in-process run exactly and a default run to rounding (1e-11 relative in a trap's
stiffness, measured 2026-12-02 on samples/level_gauge.toml). numba's default threading layer
(GNU OpenMP) cannot run a parallel kernel in a child forked after the parent ran one: start pool
workers from a fork server (physics.analysis.batch.process_pool) or spawn them.
"""
from __future__ import annotations

import contextlib
import multiprocessing
import threading
import types

import numba

_in_process = False
_blas_limit = None
_blocks = 0  # in_process_mode blocks running now
_switched_on_by_blocks = False  # (else it was on before them, by use_in_process)
_blocks_lock = threading.Lock()


def in_process() -> bool:
    """True when this process runs the engine on one thread with no child processes."""
    return _in_process


def use_in_process(enabled: bool = True) -> None:
    """Switch in-process mode on (or back off) for this process.

    A pool worker calls it once, e.g. as ``ProcessPoolExecutor(initializer=use_in_process)``;
    physics.analysis.batch does it at the start of every job.

    Parameters
    ----------
    enabled : bool
        True: numba and BLAS get one thread and the FMM starts no processes; False: numba gets
        NUMBA_NUM_THREADS threads and the BLAS limit set by an earlier call is lifted.
    """
    global _in_process, _blas_limit
    _in_process = bool(enabled)
    # numba keeps the thread count per calling thread: set again on every call
    numba.set_num_threads(1 if enabled else numba.config.NUMBA_NUM_THREADS)
    if enabled:
        if _blas_limit is None:
            import scipy.linalg  # noqa: F401  scipy's own OpenBLAS, loaded now so the limit covers it
            from threadpoolctl import threadpool_limits

            _blas_limit = threadpool_limits(limits=1, user_api="blas")
    elif _blas_limit is not None:
        _blas_limit.restore_original_limits()
        _blas_limit = None


@contextlib.contextmanager
def in_process_mode():
    """In-process mode for the block, then the mode as it was.

    Blocks may overlap in several threads of one process (a thread pool running batch jobs):
    the mode stays on until the last one ends. The numba thread count is restored per thread.
    """
    global _blocks, _switched_on_by_blocks
    threads = numba.get_num_threads()
    with _blocks_lock:
        if _blocks == 0:
            _switched_on_by_blocks = not _in_process
        _blocks += 1
        use_in_process(True)
    try:
        yield
    finally:
        with _blocks_lock:
            _blocks -= 1
            if _blocks == 0 and _switched_on_by_blocks:
                use_in_process(False)
        numba.set_num_threads(threads)


def serial_twin(kernel):
    """A parallel numba kernel's code compiled for one thread (prange runs as range), with its
    other options: for small calls, where starting the threads costs more than the work. It
    gets its own name, because numba's disk cache names a kernel's files by module, name and
    first line, not by its options: two builds under one name load each other's code
    (tests/viewers/test_kernel_cache.py).

    Parameters
    ----------
    kernel : numba dispatcher
        Compiled with parallel=True.

    Returns
    -------
    numba dispatcher
        The same numbers as the kernel (tests/physics/field/test_serial_kernels.py).
    """
    function = kernel.py_func
    copy = types.FunctionType(function.__code__, function.__globals__,
                              function.__name__ + "_serial", function.__defaults__,
                              function.__closure__)
    copy.__qualname__ = copy.__name__
    options = {k: v for k, v in kernel.targetoptions.items() if k not in ("parallel", "nopython")}
    return numba.njit(cache=True, **options)(copy)


@numba.njit(cache=True)
def _identity(x):
    return x


def load_compiler() -> None:
    """Load numba's typing and lowering registries now, in this process: the first compiled
    kernel a process calls, even from numba's cache, loads them (a third of a second on the
    development machine). Called before a pool forks its workers, so that each does not load
    them again; it starts no threads (the fork stays safe)."""
    _identity(0.0)


def may_start_processes() -> bool:
    """Whether the engine may start child processes here: not in in-process mode, and never in
    a daemonic process (a multiprocessing pool worker), which Python forbids to have children."""
    return not _in_process and not multiprocessing.current_process().daemon
