"""Time `trapscape traps` on STL discs of growing triangle count and on the arc-rotor sample,
side by side with another installation of trapscape (run by hand).

    python benchmarks/mesh_traps_speed.py [--old PYTHON] [--sizes 1000,10000,100000]
                                          [--timeout SECONDS] [--rounds N] [--no-rotor]
    python benchmarks/mesh_traps_speed.py --queries [--sizes ...]
    python benchmarks/mesh_traps_speed.py --field [--sizes ...]

Writes the discs (10 mm across, 5 mm high, magnetised along their axis, a 2 mm steel ball as the
probe) into a temporary folder: nothing is committed. Each case runs as whole processes, this
code and then the other (PYTHON: the interpreter of a virtual environment where the previous
code is installed, e.g. `pip install` of an older commit), the pair repeated --rounds times;
prints the median wall and CPU seconds of each and their ratio. A run past --timeout is stopped
and shown as "> timeout". Both sides first run once, untimed, on a disc of 2,400 triangles with a
coarse grid, so that compiled kernels are in their caches; the equivalent-dipole fits are not cached
(TRAPSCAPE_CACHE=off), as for a part seen the first time. For the largest disc, the seconds
spent building the field model (the equivalent-dipole fit of a large mesh) are timed apart, in
this process. --queries times meshops.mesh_sdf at 2,000 points within a disc size of each disc
(wall and CPU seconds, one thread), the brute force at the same points, and the CPU seconds of
building the disc's tree. --field times the exact field (H and its gradient) of each disc at 2,000
points in a 2 mm steel ball resting on its top face near the rim, where a trap search's
finite-size re-solve samples it: the flat-region sum against the face-by-face sum, CPU per point,
on one thread, and the largest difference between them.
"""
from __future__ import annotations

import argparse
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
ROTOR = HERE.parent / "samples" / "arc_rotor.toml"

DISC_SCENE = """\
title = "Disc of {triangles} triangles (benchmark)"
units = "mm"

[[magnet]]
name = "disc"
shape = "mesh"
file = "{stl}"
north = "+z"
grade = "N42"

[probe]
kind = "soft"
diameter = 2.0
density = 7850
susceptibility = 1000
saturation = 2.0
"""


def disc_mesh(triangles: int):
    """A closed disc 10 mm across and 5 mm high of about `triangles` triangles, as CAD exports
    a cylinder: fans on the faces, one band of two triangles per facet on the side."""
    import trimesh

    sections = max(8, int(round(triangles / 4)))
    return trimesh.creation.cylinder(radius=5.0, height=5.0, sections=sections)


def write_disc(folder: Path, triangles: int, extra: str = "") -> tuple[Path, int]:
    mesh = disc_mesh(triangles)
    stl = folder / f"disc-{triangles}.stl"
    mesh.export(stl)
    scene = folder / f"disc-{triangles}{'-coarse' if extra else ''}.toml"
    scene.write_text(DISC_SCENE.format(triangles=len(mesh.faces), stl=stl.name) + extra)
    return scene, len(mesh.faces)


def run(python: str, scene: Path, timeout: float) -> tuple[float, float] | None:
    """Wall and CPU seconds of `trapscape traps SCENE` as a whole process (None past timeout)."""
    env = dict(os.environ, TRAPSCAPE_CACHE="off")
    command = [python, "-m", "trapscape.viewers.cli", "traps", str(scene), "--quiet",
               "-o", str(scene.with_suffix(".out.json"))]
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    try:
        subprocess.run(command, env=env, check=True, timeout=timeout, stdout=subprocess.DEVNULL,
                       cwd=scene.parent)
    except subprocess.TimeoutExpired:
        return None
    wall = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return wall, cpu


def model_build_seconds(scene: Path) -> float:
    """Seconds to build the field model of a scene in this process (fits not cached)."""
    os.environ["TRAPSCAPE_CACHE"] = "off"
    from trapscape.physics.field.model import FieldModel
    from trapscape.scene.loader import load_scene

    loaded = load_scene(scene)
    start = time.perf_counter()
    FieldModel.from_scene(loaded)
    return time.perf_counter() - start


def query_seconds(triangles: int, count: int = 2000) -> tuple[float, float, float]:
    """Seconds of mesh_sdf (tree; wall and CPU) and of the brute-force distance and parity
    (wall), same points; the tree's own build is timed apart (build_seconds)."""
    from trapscape.scene.shapes import meshops

    mesh = disc_mesh(triangles)
    vertices, faces = np.asarray(mesh.vertices) * 1e-3, np.asarray(mesh.faces, np.int64)
    vertices.setflags(write=False)
    faces.setflags(write=False)
    points = np.random.default_rng(0).uniform(-0.01, 0.01, (count, 3))
    seconds = []
    for query in (lambda p: meshops.mesh_sdf(p, vertices, faces),
                  lambda p: (meshops.brute_mesh_distance(p, vertices, faces),
                             meshops.brute_mesh_inside(p, vertices, faces))):
        query(points[:10])
        start, cpu = time.perf_counter(), time.process_time()
        query(points)
        seconds.append((time.perf_counter() - start, time.process_time() - cpu))
    return seconds[0][0], seconds[0][1], seconds[1][0]


def build_seconds(triangles: int) -> float:
    """CPU seconds to build the mesh tree of a disc (meshtree.build_tree, not cached)."""
    from trapscape.scene.shapes import meshtree

    mesh = disc_mesh(triangles)
    vertices, faces = np.asarray(mesh.vertices) * 1e-3, np.asarray(mesh.faces, np.int64)
    meshtree.build_tree(vertices[:8], faces[:4] % 8)  # compiled kernels into the cache
    start = time.process_time()
    meshtree.build_tree(vertices, faces)
    return time.process_time() - start


def field_seconds(triangles: int, count: int = 2000) -> tuple[float, float, float]:
    """CPU seconds a point of H and grad H by the flat regions and face by face, and the largest
    difference (relative to |M|, and |M| / size for the gradient)."""
    from trapscape.physics.field import flat_regions, polyhedron

    mesh = disc_mesh(triangles)
    vertices, faces = np.asarray(mesh.vertices) * 1e-3, np.asarray(mesh.faces, np.int64)
    rng = np.random.default_rng(0)
    directions = rng.normal(size=(count, 3))
    directions /= np.linalg.norm(directions, axis=1, keepdims=True)
    points = np.array([3.9e-3, 0.0, 3.5e-3]) + directions * rng.uniform(0.3e-3, 0.95e-3, (count, 1))
    M = np.array([0.0, 0.0, 1.0e6])
    results, seconds = [], []
    shipped = flat_regions.MIN_FACES
    for smallest in (shipped, 10**12):  # regions as shipped, then none
        flat_regions.MIN_FACES = smallest
        polyhedron._charge_tables.cache_clear()
        polyhedron.polyhedron_H_and_gradient(points[:10], vertices, faces, M)
        polyhedron.PARALLEL_MIN_WORK = flat_regions.PARALLEL_MIN_POINTS = 10**18  # one thread
        start = time.process_time()
        results.append(polyhedron.polyhedron_H_and_gradient(points, vertices, faces, M))
        seconds.append((time.process_time() - start) / count)
    flat_regions.MIN_FACES = shipped
    (H, G), (H0, G0) = results
    size = 1e-2
    error = max(np.abs(H - H0).max() / 1e6, np.abs(G - G0).max() * size / 1e6)
    return seconds[0], seconds[1], error


def shown(times: list, timeout: float) -> str:
    if any(t is None for t in times):
        return f"> {timeout:.0f}"
    return f"{statistics.median(t[0] for t in times):.1f} ({statistics.median(t[1] for t in times):.1f})"


def ratio(new: list, old: list, timeout: float) -> str:
    if any(t is None for t in new):
        return "-"
    wall = statistics.median(t[0] for t in new)
    if any(t is None for t in old):
        return f"> {timeout / wall:.0f}x"
    return f"{statistics.median(t[0] for t in old) / wall:.1f}x"


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--old", help="python of another trapscape installation to compare with")
    parser.add_argument("--sizes", default="1000,10000,100000")
    parser.add_argument("--timeout", type=float, default=900.0)
    parser.add_argument("--rounds", type=int, default=1)
    parser.add_argument("--no-rotor", action="store_true")
    parser.add_argument("--queries", action="store_true")
    parser.add_argument("--field", action="store_true")
    args = parser.parse_args(argv)
    sizes = [int(float(s)) for s in args.sizes.split(",")]
    if args.field:
        print("triangles | flat regions us a point | face by face us a point | ratio | difference")
        for n in sizes:
            regions, faces, error = field_seconds(n)
            print(f"{len(disc_mesh(n).faces)} | {regions * 1e6:.0f} | {faces * 1e6:.0f} | "
                  f"{faces / regions:.1f}x | {error:.1e}")
        return 0
    if args.queries:
        print("triangles | tree s (CPU s) | brute force s | ratio | tree build CPU s")
        for n in sizes:
            tree, cpu, brute = query_seconds(n)
            print(f"{len(disc_mesh(n).faces)} | {tree:.4f} ({cpu:.4f}) | {brute:.3f} | "
                  f"{brute / tree:.0f}x | {build_seconds(n):.3f}")
        return 0
    sides = [("this code", sys.executable)] + ([("other code", args.old)] if args.old else [])
    with tempfile.TemporaryDirectory() as folder:
        folder = Path(folder)
        cases = [write_disc(folder, n) for n in sizes]
        # caps of 600 faces: the flat-region kernels compile too
        warm_up = write_disc(folder, 2400, "\n[search_box]\nmargin = 5\nresolution = 16\n")[0]
        for _, python in sides:
            run(python, warm_up, args.timeout)  # compile and cache the kernels
        if not args.no_rotor:
            rotor = folder / ROTOR.name
            rotor.write_text(ROTOR.read_text())
            (folder / "parts").symlink_to(ROTOR.parent / "parts")
            cases.append((rotor, None))
        header = "case | " + " | ".join(f"{name}: wall s (CPU s)" for name, _ in sides)
        print(header + (" | other / this" if args.old else ""))
        for scene, triangles in cases:
            times = {name: [] for name, _ in sides}
            for _ in range(args.rounds):
                for name, python in sides:
                    times[name].append(run(python, scene, args.timeout))
            label = f"disc, {triangles} triangles" if triangles else "arc rotor sample"
            cells = [shown(times[name], args.timeout) for name, _ in sides]
            if args.old:
                cells.append(ratio(times["this code"], times["other code"], args.timeout))
            print(f"{label} | " + " | ".join(cells))
            sys.stdout.flush()
        largest = max(cases[: len(sizes)], key=lambda case: case[1])
        print(f"field model of the {largest[1]}-triangle disc (equivalent-dipole fit), this "
              f"code, in process: {model_build_seconds(largest[0]):.1f} s")
    return 0


if __name__ == "__main__":
    np.seterr(all="ignore")
    sys.exit(main())
