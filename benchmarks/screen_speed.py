"""Layouts a minute for a sweep of the level gauge screened against its sample spec (run by hand).

    python benchmarks/screen_speed.py [COUNT]      # default 100 layouts, gap 2..6 mm

Three ways in one run, each as a whole `trapscape screen` process (start-up included):
one worker, the process pool of 2 workers, and a Dask LocalCluster of 2 workers. Also the share
of one layout's time that is not the analysis: one process per layout (`trapscape screen` on one
layout) against the in-process time of the same layout, from the rows' own `seconds`.
"""
from __future__ import annotations

import json
import os
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))
SAMPLES = os.path.join(HERE, "..", "samples")
GAUGE = os.path.join(SAMPLES, "level_gauge.toml")
SPEC = os.path.join(SAMPLES, "level_gauge.spec.toml")
CLI = [sys.executable, "-m", "trapscape.viewers.cli", "screen", GAUGE, "--spec", SPEC, "--quiet"]


def timed(args, out) -> tuple:
    start = time.perf_counter()
    subprocess.run(args + ["-o", out], check=True, stdout=subprocess.DEVNULL)
    wall = time.perf_counter() - start
    with open(out.replace(".csv", ".jsonl")) as rows:
        seconds = [json.loads(line)["seconds"] for line in rows]
    return wall, seconds


def main(count: int) -> None:
    vary = ["--vary", f"gap=2..6@{count}"]
    with tempfile.TemporaryDirectory() as folder:
        results = {}
        for name, extra in (("1 worker", ["--workers", "1"]),
                            ("process pool, 2 workers", ["--workers", "2"]),
                            ("Dask LocalCluster, 2 workers", ["--workers", "2", "--dask", "local"])):
            out = os.path.join(folder, name.split()[0].strip(",") + ".csv")
            wall, seconds = timed(CLI + vary + extra, out)
            results[name] = wall
            print(f"{name:30s} {count / wall * 60:7.1f} layouts/min  ({wall:.1f} s wall, "
                  f"{sum(seconds) / len(seconds):.3f} s per layout in its worker)")
        one = results["1 worker"]
        print(f"2 workers against 1: {one / results['process pool, 2 workers']:.2f} x (pool), "
              f"{one / results['Dask LocalCluster, 2 workers']:.2f} x (Dask)")
        out = os.path.join(folder, "single.csv")
        wall, seconds = timed(CLI + ["--vary", "gap=3..3.5@2", "--workers", "1"], out)
        print(f"one process for 2 layouts: {wall:.2f} s; start-up, imports and compilation "
              f"{max(wall - sum(seconds), 0) / wall:.0%} of it")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 100)
