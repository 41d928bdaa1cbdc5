"""Time the dipole sums side by side: direct numba kernel, FMM over 2 processes, plain numpy.

Sources: 12 cubes of 10 mm, 15^3 dipoles each (40,500 dipoles), on a ring of radius 30 mm with
alternating poles. Targets: uniform random points in the box around them (1e5 and 1e6 of them).
The numpy broadcast sum is timed on a subset of the targets and scaled linearly (it is linear in
the number of targets); accuracies are against the direct sum on a random subset, relative to the
local field scale s = max(|H|, 0.01 sum_k |H_k|) of DESIGN.md.

    python benchmarks/dipole_sum_speed.py                 # the comparison
    python benchmarks/dipole_sum_speed.py --gradient      # also H and dH/dx
    python benchmarks/dipole_sum_speed.py --constants     # the cost-model constants for "auto"
    python benchmarks/dipole_sum_speed.py --start-methods # fork against spawn for the FMM workers
"""
from __future__ import annotations

import time

PROCESS_START = time.perf_counter()

import argparse  # noqa: E402
import os  # noqa: E402
import sys  # noqa: E402
from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402


from trapscape.physics.field import fmm  # noqa: E402
from trapscape.physics.field.dipole_sum import dipole_H, dipole_H_numpy  # noqa: E402

MU0 = 4e-7 * np.pi
PARTS = 12
CELLS_PER_EDGE = 15
CUBE_EDGE_M = 0.010
RING_RADIUS_M = 0.030
NUMPY_SUBSET = 2000
ACCURACY_SUBSET = 3000


def ring_of_cubes(parts=PARTS, cells=CELLS_PER_EDGE):
    """Dipole positions (K, 3) and moments (K, 3): N42-like cubes (Br = 1.3 T), alternating."""
    u = (np.arange(cells) + 0.5) / cells * CUBE_EDGE_M - CUBE_EDGE_M / 2
    cube = np.stack([g.ravel() for g in np.meshgrid(u, u, u, indexing="ij")], axis=1)
    cell_moment = 1.3 / MU0 * (CUBE_EDGE_M / cells) ** 3
    positions, moments = [], []
    for k in range(parts):
        angle = 2 * np.pi * k / PARTS
        positions.append(cube + RING_RADIUS_M * np.array([np.cos(angle), np.sin(angle), 0.0]))
        moments.append(np.tile([0.0, 0.0, cell_moment * (-1) ** k], (len(cube), 1)))
    return np.concatenate(positions), np.concatenate(moments), len(cube)


def targets_around(n, seed=0):
    rng = np.random.default_rng(seed)
    half = np.array([0.05, 0.05, 0.02])
    return rng.uniform(-half, half, (n, 3))


def local_scale(points, positions, moments, per_part):
    H = dipole_H(points, positions, moments, method="direct")
    parts = sum(np.linalg.norm(dipole_H(points, positions[a:a + per_part], moments[a:a + per_part],
                                        method="direct"), axis=1)
                for a in range(0, len(positions), per_part))
    return H, np.maximum(np.linalg.norm(H, axis=1), 0.01 * parts)


def timed(function, *args, **kwargs):
    start = time.perf_counter()
    result = function(*args, **kwargs)
    return result, time.perf_counter() - start


def wall_and_cpu(function, *args, **kwargs):
    """Wall seconds and CPU seconds (this process's threads and its waited-for children)."""
    before = os.times()
    result, wall = timed(function, *args, **kwargs)
    after = os.times()
    cpu = sum(after[i] - before[i] for i in range(4))
    return result, wall, cpu


def first_calls(positions, moments):
    """Numba compilation (or cache load) and the FMM self-test, timed on their own."""
    small = targets_around(10)
    _, t_direct = timed(dipole_H, small, positions[:10], moments[:10], method="direct")
    _, t_gradient = timed(dipole_H, small, positions[:10], moments[:10], gradient=True,
                          method="direct")
    _, t_self_test = timed(fmm._ensure_self_test)
    print(f"first calls: direct kernel {t_direct:.2f} s, gradient kernel {t_gradient:.2f} s "
          f"(numba compile or cache load), FMM self-test {t_self_test:.2f} s")


def compare(n_targets, positions, moments, per_part, eps, gradient):
    targets = targets_around(n_targets, seed=n_targets)
    label = "H and dH/dx" if gradient else "H"
    direct, t_direct, cpu_direct = wall_and_cpu(dipole_H, targets, positions, moments,
                                                gradient=gradient, method="direct")
    fast, t_fmm, cpu_fmm = wall_and_cpu(dipole_H, targets, positions, moments, gradient=gradient,
                                        method="fmm", eps=eps)
    subset = np.random.default_rng(1).choice(n_targets, min(NUMPY_SUBSET, n_targets), replace=False)
    plain, t_numpy_subset, cpu_numpy_subset = wall_and_cpu(dipole_H_numpy, targets[subset],
                                                           positions, moments)
    t_numpy = t_numpy_subset * n_targets / len(subset)
    cpu_numpy = cpu_numpy_subset * n_targets / len(subset)
    check = subset[:ACCURACY_SUBSET]
    H_ref, scale = local_scale(targets[check], positions, moments, per_part)
    H_direct = direct[0] if gradient else direct
    H_fast = fast[0] if gradient else fast
    err_fmm = np.linalg.norm(H_fast[check] - H_ref, axis=1) / scale
    err_numpy = np.linalg.norm(plain[: len(check)] - H_ref, axis=1) / scale
    err_direct = np.linalg.norm(H_direct[check] - H_ref, axis=1) / scale
    print(f"\n{label} at {n_targets:,} targets from {len(positions):,} dipoles (eps {eps:g})")
    print(f"  direct numba (2 threads) {t_direct:8.2f} s wall, {cpu_direct:7.2f} s CPU   "
          f"max error/scale {err_direct.max():.1e}")
    print(f"  fmm (2 processes)        {t_fmm:8.2f} s wall, {cpu_fmm:7.2f} s CPU   "
          f"max error/scale {err_fmm.max():.1e} (99th percentile {np.percentile(err_fmm, 99):.1e})")
    print(f"  numpy broadcast          {t_numpy:8.1f} s wall, {cpu_numpy:7.1f} s CPU   "
          f"max error/scale {err_numpy.max():.1e}  (timed on {len(subset):,} targets: "
          f"{t_numpy_subset:.2f} s, scaled linearly)")
    if gradient:
        G_err = np.abs(fast[1][check] - direct[1][check]).max() / np.abs(direct[1][check]).max()
        print(f"  fmm gradient: max |dG| / max |G| = {G_err:.1e}")
    print(f"  wall-time ratios: numpy / direct {t_numpy / t_direct:6.0f}x   numpy / fmm "
          f"{t_numpy / t_fmm:6.0f}x   direct / fmm {t_direct / t_fmm:5.2f}x")


def cpu_timed(function, *args, **kwargs):
    """CPU seconds of this process (all its threads): unlike wall time, hardly changed when other
    jobs share the machine."""
    start = time.process_time()
    result = function(*args, **kwargs)
    return result, time.process_time() - start


def measure_constants(positions, moments):
    """Least-squares fits of the cost model in physics/dipole_sum.py, from CPU time."""
    import numba

    fmm._ensure_self_test()
    threads = numba.get_num_threads()
    for gradient in (False, True):
        pair_targets = targets_around(20_000)
        _, t = cpu_timed(dipole_H, pair_targets, positions, moments, gradient=gradient,
                         method="direct")
        print(f"direct {'gradient' if gradient else 'H'}: "
              f"{t / threads / (len(pair_targets) * len(positions)):.2e} s per target-source pair "
              f"on {threads} threads (CPU time / threads)")
    for eps in (1e-3, 1e-6, 1e-9):
        for gradient in (False, True):
            rows, times = [], []
            for parts in (1, 4, 12):
                k = parts * CELLS_PER_EDGE**3
                for n in (2_000, 50_000, 150_000):
                    _, t = cpu_timed(fmm._fmm_share, targets_around(n), positions[:k], moments[:k],
                                     gradient, eps)
                    rows.append([1.0, k, n])
                    times.append(t)
            c, per_source, per_target = np.linalg.lstsq(np.array(rows), np.array(times), rcond=None)[0]
            worst = max(abs(np.array(rows) @ [c, per_source, per_target] - times) / times)
            print(f"fmm one process, eps {eps:.0e}, {'gradient' if gradient else 'H'}: overhead {c:.2e} s,"
                  f" {per_source:.2e} s per source, {per_target:.2e} s per target "
                  f"(worst misfit {worst:.0%}); raw: "
                  + ", ".join(f"K={int(r[1])} N={int(r[2])}: {t:.2f}" for r, t in zip(rows, times)),
                  flush=True)


def compare_start_methods(positions, moments, n_targets=200_000):
    """The FMM split over 2 processes, fork against spawn: first call and a repeat."""
    targets = targets_around(n_targets)
    fmm._ensure_self_test()
    for method in ("fork", "spawn"):
        fmm.START_METHOD = method
        _, first = timed(fmm.fmm_dipole_H, targets, positions, moments)
        _, again = timed(fmm.fmm_dipole_H, targets, positions, moments)
        print(f"{method}: first call {first:.2f} s, repeat {again:.2f} s ({n_targets:,} targets)")
    _, one = timed(fmm.fmm_dipole_H, targets, positions, moments, processes=1)
    print(f"one process: {one:.2f} s")
    fmm.START_METHOD = "fork"


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--targets", type=int, nargs="+", default=[100_000, 1_000_000])
    parser.add_argument("--eps", type=float, default=1e-6)
    parser.add_argument("--gradient", action="store_true")
    parser.add_argument("--constants", action="store_true")
    parser.add_argument("--start-methods", action="store_true")
    args = parser.parse_args()
    positions, moments, per_part = ring_of_cubes()
    print(f"imports done {time.perf_counter() - PROCESS_START:.2f} s after the script started; "
          f"load average {os.getloadavg()[0]:.1f} on {os.cpu_count()} cores")
    first_calls(positions, moments)
    if args.constants:
        measure_constants(positions, moments)
    elif args.start_methods:
        compare_start_methods(positions, moments)
    else:
        for n in args.targets:
            compare(n, positions, moments, per_part, args.eps, gradient=False)
        if args.gradient:
            compare(min(args.targets), positions, moments, per_part, args.eps, gradient=True)
    print(f"\nwhole script wall time {time.perf_counter() - PROCESS_START:.1f} s "
          "(interpreter start-up before the first line not included); "
          f"load average {os.getloadavg()[0]:.1f}")


if __name__ == "__main__":
    main()
