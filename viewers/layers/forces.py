"""Layer "forces": the force on the probe (magnetic + gravity, physics.analysis.views) on a lattice:
in the box for a free probe, on the guide plane (its in-plane part) or along the guide line (its
part along the line). Arrows point along the force; their length grows with log |F|."""
from __future__ import annotations

import numpy as np

from trapscape.physics.analysis.views import allowed_force, probe_energy_and_force
from trapscape.scene.shapes.frames import perpendicular_pair
from trapscape.viewers.layers import style
from trapscape.viewers.layers.guide import line_through_box, plane_in_box

LATTICE_FREE = 9  # points on the longest side of the box
LATTICE_PLANE = 17
LATTICE_LINE = 15
DECADES = 3.0  # forces below 1/1000 of the largest get the shortest arrow


def lattice(ctx) -> np.ndarray:
    lower, upper = ctx.box_bounds
    constraint = ctx.scene.constraint
    if constraint.kind == "line":
        chord = line_through_box(ctx, ctx.to_units(constraint.point), constraint.direction)
        if chord is None:
            return np.zeros((0, 3))
        t = (np.arange(LATTICE_LINE) + 0.5) / LATTICE_LINE
        return chord[0] + t[:, None] * (chord[1] - chord[0])
    if constraint.kind == "plane":
        polygon = plane_in_box(ctx, ctx.to_units(constraint.point), constraint.direction)
        if polygon is None:
            return np.zeros((0, 3))
        return _plane_lattice(np.asarray(polygon.points), np.asarray(constraint.direction, float))
    step = float((upper - lower).max()) / LATTICE_FREE
    axes = [np.arange(lo + step / 2, hi, step) for lo, hi in zip(lower, upper)]
    return np.stack(np.meshgrid(*axes, indexing="ij"), axis=-1).reshape(-1, 3)


def _plane_lattice(corners, normal) -> np.ndarray:
    u, v = perpendicular_pair(normal)
    centre = corners.mean(axis=0)
    cu, cv = (corners - centre) @ u, (corners - centre) @ v
    step = max(np.ptp(cu), np.ptp(cv)) / LATTICE_PLANE
    a = np.arange(cu.min() + step / 2, cu.max(), step)
    b = np.arange(cv.min() + step / 2, cv.max(), step)
    A, B = np.meshgrid(a, b, indexing="ij")
    return centre + A.reshape(-1, 1) * u + B.reshape(-1, 1) * v


def arrows(ctx):
    """(glyph mesh, smallest and largest |F| in N) or None."""
    import pyvista as pv

    points = lattice(ctx)
    if len(points) == 0:
        return None
    _, force, ok = probe_energy_and_force(ctx.analysis, np.asarray(points, float) * ctx.scale)
    force = allowed_force(ctx.scene, force)
    size = np.linalg.norm(force, axis=1)
    keep = ok & (size > 0)
    if not keep.any():
        return None
    points, force, size = points[keep], force[keep], size[keep]
    top = size.max()
    t = np.clip(1.0 + np.log10(size / top) / DECADES, 0.0, 1.0)
    spacing = _spacing(points)
    cloud = pv.PolyData(points)
    cloud.point_data["direction"] = force / size[:, None]
    cloud.point_data["length"] = spacing * (0.3 + 0.6 * t)
    cloud.point_data["force_N"] = force
    glyphs = cloud.glyph(orient="direction", scale="length", factor=1.0,
                         geom=pv.Arrow(start=(-0.5, 0, 0), tip_length=0.35, tip_radius=0.12,
                                       shaft_radius=0.04))
    return glyphs, float(size.min()), float(top)


def _spacing(points) -> float:
    if len(points) < 2:
        return 1.0
    from scipy.spatial import cKDTree

    distances, _ = cKDTree(points).query(points, k=2)
    return float(np.median(distances[:, 1]))


def meshes(ctx) -> dict:
    result = arrows(ctx)
    return {"force arrows": result[0]} if result else {}


def draw(plotter, ctx, legend) -> None:
    result = arrows(ctx)
    if result is None:
        ctx.note("forces: no lattice point where the probe fits.")
        return
    glyphs, low, high = result
    plotter.add_mesh(glyphs, color=style.FORCE, smooth_shading=True, scalars=None)
    legend.add(f"force on the probe, longer = stronger ({ctx.shown.force_text(low)} to "
               f"{ctx.shown.force_text(high)})", style.FORCE, "line")
