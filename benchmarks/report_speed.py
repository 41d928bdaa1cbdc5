"""Time `trapscape demo` (now with the customer report: report.html with the interactive 3D view,
report.pdf, the section, profile and polarity pictures) as a user runs it: a whole process,
wall time. Target: under 2 minutes on the 2-core development machine.

    python benchmarks/report_speed.py [--runs N] [--cli PATH] [--timeout S]

--cli times another installation's `trapscape demo` too (e.g. the code before the report, in
its own worktree and venv), run in turn with this one (A B A B ...), so the two are compared on
the same machine load; the median of each and their ratio are printed.
"""
from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

TARGET_S = 120.0


def time_demo(cli: list, timeout: float) -> float | None:
    """Wall seconds of one `demo` into a fresh folder; None if it failed or ran too long."""
    with tempfile.TemporaryDirectory() as folder:
        start = time.perf_counter()
        try:
            done = subprocess.run(cli + ["demo", "-o", str(Path(folder) / "demo"), "--quiet"],
                                  capture_output=True, text=True, timeout=timeout,
                                  env=dict(os.environ, PYTHONWARNINGS="ignore"))
        except subprocess.TimeoutExpired:
            return None
        elapsed = time.perf_counter() - start
        if done.returncode != 0:
            print(f"  exit {done.returncode}: {done.stderr.strip()[-300:]}", file=sys.stderr)
            return None
        return elapsed


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=2)
    parser.add_argument("--cli", help="another installation's trapscape to time in turn")
    parser.add_argument("--timeout", type=float, default=600.0)
    args = parser.parse_args()
    this = [sys.executable, "-m", "trapscape.viewers.cli"]
    other = [args.cli] if args.cli else None
    times = {"this": [], "other": []}
    for run in range(args.runs):
        for name, cli in (("this", this), ("other", other)):
            if cli is None:
                continue
            elapsed = time_demo(cli, args.timeout)
            times[name].append(elapsed)
            shown = "failed or timed out" if elapsed is None else f"{elapsed:.1f} s"
            print(f"run {run + 1} {name}: {shown}", flush=True)
    done = {k: [t for t in v if t is not None] for k, v in times.items()}
    if done["this"]:
        median = statistics.median(done["this"])
        verdict = "meets" if median < TARGET_S else "misses"
        print(f"demo with the report: median {median:.1f} s ({verdict} the {TARGET_S:.0f} s "
              "target)")
        if done["other"]:
            before = statistics.median(done["other"])
            print(f"the other installation: median {before:.1f} s; ratio this/other "
                  f"{median / before:.2f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
