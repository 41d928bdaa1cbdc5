"""numba's cache: the program keeps compiled kernels in a folder named by every source file that
holds kernels, so a kernel whose helper in another file changed is compiled afresh, never loaded
stale (numba itself checks only the kernel's own file)."""
from __future__ import annotations

import os
import re
import shutil
import subprocess
import sys
from pathlib import Path

from repo_paths import REPO

from trapscape.viewers.cli import KERNEL_SOURCES, kernel_cache_folder, use_kernel_cache

KERNEL = re.compile(r"^\s*@(numba\.)?(njit|jit|vectorize|guvectorize|stencil)\b", re.MULTILINE)


def test_every_file_with_a_kernel_is_in_the_digest():
    found = {str(p.relative_to(REPO)) for folder in ("scene", "physics", "viewers")
             for p in (REPO / folder).rglob("*.py") if KERNEL.search(p.read_text())}
    assert found == set(KERNEL_SOURCES)


def test_a_changed_helper_file_gives_another_folder_and_the_same_files_the_same(tmp_path):
    root = tmp_path / "root"
    for name in KERNEL_SOURCES:
        (root / name).parent.mkdir(parents=True, exist_ok=True)
        shutil.copy(REPO / name, root / name)
    first = kernel_cache_folder(root, tmp_path)
    assert kernel_cache_folder(root, tmp_path) == first
    helper = root / "physics/field/placed.py"  # inlined into the box and ring kernels
    helper.write_text(helper.read_text() + "\n# edited\n")
    assert kernel_cache_folder(root, tmp_path) != first
    assert first.parent == tmp_path / "trapscape" / "numba"


def test_the_program_sets_the_folder_and_keeps_a_users_choice(tmp_path):
    assert use_kernel_cache({"NUMBA_CACHE_DIR": "/mine"}) is None  # the user's choice stands
    env = {k: v for k, v in os.environ.items() if k != "NUMBA_CACHE_DIR"}
    env["XDG_CACHE_HOME"] = str(tmp_path)
    code = ("import os\nfrom trapscape.viewers import cli\ncli.use_kernel_cache()\n"
            "print(os.environ.get('NUMBA_CACHE_DIR'))")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          env=env, check=True)
    assert Path(done.stdout.strip()) == kernel_cache_folder(REPO, tmp_path)


def test_no_two_cached_kernels_share_a_cache_file():
    """numba names a cached kernel's files by module, name and first line, not by its options: two
    builds of one function (serial and parallel) would load each other's code."""
    import importlib

    import numba.core.registry

    names = {}
    for source in KERNEL_SOURCES:
        module = importlib.import_module("trapscape." + source[:-3].replace("/", "."))
        for value in vars(module).values():
            cache = getattr(value, "_cache", None)
            if isinstance(value, numba.core.registry.CPUDispatcher) and hasattr(cache, "_cache_file"):
                names.setdefault(cache._cache_file._index_path, set()).add(id(value))
    shared = {key for key, dispatchers in names.items() if len(dispatchers) > 1}
    assert not shared, f"kernels sharing a cache file: {sorted(shared)}"
