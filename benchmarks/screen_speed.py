"""Layouts a minute for a sweep of the level gauge screened against its sample spec (run by hand).

    python benchmarks/screen_speed.py [COUNT] [--against PYTHON] [--runs R]

COUNT layouts (default 100, gap 2..6 mm), each way as a whole `trapscape screen` process: one
worker, the process pool of 2 workers, and a Dask LocalCluster of 2 workers. For each:

- whole: layouts a minute over the process's wall time, start-up included;
- steady: layouts a minute after start-up, from the times the rows reach OUT.jsonl (watched
  here), from the row that follows each worker's first one to the last;
- CPU: seconds of CPU of the process tree per layout, counting the processes it waited for: a
  forked pool's workers, not those a fork server or a Dask nanny started (never waited for by
  the tree), so compare the CPU of 2-worker runs only between runs that fork.

Then the 2-against-1 ratios of both figures, and one process that screens 2 layouts: its wall
time and the share of it that is not the layouts' own time (start-up, imports, compilation).
Last, the steady CPU time of one layout, (CPU of COUNT layouts - CPU of 2) / (COUNT - 2) on one
worker: on a shared machine this is the figure the load moves least.

--against PYTHON runs every measurement also with another installation's interpreter (e.g. a
worktree of the code before, in its own venv), the two in turn, and prints the ratio
this/other of each figure. The load average is printed beside each run.
"""
from __future__ import annotations

import argparse
import json
import os
import resource
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
SAMPLES = HERE.parent / "samples"
GAUGE = str(SAMPLES / "level_gauge.toml")
SPEC = str(SAMPLES / "level_gauge.spec.toml")
WAYS = (("1 worker", ["--workers", "1"], 1),
        ("process pool, 2 workers", ["--workers", "2"], 2),
        ("Dask LocalCluster, 2 workers", ["--workers", "2", "--dask", "local"], 2))


def _children_cpu() -> float:
    usage = resource.getrusage(resource.RUSAGE_CHILDREN)
    return usage.ru_utime + usage.ru_stime


def _watch_rows(path: Path, stop: threading.Event, arrivals: list) -> None:
    """Append the time each new row appears in the JSON lines file."""
    seen = 0
    while not stop.is_set():
        if path.exists():
            count = path.read_bytes().count(b"\n")
            arrivals.extend([time.perf_counter()] * (count - seen))
            seen = max(seen, count)
        time.sleep(0.01)


def run_once(python: str, vary: str, extra: list, workers: int, folder: str, name: str) -> dict:
    """One whole `trapscape screen` process: wall, CPU of its tree, steady rate, rows' times."""
    out = Path(folder) / f"{name}.csv"
    rows_file = out.with_suffix(".jsonl")
    args = [python, "-m", "trapscape.viewers.cli", "screen", GAUGE, "--spec", SPEC, "--quiet",
            "--vary", vary, *extra, "-o", str(out)]
    arrivals, stop = [], threading.Event()
    watcher = threading.Thread(target=_watch_rows, args=(rows_file, stop, arrivals), daemon=True)
    load = os.getloadavg()[0]
    cpu = _children_cpu()
    start = time.perf_counter()
    watcher.start()
    subprocess.run(args, check=True, stdout=subprocess.DEVNULL)
    wall = time.perf_counter() - start
    stop.set()
    watcher.join()
    cpu = _children_cpu() - cpu
    seconds = [json.loads(line)["seconds"] for line in rows_file.read_text().splitlines()]
    count = len(seconds)
    steady = None
    if count > workers + 1 and len(arrivals) == count:
        span = arrivals[-1] - arrivals[workers - 1]
        steady = (count - workers) / span * 60 if span > 0 else None
    return {"wall": wall, "cpu": cpu, "count": count, "steady": steady, "in_layouts":
            sum(seconds), "load": (load + os.getloadavg()[0]) / 2}


def _line(name, r) -> str:
    steady = f"{r['steady']:7.1f}" if r["steady"] else "    n/a"
    return (f"  {name:30s} whole {r['count'] / r['wall'] * 60:7.1f}/min ({r['wall']:5.1f} s)  "
            f"steady {steady}/min  CPU {r['cpu'] / r['count']:.3f} s/layout  "
            f"load {r['load']:.1f}")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("count", nargs="?", type=int, default=100)
    parser.add_argument("--against", metavar="PYTHON",
                        help="another installation's python to measure in turn with this one")
    parser.add_argument("--runs", type=int, default=1, help="runs of each (A B A B ...)")
    args = parser.parse_args()
    pythons = {"this": sys.executable}
    if args.against:
        pythons["other"] = args.against
    vary = f"gap=2..6@{args.count}"
    results = {}  # (who, way) -> list of runs
    with tempfile.TemporaryDirectory() as folder:
        for name, extra, workers in (*WAYS, ("2 layouts, 1 worker", ["--workers", "1"], 1)):
            print(name, flush=True)
            layouts = "gap=3..3.5@2" if name.startswith("2 layouts") else vary
            for run in range(args.runs):
                for who, python in pythons.items():
                    tag = f"{who}-{run}-{name.split()[0].strip(',')}"
                    r = run_once(python, layouts, extra, workers, folder, tag)
                    results.setdefault((who, name), []).append(r)
                    print(_line(f"{who} (run {run + 1})", r), flush=True)
    _summary(results, pythons, args.count)


def _median(values):
    values = sorted(values)
    n = len(values)
    return values[n // 2] if n % 2 else 0.5 * (values[n // 2 - 1] + values[n // 2])


def _summary(results, pythons, count) -> None:
    print("\nmedians")
    figures = {}
    for who in pythons:
        one = results[(who, "1 worker")]
        two_of = {"pool": results[(who, "process pool, 2 workers")],
                  "Dask": results[(who, "Dask LocalCluster, 2 workers")]}
        whole_one = _median([r["count"] / r["wall"] * 60 for r in one])
        steady_one = _median([r["steady"] for r in one if r["steady"]] or [0.0])
        start = results[(who, "2 layouts, 1 worker")]
        start_wall = _median([r["wall"] for r in start])
        start_share = _median([max(r["wall"] - r["in_layouts"], 0.0) / r["wall"] for r in start])
        layout_cpu = (_median([r["cpu"] for r in one]) - _median([r["cpu"] for r in start])) / (
            count - 2)
        figures[who] = {"1 worker whole": whole_one, "1 worker steady": steady_one,
                        "layout CPU s": layout_cpu, "2-layout process s": start_wall}
        print(f"  {who}: 1 worker {whole_one:.0f}/min whole, {steady_one:.0f}/min steady")
        for way, runs in two_of.items():
            whole = _median([r["count"] / r["wall"] * 60 for r in runs])
            steady = _median([r["steady"] for r in runs if r["steady"]] or [0.0])
            figures[who][f"{way} whole"] = whole
            figures[who][f"{way} steady"] = steady
            print(f"  {who}: {way}, 2 workers {whole:.0f}/min whole ({whole / whole_one:.2f} x "
                  f"one worker), {steady:.0f}/min steady ({steady / max(steady_one, 1e-9):.2f} x)")
        print(f"  {who}: one process for 2 layouts {start_wall:.2f} s, {start_share:.0%} of it "
              f"start-up, imports and compilation; one layout's steady CPU {layout_cpu:.3f} s "
              f"(2 cores: at most {2 * 60 / layout_cpu:.0f}/min)")
    if "other" in figures:
        print("  this / other: " + ", ".join(
            f"{k} {figures['this'][k] / figures['other'][k]:.2f}" for k in figures["this"]
            if figures["other"][k]))


if __name__ == "__main__":
    main()
