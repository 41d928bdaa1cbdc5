"""Whole commands side by side: this tree against a previous one, in one run, wall and CPU time.

Each case runs as a fresh process of each tree's `trapscape` (interpreter start, imports, numba's
cache load and the work), previous then current, so both see the same machine load; CPU time is
the child's user + system time (all its threads and its own children), which hardly changes when
other jobs share the machine, while wall time does. Cases:

- `traps` on the graphite board with count = 4, 8, 16, 30 (N x N cubes, `--set count=N`);
- `field` at 1e6 points (a 100 x 100 x 100 lattice in the arc rotor's search box) written to CSV;
- `traps` on every sample.

    python benchmarks/side_by_side.py --previous ../base/.venv/bin/trapscape
    python benchmarks/side_by_side.py --previous ... --only graphite   # one group of cases
    python benchmarks/side_by_side.py --previous ... --only samples --samples arc_rotor --runs 3

The previous tree is e.g. a git worktree of main at the commit before the change, with its own
virtual environment (`pip install -e .`).
"""
from __future__ import annotations

import argparse
import os
import resource
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = ROOT / "samples"
BOARD_COUNTS = (4, 8, 16, 30)
FIELD_POINTS_PER_SIDE = 100  # 100^3 = 1e6 points


def run_timed(command: list[str], env=None) -> tuple[float, float, int]:
    """Wall seconds, CPU seconds (user + system of the child and its children), exit code."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    done = subprocess.run(command, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, env=env)
    wall = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    if done.returncode != 0:
        print(f"  ! {' '.join(command)} exited {done.returncode}: "
              f"{done.stderr.decode(errors='replace')[-300:]}", file=sys.stderr)
    return wall, cpu, done.returncode


def field_points_file(folder: Path) -> Path:
    """1e6 points on a lattice filling the arc rotor's search box (the default one, around the
    parts), in its unit (mm)."""
    from trapscape.scene.loader import load_scene

    scene = load_scene(SAMPLES / "arc_rotor.toml")
    box = scene.search_box
    axes = [np.linspace(lo, hi, FIELD_POINTS_PER_SIDE)
            for lo, hi in zip(box.min / scene.unit_scale, box.max / scene.unit_scale)]
    grid = np.stack([g.ravel() for g in np.meshgrid(*axes, indexing="ij")], axis=1)
    path = folder / "points_1e6.csv"
    np.savetxt(path, grid, fmt="%.6f", delimiter=",", header="x,y,z", comments="")
    return path


def cases(groups, folder: Path, skip=(), counts=BOARD_COUNTS, chosen=()):
    """(label, arguments after `trapscape`) for each case of the chosen groups, in their order."""
    out = []
    for group in groups:
        out += _group_cases(group, folder, skip, counts, chosen)
    return out


def _group_cases(group, folder: Path, skip, counts, chosen=()):
    out = []
    if group == "graphite":
        for n in counts:
            out.append((f"traps graphite {n}x{n}",
                        ["traps", str(SAMPLES / "graphite_stage.toml"), "--set", f"count={n}",
                         "--json", str(folder / f"graphite{n}.json"), "--quiet"]))
    if group == "field":
        points = field_points_file(folder)
        out.append(("field 1e6 points arc_rotor",
                    ["field", str(SAMPLES / "arc_rotor.toml"), "--points", str(points),
                     "-o", str(folder / "field_1e6.csv"), "--quiet"]))
    if group == "samples":
        for sample in sorted(SAMPLES.glob("*.toml")):
            if sample.name.endswith((".spec.toml", ".template.toml")) or sample.stem in skip:
                continue
            if chosen and sample.stem not in chosen:
                continue
            out.append((f"traps {sample.stem}",
                        ["traps", str(sample), "--json", str(folder / f"{sample.stem}.json"),
                         "--quiet"]))
    return out


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--previous", help="the previous tree's trapscape")
    parser.add_argument("--current", default=shutil.which("trapscape") or "trapscape",
                        help="this tree's trapscape (default: the one on PATH)")
    parser.add_argument("--only", nargs="+", default=["graphite", "field", "samples"],
                        choices=["graphite", "field", "samples"], help="groups, run in this order")
    parser.add_argument("--skip-sample", nargs="*", default=[], help="samples left out")
    parser.add_argument("--samples", nargs="*", default=[], help="only these samples")
    parser.add_argument("--runs", type=int, default=1,
                        help="runs of each case, previous and current in turn (A B A B); "
                             "with more than one, the medians are printed too")
    parser.add_argument("--counts", type=int, nargs="+", default=list(BOARD_COUNTS),
                        help="board sizes N of the graphite cases")
    parser.add_argument("--current-only", action="store_true",
                        help="time this tree alone (when the previous one would not finish)")
    args = parser.parse_args()
    if not (args.previous or args.current_only):
        parser.error("give --previous (or --current-only)")
    print(f"load average {os.getloadavg()[0]:.1f} on {os.cpu_count()} cores; previous "
          f"{args.previous}, current {args.current}", flush=True)
    print(f"{'case':32s} {'previous wall':>13s} {'cpu':>7s} {'current wall':>13s} {'cpu':>7s} "
          f"{'cpu/wall':>8s} {'wall ratio':>10s} {'cpu ratio':>9s}", flush=True)
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        for label, arguments in cases(args.only, folder, args.skip_sample, args.counts,
                                      args.samples):
            if args.current_only:
                new_wall, new_cpu, _ = run_timed([args.current, *arguments])
                print(f"{label:32s} {'-':>13s} {'-':>7s} {new_wall:12.1f}s {new_cpu:6.1f}s "
                      f"{new_cpu / new_wall:8.2f}", flush=True)
                continue
            runs = []
            for _ in range(args.runs):
                runs.append(run_timed([args.previous, *arguments])[:2]
                            + run_timed([args.current, *arguments])[:2])
                _print_row(label, *runs[-1])
            if args.runs > 1:
                _print_row(f"{label} (median)", *np.median(np.array(runs), axis=0))
    print(f"load average {os.getloadavg()[0]:.1f} at the end")


def _print_row(label, old_wall, old_cpu, new_wall, new_cpu):
    print(f"{label:32s} {old_wall:12.1f}s {old_cpu:6.1f}s {new_wall:12.1f}s "
          f"{new_cpu:6.1f}s {new_cpu / new_wall:8.2f} {old_wall / new_wall:9.1f}x "
          f"{old_cpu / new_cpu:8.1f}x", flush=True)


if __name__ == "__main__":
    main()
