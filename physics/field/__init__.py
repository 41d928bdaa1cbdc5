"""Field sources, kernels and the field model (see DESIGN.md, Data flow)."""
import os

import numba

# numba's default on Linux is GNU OpenMP, which kills a forked child that runs a parallel kernel
# ("fork() called from a process already using GNU OpenMP"): a process pool forked from the
# command line, a test run or a notebook would break. "forksafe" takes TBB if installed, else
# numba's own workqueue (measured as fast here on the dipole kernel, 2026-12-02). It must be set
# before the first parallel kernel runs, hence here; NUMBA_THREADING_LAYER still wins.
if "NUMBA_THREADING_LAYER" not in os.environ:
    numba.config.THREADING_LAYER = "forksafe"
