"""Every `trapscape` line of the README's shell blocks, run as written at a terminal (a
pseudo-terminal, where progress bars draw) from a folder holding the samples: exit 0, no
traceback. A reader copies these lines first."""
from __future__ import annotations

import re
import shlex
import subprocess
import sys

import pytest
from repo_paths import REPO, SAMPLES
from test_terminal import at_terminal

BLOCK = re.compile(r"^```sh\n(.*?)^```", re.S | re.M)


def _joined(block: str) -> list[str]:
    """The block's command lines, a line ending in a backslash joined to the next."""
    return [line.strip() for line in re.sub(r"\\\n\s*", " ", block).splitlines()
            if line.strip()]


def readme_commands() -> list[str]:
    text = (REPO / "README.md").read_text()
    return [line for block in BLOCK.findall(text) for line in _joined(block)
            if line.startswith("trapscape ")]


def setup_lines(line: str) -> list[str]:
    """The sample scripts the line's block runs before it (`python samples/...`)."""
    for block in BLOCK.findall((REPO / "README.md").read_text()):
        lines = _joined(block)
        if line in lines:
            return [s for s in lines[:lines.index(line)] if s.startswith("python samples/")]
    return []


def test_the_readme_shows_every_command():
    used = {line.split()[1] for line in readme_commands()}
    assert {"check", "traps", "field", "hold", "render", "export", "report"} <= used


@pytest.mark.parametrize("line", readme_commands())
def test_readme_line_runs_at_a_terminal(line, tmp_path):
    (tmp_path / "samples").symlink_to(SAMPLES, target_is_directory=True)
    for setup in setup_lines(line):
        words = shlex.split(setup.split("#")[0])
        subprocess.run([sys.executable, str(REPO / words[1]), *words[2:]], cwd=tmp_path,
                       check=True, capture_output=True, timeout=300)
    code, screen = at_terminal(shlex.split(line)[1:], cwd=tmp_path)
    assert code == 0, screen
    assert "Traceback" not in screen
