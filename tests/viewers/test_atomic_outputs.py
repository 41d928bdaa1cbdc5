"""Outputs are whole or absent: a writer stopped mid-write (Ctrl-C, SIGTERM, SIGKILL) or failing
leaves the previous file at the target untouched, never a partial one."""
from __future__ import annotations

import os
import signal
import subprocess
import sys
import time

import pytest
from repo_paths import SAMPLES

from trapscape.scene.errors import SceneError
from trapscape.viewers.atomic import atomic_path, replaced_atomically

CLI = [sys.executable, "-m", "trapscape.viewers.cli"]
POINTS = 400_000  # enough rows that writing the CSV takes a good part of a second


def test_a_failing_writer_leaves_the_old_file(tmp_path):
    target = tmp_path / "out.csv"
    target.write_text("old\n")
    with pytest.raises(RuntimeError), replaced_atomically(target) as stream:
        stream.write("new, half")
        raise RuntimeError("the writer failed")
    assert target.read_text() == "old\n" and os.listdir(tmp_path) == ["out.csv"]


def test_a_writer_that_writes_nothing_is_an_error(tmp_path):
    target = tmp_path / "grid.vti"
    with pytest.raises(SceneError, match="nothing was written"), atomic_path(target):
        pass  # as VTK does when it cannot write: it reports on stderr and returns
    assert os.listdir(tmp_path) == []


@pytest.mark.parametrize("signum", [signal.SIGINT, signal.SIGTERM, signal.SIGKILL])
def test_a_stopped_writer_leaves_the_old_file_or_the_whole_new_one(signum, tmp_path):
    target = tmp_path / "line.csv"
    target.write_text("old\n")
    process = subprocess.Popen(
        [*CLI, "field", str(SAMPLES / "bead_chip.toml"), "--line", "-3,0,2", "3,0,2",
         str(POINTS), "-o", str(target), "--quiet"],
        stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, stdin=subprocess.DEVNULL)
    deadline = time.monotonic() + 240
    while time.monotonic() < deadline and process.poll() is None:
        if any(name.endswith(".tmp.csv") for name in os.listdir(tmp_path)):
            break  # the writer is at work
        time.sleep(0.002)
    assert process.poll() is None, "the writer finished before it could be stopped"
    process.send_signal(signum)
    process.wait(timeout=120)
    text = target.read_text()
    assert text == "old\n" or text.count("\n") == POINTS + 1
    if signum != signal.SIGKILL:  # a killed process cannot tidy up; the others do
        assert os.listdir(tmp_path) == ["line.csv"]
        assert process.returncode == 130 and b"Traceback" not in process.stderr.read()


class _HalfBuilt:
    """Like a library object whose constructor was interrupted before it set its handle (numba's
    compiler on CI, when SIGTERM came while the CSV kernel compiled on first use)."""

    def __init__(self, args):
        raise KeyboardInterrupt

    def __del__(self):
        self._handle.close()  # AttributeError: __init__ never set it


def test_an_interrupt_inside_a_constructor_prints_one_line_and_no_traceback(monkeypatch, capsys):
    from trapscape.viewers import cli

    parser = cli.build_parser()
    monkeypatch.setattr(parser, "parse_args", lambda argv: type("Args", (), {"run": _HalfBuilt}))
    monkeypatch.setattr(cli, "build_parser", lambda: parser)
    unraised = []
    monkeypatch.setattr(sys, "unraisablehook", unraised.append)
    assert cli.main(["field"]) == 130
    assert capsys.readouterr().err == "trapscape: interrupted\n"
    assert unraised == [] and sys.unraisablehook == unraised.append  # silenced, then restored
