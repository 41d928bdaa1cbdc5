"""Every `trapscape` line of the README's shell blocks, run as written at a terminal (a
pseudo-terminal, where progress bars draw) from a folder holding the samples: exit 0, no
traceback. A reader copies these lines first."""
from __future__ import annotations

import re
import shlex

import pytest
from repo_paths import REPO, SAMPLES
from test_terminal import at_terminal

BLOCK = re.compile(r"^```sh\n(.*?)^```", re.S | re.M)


def readme_commands() -> list[str]:
    text = (REPO / "README.md").read_text()
    return [line.strip() for block in BLOCK.findall(text) for line in block.splitlines()
            if line.strip().startswith("trapscape ")]


def test_the_readme_shows_every_command():
    used = {line.split()[1] for line in readme_commands()}
    assert {"check", "traps", "field", "hold", "render", "export", "report"} <= used


@pytest.mark.parametrize("line", readme_commands())
def test_readme_line_runs_at_a_terminal(line, tmp_path):
    (tmp_path / "samples").symlink_to(SAMPLES, target_is_directory=True)
    code, screen = at_terminal(shlex.split(line)[1:], cwd=tmp_path)
    assert code == 0, screen
    assert "Traceback" not in screen
