"""A large family's field at many points: part by part against cell by cell (local expansions of
the far parts, physics/field/local_cells.py), in one process, CPU time, and the largest error of
the cells against the direct sum.

Boards of N x N cubes (the graphite stage's, `--set count=N`); points: the scan's kind (uniform in
the search box) and the finite-size probe's kind (a probe's 2,030 surface samples at its centre and
at the six shifts of its Hessian stencil, around a few centres).

    python benchmarks/local_cells_speed.py              # N = 16, 30
    python benchmarks/local_cells_speed.py --counts 30 --balls 12
"""
from __future__ import annotations

import argparse
import os
import time
from pathlib import Path

import numpy as np
from scipy.integrate import lebedev_rule

from trapscape.physics.analysis.run import load_analysis
from trapscape.physics.field.families import Family

SAMPLE = Path(__file__).resolve().parents[1] / "samples" / "graphite_stage.toml"
MM = 1e-3


def board_family(count: int) -> Family:
    analysis = load_analysis(SAMPLE, [f"count={count}"])
    steps = analysis.model._evaluation_steps(set())
    return next(s for s in steps if isinstance(s, Family))


def point_sets(rng, scan_points: int, balls: int) -> dict:
    scan = rng.uniform([-15 * MM, -15 * MM, 0.2 * MM], [15 * MM, 15 * MM, 8 * MM], (scan_points, 3))
    directions = lebedev_rule(77)[0].T * 1.0 * MM  # a 2 mm probe's samples at degree 38
    shifts = np.vstack([np.zeros(3), np.eye(3) * 1e-7, -np.eye(3) * 1e-7])
    centres = rng.uniform([-15 * MM, -15 * MM, 1.1 * MM], [15 * MM, 15 * MM, 3 * MM], (balls, 3))
    probe = np.concatenate([c + s + directions for c in centres for s in shifts])
    return {"scan": np.ascontiguousarray(scan), "probe balls": np.ascontiguousarray(probe)}


def timed(call, points):
    H, G = np.zeros((len(points), 3)), np.zeros((len(points), 3, 3))
    start = time.process_time()
    call(points, True, H, G)
    return time.process_time() - start, H, G


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--counts", type=int, nargs="+", default=[16, 30])
    parser.add_argument("--scan-points", type=int, default=60_000)
    parser.add_argument("--balls", type=int, default=6)
    args = parser.parse_args()
    print(f"load average {os.getloadavg()[0]:.1f}; CPU seconds, H and dH/dx at every point")
    print(f"{'board':>7s} {'points':>12s} {'n':>7s} {'direct':>8s} {'cells':>8s} {'ratio':>6s} "
          f"{'max |dH|/|H|':>13s} {'max |dG|/|G|':>13s}")
    for count in args.counts:
        family = board_family(count)
        warm = point_sets(np.random.default_rng(1), 3000, 1)["scan"]
        timed(family.add_H, warm)  # numba's cache and the sphere fits' matrices
        for label, points in point_sets(np.random.default_rng(0), args.scan_points,
                                        args.balls).items():
            t_direct, H0, G0 = timed(family.add_H_direct, points)
            t_cells, H, G = timed(family.add_H, points)
            dH = np.max(np.linalg.norm(H - H0, axis=1) / np.linalg.norm(H0, axis=1))
            dG = np.max(np.linalg.norm(G - G0, axis=(1, 2)) / np.linalg.norm(G0, axis=(1, 2)))
            print(f"{count:>3d}x{count:<3d} {label:>12s} {len(points):7d} {t_direct:7.2f}s "
                  f"{t_cells:7.2f}s {t_direct / t_cells:5.1f}x {dH:13.1e} {dG:13.1e}", flush=True)


if __name__ == "__main__":
    main()
