"""CPU time against wall time of every command, as whole processes (run by hand, on a quiet machine).

    python benchmarks/cpu_per_wall.py              # every case below
    python benchmarks/cpu_per_wall.py --quick      # without render, export, report and field 1e6
    python benchmarks/cpu_per_wall.py --quick --busy   # with the other core kept busy
    python benchmarks/cpu_per_wall.py --only render export   # the cases whose label holds a word

A command whose threads spin while they wait burns CPU that does no work: CPU time well above
wall time on a quiet machine. A command that really works on both cores also shows CPU above
wall, so each case is run twice, with the engine's threads as usual and with one numba thread
(NUMBA_NUM_THREADS=1): "extra CPU" is the CPU of the usual run over that of the one-thread run.
Spinning shows as extra CPU with no gain in wall time. Target (issue 14): CPU no more than 1.2 x
wall, or the excess bought by a matching fall in wall time.

With --busy a second process spins on one core the whole time (another program at work): the
target there is each command within 2 x of its one-thread wall time ("wall gain" >= 0.5), i.e.
the engine's threads must not wait on a core that is taken.
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

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = ROOT / "samples"


def cases(folder: Path, quick: bool):
    out = [(f"traps {s.stem}", ["traps", str(s), "-o", str(folder / f"{s.stem}.json"), "--quiet"])
           for s in sorted(SAMPLES.glob("*.toml")) if not s.name.endswith((".spec.toml",
                                                                              ".template.toml"))]
    out += [("check level_gauge", ["check", str(SAMPLES / "level_gauge.toml")]),
            ("check arc_rotor", ["check", str(SAMPLES / "arc_rotor.toml")]),
            ("hold holding_plate", ["hold", str(SAMPLES / "holding_plate.toml"), "--gap", "0..3@7"]),
            ("field line level_gauge", ["field", str(SAMPLES / "level_gauge.toml"), "--line",
                                        "0,0,-20", "0,0,20", "2001", "-o", str(folder / "l.csv")]),
            ("sweep level_gauge gap 3 steps", ["sweep", str(SAMPLES / "level_gauge.toml"), "--vary",
                                               "gap=2..6@3", "-o", str(folder / "sweep"), "--quiet"])]
    if quick:
        return out
    sys.path.insert(0, str(ROOT / "benchmarks"))
    from side_by_side import field_points_file

    out += [("field 1e6 points arc_rotor", ["field", str(SAMPLES / "arc_rotor.toml"), "--points",
                                            str(field_points_file(folder)), "-o",
                                            str(folder / "f.csv"), "--quiet"]),
            ("render level_gauge", ["render", str(SAMPLES / "level_gauge.toml"), "-o",
                                    str(folder / "v.png")]),
            ("export arc_rotor .stl", ["export", str(SAMPLES / "arc_rotor.toml"), "-o",
                                       str(folder / "a.stl")]),
            ("report level_gauge --no-3d", ["report", str(SAMPLES / "level_gauge.toml"), "-o",
                                            str(folder / "report"), "--no-3d"])]
    return out


def run(command, env) -> tuple[float, float]:
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    done = subprocess.run(command, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, env=env)
    wall = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    if done.returncode:
        print(f"  ! exit {done.returncode}: {done.stderr.decode(errors='replace')[-200:]}",
              file=sys.stderr)
    return wall, (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="leave out the long cases")
    parser.add_argument("--busy", action="store_true", help="keep one core busy meanwhile")
    parser.add_argument("--only", nargs="+", default=(), metavar="WORD",
                        help="only the cases whose label holds one of these words")
    parser.add_argument("--trapscape", default=shutil.which("trapscape") or "trapscape")
    args = parser.parse_args()
    one_thread = dict(os.environ, NUMBA_NUM_THREADS="1")
    print(f"load average {os.getloadavg()[0]:.1f} on {os.cpu_count()} cores")
    print(f"{'case':34s} {'wall':>7s} {'cpu':>7s} {'cpu/wall':>8s} {'1-thread wall':>13s} "
          f"{'cpu':>7s} {'extra cpu':>9s} {'wall gain':>9s}", flush=True)
    spinner = subprocess.Popen([sys.executable, "-c", "while True: pass"]) if args.busy else None
    try:
        measure(args, one_thread)
    finally:
        if spinner:
            spinner.kill()
    print(f"load average {os.getloadavg()[0]:.1f} at the end")


def measure(args, one_thread):
    with tempfile.TemporaryDirectory() as tmp:
        for label, arguments in cases(Path(tmp), args.quick):
            if args.only and not any(word in label for word in args.only):
                continue
            wall, cpu = run([args.trapscape, *arguments], os.environ)
            wall1, cpu1 = run([args.trapscape, *arguments], one_thread)
            print(f"{label:34s} {wall:6.1f}s {cpu:6.1f}s {cpu / wall:8.2f} {wall1:12.1f}s "
                  f"{cpu1:6.1f}s {cpu / cpu1:8.2f}x {wall1 / wall:8.2f}x", flush=True)


if __name__ == "__main__":
    main()
