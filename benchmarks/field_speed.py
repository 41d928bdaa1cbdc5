"""Field engine speed, side by side with a plain numpy dipole sum, in one run.

    python benchmarks/field_speed.py            # both cases below
    python benchmarks/field_speed.py --points 200000 --grid 64   # a quicker look

Case 1: B at 1e6 points around a 12-part mesh assembly (12 arc segments of 780 triangles, as
CAD would export them) at default accuracy. The engine runs in a fresh process, so its wall time
includes start-up and numba compilation (what a user waits for). The reference is the plain
numpy broadcast dipole sum over 15^3 cells per part, timed on a subset of the points and scaled
(it is linear in the point count). Both are compared against the exact polyhedron form.

Case 2: B and its gradient on a 128^3 grid around 12 primitives (boxes, cylinders, rings, a
sphere), analytic gradients where the closed forms have them.
"""
from __future__ import annotations

import argparse
import subprocess
import sys
import tempfile
import textwrap
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]

ARC_STEPS = 96  # facets along each arc: 4 * 96 * 2 + 4 = 772 triangles per part


def write_mesh_assembly(folder: Path) -> Path:
    """Twelve arc segments of a rotor as STL files in assembly coordinates (mm), and a scene."""
    import trimesh

    sys.path.insert(0, str(ROOT / "samples"))
    import make_meshes

    make_meshes.STEPS = ARC_STEPS
    make_meshes.SPAN_DEG = 27.0
    lines = ['title = "benchmark: 12 arc segments from STL"', 'units = "mm"', ""]
    for k in range(12):
        angle = 30.0 * k
        mesh = make_meshes.arc_segment(angle)
        assert isinstance(mesh, trimesh.Trimesh) and mesh.is_watertight
        path = folder / f"seg{k}.stl"
        mesh.export(path)
        sign = 1 if k % 2 == 0 else -1
        north = [sign * np.cos(np.radians(angle)), sign * np.sin(np.radians(angle)), 0.0]
        lines += ["[[magnet]]", f'name = "seg{k}"', 'shape = "mesh"', f'file = "{path.name}"',
                  f"north = [{north[0]:.6f}, {north[1]:.6f}, 0]", 'grade = "N42"', ""]
    scene = folder / "assembly.toml"
    scene.write_text("\n".join(lines))
    return scene


def primitive_assembly(folder: Path) -> Path:
    parts = []
    for k in range(12):
        angle = np.radians(30.0 * k)
        x, y = 30 * np.cos(angle), 30 * np.sin(angle)
        shape = ["box", "cylinder", "ring", "box"][k % 4] if k != 11 else "sphere"
        size = {"box": "size = [6, 8, 5]", "cylinder": "size = [8, 5]",
                "ring": "size = [10, 4, 5]", "sphere": "size = [8]"}[shape]
        north = "+z" if k % 2 else "+x"
        parts += ["[[magnet]]", f'shape = "{shape}"', size, f"position = [{x:.4f}, {y:.4f}, 0]",
                  f"rotation = [0, 0, {30 * k}]", f'north = "{north}"', 'grade = "N42"', ""]
    scene = folder / "primitives.toml"
    scene.write_text('units = "mm"\n\n' + "\n".join(parts))
    return scene


def run_engine(scene: Path, count: int, gradient: bool, grid: int | None) -> tuple[float, Path]:
    """Evaluate in a fresh interpreter; returns whole-process wall time and the result file."""
    out = scene.with_suffix(".npy")
    code = textwrap.dedent(f"""
        import numpy as np
        from trapscape.scene.loader import load_scene
        from trapscape.physics.field.model import FieldModel
        scene = load_scene({str(scene)!r})
        model = FieldModel.from_scene(scene)
        grid = {grid!r}
        if grid:
            axis = np.linspace(-45e-3, 45e-3, grid)
            points = np.stack(np.meshgrid(axis, axis, axis / 3, indexing="ij"), -1).reshape(-1, 3)
        else:
            points = np.random.default_rng(1).uniform(-30e-3, 30e-3, ({count}, 3))
        if {gradient!r}:
            B, G = model.B_and_gradient(points)
        else:
            B = model.B(points)
        np.save({str(out)!r}, B[:20000])
    """)
    start = time.perf_counter()
    subprocess.run([sys.executable, "-c", code], check=True, cwd=ROOT)
    return time.perf_counter() - start, out


def plain_dipole_reference(scene_path: Path, points: np.ndarray, cells: int = 15) -> np.ndarray:
    """Each part as cells^3 cubes on its bounding box, kept where the centre is inside, summed
    with numpy broadcasting (the implementation anyone would write first)."""
    from trapscape.scene.units import MU0
    from trapscape.physics.field.parts import body_bounds, body_mesh, part_volume
    from trapscape.scene.shapes.meshops import winding_number
    from trapscape.scene.loader import load_scene

    scene = load_scene(scene_path)
    B = np.zeros_like(points)
    for magnet in scene.magnets:
        lower, upper = body_bounds(magnet)
        axes = [np.linspace(lo, hi, cells, endpoint=False) + (hi - lo) / (2 * cells)
                for lo, hi in zip(lower, upper)]
        centres = np.stack(np.meshgrid(*axes, indexing="ij"), -1).reshape(-1, 3)
        vertices, faces = body_mesh(magnet)
        centres = centres[winding_number(centres, vertices, faces) > 0.5]
        moment = magnet.remanence / MU0 * part_volume(magnet) / len(centres) * magnet.north
        world = centres @ magnet.rotation.T + magnet.position
        m = magnet.rotation @ moment
        for chunk in np.array_split(np.arange(len(points)), max(1, len(points) // 2000)):
            r = points[chunk, None, :] - world[None, :, :]
            r2 = np.einsum("nkj,nkj->nk", r, r)
            mr = r @ m
            B[chunk] += MU0 / (4 * np.pi) * np.einsum(
                "nk,nkj->nj", 1 / r2**2.5, 3 * mr[..., None] * r - r2[..., None] * m)
    return B


def exact_reference(scene_path: Path, points: np.ndarray):
    """B of the exact polyhedron forms, and the local field scale of DESIGN.md Conventions,
    s = max(|B|, 0.01 sum_k |B_k|), from each part's own exact field."""
    from dataclasses import replace

    from trapscape.scene.units import MU0
    from trapscape.physics.field.model import FieldModel
    from trapscape.scene.loader import load_scene

    scene = load_scene(scene_path)
    parts = [MU0 * FieldModel.from_scene(replace(scene, magnets=(replace(m, method="exact"),)))
             .applied_H(points) for m in scene.magnets]
    truth = sum(parts)
    scale = np.maximum(np.linalg.norm(truth, axis=1),
                       0.01 * sum(np.linalg.norm(p, axis=1) for p in parts))
    return truth, scale


def scale_errors(B, truth, scale):
    return np.linalg.norm(B - truth, axis=1) / scale


def case_mesh(points_count: int) -> None:
    with tempfile.TemporaryDirectory() as tmp:
        scene = write_mesh_assembly(Path(tmp))
        engine_s, out = run_engine(scene, points_count, gradient=False, grid=None)
        B_engine = np.load(out)
        points = np.random.default_rng(1).uniform(-30e-3, 30e-3, (points_count, 3))[:len(B_engine)]
        subset = points[:2000]
        start = time.perf_counter()
        B_plain = plain_dipole_reference(scene, subset)
        plain_s = (time.perf_counter() - start) * points_count / len(subset)
        truth, scale = exact_reference(scene, subset)
        from trapscape.physics.field.model import FieldModel
        from trapscape.scene.loader import load_scene

        outside = FieldModel.from_scene(load_scene(scene)).inside_magnet(subset) < 0
        e_engine = scale_errors(B_engine[:len(subset)], truth, scale)[outside]
        e_plain = scale_errors(B_plain, truth, scale)[outside]
    print(f"case 1: B at {points_count:.0e} points, 12 mesh parts of {4 * ARC_STEPS * 2 + 4} triangles")
    print(f"  engine (fresh process, start-up and compilation included): {engine_s:8.1f} s")
    print(f"  plain numpy dipole sum, 15^3 cells/part (scaled from 2000 points): {plain_s:8.1f} s")
    print(f"  ratio plain/engine: {plain_s / engine_s:8.1f}x")
    print("  error vs the exact polyhedron forms at 2000 points outside the parts, relative to the"
          " local field scale of DESIGN.md:")
    for name, e in (("engine", e_engine), ("plain", e_plain)):
        print(f"    {name:6s} median {np.median(e):.1e}  99th percentile {np.percentile(e, 99):.1e}"
              f"  max {e.max():.1e}")


def case_grid(grid: int) -> None:
    with tempfile.TemporaryDirectory() as tmp:
        scene = primitive_assembly(Path(tmp))
        seconds, _ = run_engine(scene, 0, gradient=True, grid=grid)
    print(f"case 2: B and dB/dx on a {grid}^3 grid around 12 primitives: {seconds:.1f} s "
          "(fresh process, start-up and compilation included)")


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=1_000_000)
    parser.add_argument("--grid", type=int, default=128)
    args = parser.parse_args()
    case_mesh(args.points)
    case_grid(args.grid)


if __name__ == "__main__":
    main()
