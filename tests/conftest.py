"""tests/ itself is on sys.path (pytest puts a conftest's folder there), so the shared helpers
(scene_factory, forces_factory, golden_outputs, repo_paths) import by name from any test folder."""

import os

# No numpy warning may reach a user: every RuntimeWarning (overflow, division by zero, invalid
# value) fails the test that raised it, here (pyproject's filterwarnings) and in every command
# a test starts as a subprocess.
os.environ["PYTHONWARNINGS"] = "error::RuntimeWarning"

import tempfile

# Equivalent-dipole fits are cached on disk (physics.field.fit_cache): the tests keep theirs in a
# folder of their own, never in the user's cache.
os.environ["TRAPSCAPE_CACHE"] = tempfile.mkdtemp(prefix="trapscape-test-cache-")

# numba's compiled kernels: in the folder the program uses (viewers.cli.use_kernel_cache, named by
# the kernels' sources, so never stale), set before numba starts; the commands the tests start
# inherit it and share the kernels.
from trapscape.viewers.cli import use_kernel_cache

use_kernel_cache()
