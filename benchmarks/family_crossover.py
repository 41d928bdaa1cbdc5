"""Where numba's threads start to pay for the family kernels (physics/field/families.py).

The box kernel with H and dH/dx, serial and parallel, over 16 axis-aligned cubes at point counts
from 8 to 32,768: wall and CPU time per call (best of several repeats). The crossover sets
families.PARALLEL_MIN_WORK (point-part pairs). Run it on a quiet machine: with other jobs on the
cores a parallel call waits for a busy core and never pays.

    python benchmarks/family_crossover.py
"""
from __future__ import annotations

import os
import time

import numpy as np

from trapscape.physics.field.cuboid import _cuboids_parallel, _cuboids_serial

PARTS = 16
REPEATS = 7


def family(parts=PARTS):
    side = int(np.ceil(np.sqrt(parts)))
    grid = np.stack(np.meshgrid(np.arange(side), np.arange(side), indexing="ij"), -1)
    centers = np.zeros((parts, 3))
    centers[:, :2] = grid.reshape(-1, 2)[:parts] * 0.006
    return (np.ascontiguousarray(centers), np.tile(np.eye(3), (parts, 1, 1)),
            np.full((parts, 3), 0.006), np.tile([0.0, 0.0, 1.0e6], (parts, 1)),
            np.zeros((parts, 3)), np.full(parts, 1.0))


def best(kernel, points, arrays):
    H, G = np.zeros((len(points), 3)), np.zeros((len(points), 3, 3))
    walls, cpus = [], []
    for _ in range(REPEATS):
        w, c = time.perf_counter(), time.process_time()
        kernel(points, *arrays, True, H, G)
        walls.append(time.perf_counter() - w)
        cpus.append(time.process_time() - c)
    return min(walls), min(cpus)


def main():
    arrays = family()
    rng = np.random.default_rng(0)
    print(f"load average {os.getloadavg()[0]:.1f} on {os.cpu_count()} cores; {PARTS} cubes, H and dH/dx")
    print(f"{'points':>7s} {'pairs':>8s} {'serial wall':>12s} {'parallel wall':>14s} {'parallel cpu':>13s}")
    for n in (8, 32, 128, 512, 2048, 8192, 32768):
        points = np.ascontiguousarray(rng.uniform(-0.03, 0.03, (n, 3)))
        best(_cuboids_serial, points[:4], arrays), best(_cuboids_parallel, points[:4], arrays)
        s_wall, _ = best(_cuboids_serial, points, arrays)
        p_wall, p_cpu = best(_cuboids_parallel, points, arrays)
        print(f"{n:7d} {n * PARTS:8d} {s_wall * 1e3:10.3f}ms {p_wall * 1e3:12.3f}ms "
              f"{p_cpu * 1e3:11.3f}ms", flush=True)


if __name__ == "__main__":
    main()
