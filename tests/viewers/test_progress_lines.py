"""Off a terminal (a log file, a pipe, a batch system) a long run still says how far it is: a
plain line every PROGRESS_LINE_SECONDS, and nothing for a short run."""
from __future__ import annotations

import argparse

from trapscape.viewers.commands import common


def test_progress_lines_every_interval_and_none_for_a_short_run(capsys):
    now = [0.0]
    update = common._progress_lines("scan", clock=lambda: now[0])
    for step in range(1, 31):  # 30 steps of 1 s each
        now[0] = float(step)
        update(step, 30)
    lines = capsys.readouterr().err.splitlines()
    assert lines == ["trapscape: scan 33% (10/30), 10 s", "trapscape: scan 67% (20/30), 20 s",
                     "trapscape: scan 100% (30/30), 30 s"]
    short = common._progress_lines("scan", clock=lambda: 1.0)
    short(5, 10)
    assert capsys.readouterr().err == ""


def test_quiet_means_no_progress_at_all():
    with common.progress(argparse.Namespace(quiet=True)) as update:
        assert update is None


def test_a_pipe_gets_the_line_printer(monkeypatch):
    monkeypatch.setattr(common.sys.stderr, "isatty", lambda: False, raising=False)
    with common.progress(argparse.Namespace(quiet=False), desc="field") as update:
        assert callable(update) and update.__qualname__.startswith("_progress_lines")


def test_a_long_run_names_each_stage_when_it_begins(capsys):
    now = [0.0]
    update = common._progress_lines("traps", clock=lambda: now[0])
    for clock, done, stage in [(2, 1, "scan"), (4, None, "equilibria"),  # short so far: quiet
                               (12, None, "equilibria"), (13, None, "equilibria"),
                               (14, None, "finite size"), (15, None, "escapes"),
                               (16, None, "escapes"), (27, None, "escapes")]:
        now[0] = float(clock)
        update(done, 10 if done else None, stage)
    assert capsys.readouterr().err.splitlines() == [
        "trapscape: equilibria, 12 s", "trapscape: finite size, 14 s",
        "trapscape: escapes, 15 s", "trapscape: escapes, 27 s"]
