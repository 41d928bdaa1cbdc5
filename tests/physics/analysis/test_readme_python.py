"""The README's Python blocks run as written from a folder holding the samples (a reader pastes
them into a notebook)."""
from __future__ import annotations

import re
import subprocess
import sys

import pytest
from repo_paths import REPO, SAMPLES

BLOCK = re.compile(r"^```python\n(.*?)^```", re.S | re.M)


def python_blocks() -> list[str]:
    return BLOCK.findall((REPO / "README.md").read_text())


@pytest.mark.parametrize("code", python_blocks())
def test_readme_python_block_runs(code, tmp_path):
    (tmp_path / "samples").symlink_to(SAMPLES, target_is_directory=True)
    run = subprocess.run([sys.executable, "-c", code], cwd=tmp_path, capture_output=True,
                         text=True, timeout=600, check=False)
    assert run.returncode == 0, run.stderr
    assert run.stdout.strip(), "the block printed nothing"


def test_the_readme_has_a_python_block():
    assert python_blocks()
