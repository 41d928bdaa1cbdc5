"""Time find_traps on each bundled sample at its default settings (run by hand).

    python benchmarks/trap_speed.py [SAMPLE.toml ...]

Prints, per sample: grid points, seconds for the field model's scan alone (B and dB/dx plus the
clearance at every grid point: the plain part every trap search pays) and seconds for the whole
trap search, and the number of equilibria found.
"""
from __future__ import annotations

import glob
import os
import sys
import time

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
SAMPLES = os.path.join(HERE, "..", "samples")


def time_sample(path: str) -> tuple:
    from trapscape.physics.field.model import FieldModel
    from trapscape.physics.traps.search import find_traps, scan_grid_geometry
    from trapscape.scene.loader import load_scene

    scene = load_scene(path)
    model = FieldModel.from_scene(scene)
    points = scan_grid_geometry(scene)[4]
    start = time.perf_counter()
    model.applied_H(points[: min(len(points), 2000)], gradient=True)
    model.clearance(points[: min(len(points), 2000)])
    per_point = (time.perf_counter() - start) / min(len(points), 2000)
    start = time.perf_counter()
    report = find_traps(model, scene)
    total = time.perf_counter() - start
    return len(points), per_point * len(points), total, len(report.equilibria)


def main(argv) -> int:
    paths = argv or sorted(glob.glob(os.path.join(SAMPLES, "*.toml")))
    if not paths:
        print("no samples found in samples/ (skipped)")
        return 0
    print(f"{'sample':<28} {'points':>8} {'scan est. s':>12} {'find_traps s':>13} {'equilibria':>11}")
    for path in paths:
        if not os.path.exists(path):
            print(f"{os.path.basename(path):<28} missing, skipped")
            continue
        n, scan, total, count = time_sample(path)
        print(f"{os.path.basename(path):<28} {n:>8} {scan:>12.2f} {total:>13.2f} {count:>11}")
        sys.stdout.flush()
    return 0


if __name__ == "__main__":
    np.seterr(all="ignore")
    sys.exit(main(sys.argv[1:]))
