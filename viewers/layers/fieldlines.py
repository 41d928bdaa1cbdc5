"""Layer "fieldlines": 3D lines of B seeded just outside every north face, traced both ways."""
from __future__ import annotations

import numpy as np

from trapscape.viewers.layers import style
from trapscape.viewers.layers.cutaway import active, kept_side
from trapscape.viewers.layers.magnets import world_meshes

SEEDS_PER_PART = 10
MAX_SEEDS = 240


def seeds(ctx):
    import pyvista as pv


    meshes = world_meshes(ctx)
    per_part = max(2, min(SEEDS_PER_PART, MAX_SEEDS // max(len(meshes), 1)))
    points = []
    for mesh in meshes:
        north = np.flatnonzero(np.asarray(mesh.cell_data["polarity"]) == 1)
        if north.size == 0:
            continue
        faces = mesh.extract_cells(north).extract_surface(algorithm=None).compute_normals(
            cell_normals=True, point_normals=False, split_vertices=False, consistent_normals=False)
        sample = _spread(np.asarray(faces.cell_centers().points), per_part)
        normals = np.asarray(faces.cell_data["Normals"])[sample]
        points.append(np.asarray(faces.cell_centers().points)[sample] + normals * 0.01 * ctx.size)
    if not points:
        return None
    return pv.PolyData(np.concatenate(points))


def _spread(points, count):
    """Indices of `count` points spread over the set (farthest-point order, deterministic)."""
    if len(points) <= count:
        return np.arange(len(points))
    chosen = [int(np.argmin(np.linalg.norm(points - points.mean(axis=0), axis=1)))]
    distance = np.linalg.norm(points - points[chosen[0]], axis=1)
    while len(chosen) < count:
        chosen.append(int(np.argmax(distance)))
        distance = np.minimum(distance, np.linalg.norm(points - points[chosen[-1]], axis=1))
    return np.array(chosen)


def lines(ctx):
    cache = ctx.made.get("field lines")
    if cache is not None:
        return cache
    source = seeds(ctx)
    if source is None:
        return None
    grid = ctx.grid.copy()
    B = np.asarray(grid["B_T"])
    norm = np.linalg.norm(B, axis=1, keepdims=True)
    grid.point_data["direction"] = np.divide(B, norm, out=np.zeros_like(B), where=norm > 0)
    traced = grid.streamlines_from_source(
        source, vectors="direction", integration_direction="both", initial_step_length=0.5,
        step_unit="cl", max_steps=3000, max_length=4.0 * ctx.size, terminal_speed=1e-6,
        integrator_type=45)
    ctx.made["field lines"] = traced if traced.n_points else None
    return ctx.made["field lines"]


def meshes(ctx) -> dict:
    traced = lines(ctx)
    return {"field lines": traced} if traced is not None else {}


def draw(plotter, ctx, legend, colour_scale) -> None:
    traced = lines(ctx)
    if traced is None:
        ctx.note("fieldlines: no north face to seed field lines from.")
        return
    if active(ctx):
        traced = traced.copy()
        traced.point_data["kept"] = (kept_side(ctx, traced.points) >= 0).astype(float)
        traced = traced.threshold(0.5, scalars="kept", preference="point", all_scalars=True)
        if traced.n_points == 0:
            return
    plotter.add_mesh(traced, color=style.FIELD_LINE_3D, line_width=colour_scale.line_width,
                     opacity=0.8, lighting=False)
    legend.add("3D field lines of B", style.FIELD_LINE_3D, "line")
