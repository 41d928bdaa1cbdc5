"""Radially magnetised parts: the trap search and the field with gradient, through the wall/8
dipole lattice (method = "dipoles", what every radial part used before issue 12) and through
the semi-analytic radial_sector form (run by hand).

    python benchmarks/radial_speed.py [--resolution N]

Two scenes of our own: a steel bead near a radial-out ring (a sensor target) and a magnet probe
inside a four-pole rotor of radial arcs. Prints, per scene and method, the time of B and dB/dx
per point on 2000 grid points, the time of the whole trap search, and the equilibria found.
"""
from __future__ import annotations

import argparse
import os
import sys
import tempfile
import time
from dataclasses import replace

import numpy as np

RING = """
title = "Radial ring target and a steel bead"
units = "mm"
[[magnet]]
name = "target"
shape = "ring"
size = [32, 24, 5]
north = "radial-out"
grade = "N42"
[probe]
kind = "soft"
diameter = 1.0
density = 7850
[search_box]
min = [-22, -22, -8]
max = [22, 22, 8]
resolution = {resolution}
"""

ROTOR = """
title = "Four-pole rotor of radial arcs and a magnet probe"
units = "mm"
[[magnet]]
name = "pole"
shape = "arc"
size = [40, 30, 8, 80]
north = "radial-out"
grade = "N40SH"
pattern = {{ kind = "circular", count = 4, axis = [0, 0, 1], polarity = "alternate" }}
[probe]
kind = "magnet"
diameter = 2.0
density = 7500
remanence = 1.2
[search_box]
min = [-14, -14, -6]
max = [14, 14, 6]
resolution = {resolution}
"""


def run(text: str, lattice: bool) -> tuple:
    from trapscape.physics.field.model import FieldModel
    from trapscape.physics.traps.search import find_traps, scan_grid_geometry
    from trapscape.scene.loader import load_scene

    with tempfile.TemporaryDirectory() as folder:
        path = os.path.join(folder, "scene.toml")
        with open(path, "w") as handle:
            handle.write(text)
        scene = load_scene(path)
    if lattice:
        scene = replace(scene, magnets=tuple(replace(m, method="dipoles") for m in scene.magnets))
    start = time.perf_counter()
    model = FieldModel.from_scene(scene)
    build = time.perf_counter() - start
    points = scan_grid_geometry(scene)[4][:2000]
    model.B_and_gradient(points[:10])  # compile outside the timing
    start = time.perf_counter()
    model.B_and_gradient(points)
    per_point = (time.perf_counter() - start) / len(points)
    start = time.perf_counter()
    report = find_traps(model, scene)
    return build, per_point, time.perf_counter() - start, len(report.equilibria)


def main(argv) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--resolution", type=int, default=40)
    args = parser.parse_args(argv)
    print(f"{'scene':<8} {'method':<14} {'build s':>8} {'B+dB us/pt':>11} {'find_traps s':>13} "
          f"{'equilibria':>11}")
    for name, text in (("ring", RING), ("rotor", ROTOR)):
        for label, lattice in (("wall/8 lattice", True), ("radial_sector", False)):
            build, per_point, total, count = run(text.format(resolution=args.resolution), lattice)
            print(f"{name:<8} {label:<14} {build:>8.2f} {per_point * 1e6:>11.1f} {total:>13.2f} "
                  f"{count:>11}")
            sys.stdout.flush()
    return 0


if __name__ == "__main__":
    np.seterr(all="ignore")
    sys.exit(main(sys.argv[1:]))
