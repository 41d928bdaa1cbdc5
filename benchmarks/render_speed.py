"""Time a 1600x1200 render of a sample beyond its physics: field sampling (3D grid, section
plane, probe force for the hover sheet) and the trap search are timed first, then the drawing
and the PNG alone. Target: the render part <= 10 s.

    python benchmarks/render_speed.py [SAMPLE ...] [--layers SPEC]
"""
from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent

from trapscape.viewers.render import prefer_egl  # noqa: E402

prefer_egl()

TARGET_S = 10.0


def time_sample(name: str, spec: str | None, size=(1600, 1200)) -> tuple[float, float]:
    from trapscape.scene.loader import load_scene
    from trapscape.viewers.layers import layer_module, parse_layers
    from trapscape.viewers.layers.context import ViewContext
    from trapscape.viewers.layers.section import section_grid
    from trapscape.viewers.render import RenderOptions, prepare, render_png

    scene = load_scene(str(ROOT / "samples" / f"{name}.toml"))
    layers = parse_layers(spec, scene)
    options = RenderOptions(layers=layers, size=size)
    start = time.perf_counter()
    ctx = ViewContext.of(scene)
    ctx.grid
    ctx.equilibria  # the trap search
    prepare(ctx, options)
    if ctx.section is not None:
        section_grid(ctx)
    for layer in ("hover", "forces", "wells"):  # their physics: the probe's force on grids
        if layer in layers:
            layer_module(layer).meshes(ctx)
    physics = time.perf_counter() - start
    with tempfile.TemporaryDirectory() as folder:
        start = time.perf_counter()
        render_png(ctx, options, str(Path(folder) / "view.png"))
        drawing = time.perf_counter() - start
    return physics, drawing


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("samples", nargs="*", default=["level_gauge", "bead_chip"])
    parser.add_argument("--layers", default=None, help="as trapscape render --layers")
    args = parser.parse_args()
    worst = 0.0
    print(f"{'sample':<18} {'physics (s)':>12} {'render 1600x1200 (s)':>22}")
    for name in args.samples:
        physics, drawing = time_sample(name, args.layers)
        worst = max(worst, drawing)
        print(f"{name:<18} {physics:>12.2f} {drawing:>22.2f}")
    verdict = "meets" if worst <= TARGET_S else "misses"
    print(f"slowest render {worst:.2f} s: {verdict} the {TARGET_S:.0f} s target")
    return 0 if worst <= TARGET_S else 1


if __name__ == "__main__":
    sys.exit(main())
