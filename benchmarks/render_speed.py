"""Time every sample's render and exports as a user runs them: each command a whole process
(start-up, field, trap search where the layers need it, drawing, writing), wall time, one run
each. Target: every one under 30 s on the 2-core development machine.

    python benchmarks/render_speed.py [SAMPLE ...] [--jobs render,magnets,vti,vtp,stl,html]
        [--cli PATH] [--samples-dir DIR] [--timeout S]

--cli runs another installation's `trapscape` (e.g. an older worktree's venv) on the same
commands, so two versions can be timed side by side; "magnets" is `render --layers magnets`,
which needs no trap search.
"""
from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
TARGET_S = 30.0
SAMPLES = ("level_gauge", "bead_chip", "holding_plate", "separator_grate", "graphite_stage",
           "arc_rotor")
JOBS = {  # name -> (output suffix, extra arguments)
    "render": (".png", []),
    "magnets": (".png", ["--layers", "magnets"]),
    "vti": (".vti", []),
    "vtp": (".vtp", []),
    "stl": (".stl", []),
    "html": (".html", []),
}


def command(cli, job: str, scene: Path, out: Path) -> list:
    verb = "render" if job in ("render", "magnets") else "export"
    return cli + [verb, str(scene), "-o", str(out), "--quiet"] + JOBS[job][1]


def time_job(cli, job, scene, folder, timeout) -> float | None:
    """Wall seconds of one command, None if it failed or ran past the timeout."""
    out = Path(folder) / f"{scene.stem}-{job}{JOBS[job][0]}"
    start = time.perf_counter()
    try:
        done = subprocess.run(command(cli, job, scene, out), capture_output=True, text=True,
                              timeout=timeout, env=dict(os.environ, PYTHONWARNINGS="ignore"))
    except subprocess.TimeoutExpired:
        return None
    elapsed = time.perf_counter() - start
    if done.returncode != 0:
        print(f"  {scene.stem} {job}: exit {done.returncode}: {done.stderr.strip()[-300:]}",
              file=sys.stderr)
        return None
    return elapsed


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("samples", nargs="*", default=list(SAMPLES))
    parser.add_argument("--jobs", default=",".join(JOBS))
    parser.add_argument("--cli", default=None, help="a trapscape executable (default: this one)")
    parser.add_argument("--samples-dir", default=str(ROOT / "samples"))
    parser.add_argument("--timeout", type=float, default=600.0, help="seconds per command")
    args = parser.parse_args()
    jobs = [j.strip() for j in args.jobs.split(",") if j.strip()]
    unknown = [j for j in jobs if j not in JOBS]
    if unknown:
        parser.error(f"unknown job {unknown[0]!r}; choose from {', '.join(JOBS)}")
    cli = [args.cli] if args.cli else [sys.executable, "-m", "trapscape.viewers.cli"]
    print(f"{'sample':<16}" + "".join(f"{j + ' (s)':>12}" for j in jobs), flush=True)
    worst = 0.0
    with tempfile.TemporaryDirectory() as folder:
        for name in args.samples:
            scene = Path(args.samples_dir) / f"{name}.toml"
            cells = []
            for job in jobs:
                seconds = time_job(cli, job, scene, folder, args.timeout)
                worst = max(worst, seconds if seconds is not None else float("inf"))
                cells.append(f"{seconds:>12.1f}" if seconds is not None else f"{'> ' + str(int(args.timeout)):>12}")
            print(f"{name:<16}" + "".join(cells), flush=True)
    verdict = "meets" if worst <= TARGET_S else "misses"
    print(f"slowest {worst:.1f} s: {verdict} the {TARGET_S:.0f} s target")
    return 0 if worst <= TARGET_S else 1


if __name__ == "__main__":
    sys.exit(main())
