"""When a child process may be forked from this one, and tying a forked child's life to its
parent. Imports neither numba nor the engine: the command line forks before it loads them."""
from __future__ import annotations

import ctypes
import os
import signal
import sys
import threading

PR_SET_PDEATHSIG = 1  # linux/prctl.h


def fork_is_safe() -> bool:
    """Whether a child forked now is safe: on Linux, with no other Python thread running (one
    could hold a lock the child needs), numba's threading layer not started or one that
    survives a fork (workqueue, TBB; GNU OpenMP kills a forked child on its first parallel
    kernel), and fmm3dpy (whose OpenMP threads do not survive one) not loaded.

    Returns
    -------
    bool
    """
    if not sys.platform.startswith("linux") or threading.active_count() > 1:
        return False
    layer = None
    if "numba" in sys.modules:  # (not imported: its threads cannot have started)
        try:
            layer = sys.modules["numba"].threading_layer()
        except ValueError:  # not started in this process
            layer = None
    return layer in (None, "workqueue", "tbb") and "fmm3dpy" not in sys.modules


def end_with(parent: int) -> None:
    """SIGTERM to this (forked) process when its parent ends (Linux prctl PR_SET_PDEATHSIG).

    Parameters
    ----------
    parent : int
        The pid of the process this one was forked from. (A child of a killed parent could
        otherwise wait for work for ever on a pipe a sibling still holds open.)
    """
    ctypes.CDLL(None).prctl(PR_SET_PDEATHSIG, signal.SIGTERM)
    if os.getppid() != parent:  # it ended before the line above
        os._exit(1)
