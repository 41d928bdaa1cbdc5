"""Every command as a person runs it: at a terminal (stdout and stderr on a pseudo-terminal, where
progress bars draw), in a pipe, and with a broken input. Tests that never had a terminal missed a
crash that only progress output at a terminal could show."""
from __future__ import annotations

import os
import pty
import re
import subprocess
import sys
import time
from pathlib import Path

import pytest
from repo_paths import SAMPLES  # noqa: E402

CLI = [sys.executable, "-m", "trapscape.viewers.cli"]


def at_terminal(args, cwd, timeout=300, sized=True):
    """Run the CLI with stdout and stderr on a pseudo-terminal; return (exit code, screen text).
    With sized=False the terminal reports 0 columns and no COLUMNS is set (a new
    pseudo-terminal, as `script` or a container gives)."""
    leader, follower = pty.openpty()
    env = {**os.environ, "COLUMNS": "120", "LINES": "40", "TERM": "xterm"}
    if not sized:
        env = {k: v for k, v in env.items() if k not in ("COLUMNS", "LINES")}
    process = subprocess.Popen([*CLI, *args], stdin=subprocess.DEVNULL, stdout=follower,
                               stderr=follower, cwd=cwd, env=env, close_fds=True)
    os.close(follower)
    chunks, deadline = [], time.monotonic() + timeout
    while time.monotonic() < deadline:
        try:
            data = os.read(leader, 65536)
        except OSError:  # the pty is closed once the process and its children have gone
            break
        if not data:
            break
        chunks.append(data)
    os.close(leader)
    code = process.wait(timeout=max(1.0, deadline - time.monotonic()))
    return code, b"".join(chunks).decode("utf-8", "replace")


def in_pipe(args, cwd, timeout=300):
    done = subprocess.run([*CLI, *args], stdin=subprocess.DEVNULL, capture_output=True, text=True,
                          cwd=cwd, timeout=timeout)
    return done.returncode, done.stdout, done.stderr


def _commands(tmp):
    sample = str(SAMPLES / "bead_chip.toml")
    plate = str(SAMPLES / "holding_plate.toml")
    return {
        "check": ["check", sample],
        "traps": ["traps", sample, "-o", str(tmp / "traps.json")],
        "field": ["field", sample, "--section", "z=0", "--resolution", "24",
                  "-o", str(tmp / "plane.csv"), "--plot", str(tmp / "plane.png")],
        "hold": ["hold", plate, "--gap", "0..2@3"],
        "render": ["render", sample, "-o", str(tmp / "view.png"), "--size", "320x240",
                   "--resolution", "24"],
        "export": ["export", sample, "-o", str(tmp / "grid.vti"), "--resolution", "16"],
        "report": ["report", sample, "-o", str(tmp / "report"), "--size", "320x240",
                   "--resolution", "16", "--no-3d"],
        "demo": ["demo", "-o", str(tmp / "demo"), "--size", "320x240"],
    }


COMMANDS = list(_commands(Path(".")))


@pytest.mark.parametrize("command", COMMANDS)
def test_command_at_a_terminal(command, tmp_path):
    code, screen = at_terminal(_commands(tmp_path)[command], cwd=tmp_path)
    assert "Traceback" not in screen, screen[-2000:]
    assert code == 0, screen[-2000:]


def test_progress_bar_draws_at_a_terminal_of_no_width(tmp_path):
    """At a pseudo-terminal that reports 0 x 0 the bar drew nothing at all (tqdm hid it below a
    screen of 0 rows): a long run looked hung. It now takes 80 x 24 there."""
    code, screen = at_terminal(_commands(tmp_path)["traps"], cwd=tmp_path, sized=False)
    assert code == 0, screen[-2000:]
    assert re.search(r"\d+/\d+ \[", screen), screen[:2000]  # a frame "12/40 [00:01<..."


def test_traps_at_a_terminal_names_each_stage_after_the_scan(tmp_path):
    """The scan's bar ended at 2 s of a 28 s run on a large board and nothing moved after it:
    each later stage now shows its name and the time so far."""
    code, screen = at_terminal(_commands(tmp_path)["traps"], cwd=tmp_path)
    assert code == 0, screen[-2000:]
    where = [screen.find(f"{stage}: ") for stage in ("scan", "equilibria", "finite size", "escapes")]
    assert min(where) >= 0 and where == sorted(where), screen[:3000]  # each shown, in order
    assert re.search(r"finite size: working, \d\d:\d\d", screen), screen[:3000]


def test_stages_reach_a_progress_callback_in_order():
    from trapscape.physics.analysis.run import load_analysis

    seen = []
    load_analysis(str(SAMPLES / "bead_chip.toml")).traps(
        progress=lambda done, total, stage=None: seen.append((done is None, stage)))
    later = [stage for counted, stage in seen if counted]
    assert later == ["equilibria", "finite size", "escapes"]
    assert seen[0] == (False, "scan") and seen.index((True, "equilibria")) > 0


@pytest.mark.parametrize("command", ["check", "traps", "hold"])
def test_command_in_a_pipe_prints_no_progress(command, tmp_path):
    code, out, err = in_pipe(_commands(tmp_path)[command], cwd=tmp_path)
    assert code == 0, err
    assert "\r" not in err and "Traceback" not in err  # progress bars only at a terminal
    assert out.strip()


@pytest.mark.parametrize("command", COMMANDS)
def test_broken_scene_at_a_terminal_is_one_sentence(command, tmp_path):
    broken = tmp_path / "broken.toml"
    broken.write_text('units = "mm"\n[[magnet]]\nshape = "box"\nsize = [10, 10\n')
    args = [a if not a.endswith(".toml") else str(broken) for a in _commands(tmp_path)[command]]
    if command == "demo":
        args += ["--sample", "no_such_sample.toml"]
    code, screen = at_terminal(args, cwd=tmp_path)
    assert code == 2, screen
    assert "Traceback" not in screen
    assert [line for line in screen.splitlines() if line.startswith("trapscape:")]
