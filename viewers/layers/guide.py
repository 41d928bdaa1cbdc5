"""Layer "guide": the line (a tube of the probe's diameter) or plane the probe is held to."""
from __future__ import annotations

import numpy as np

from trapscape.scene.shapes.frames import perpendicular_pair
from trapscape.viewers.layers import style


def line_through_box(ctx, point, direction):
    """(start, end) of the line's chord through the search box, scene unit; None if it misses."""
    lower, upper = ctx.box_bounds
    direction = np.asarray(direction, float)
    t_low, t_high = -np.inf, np.inf
    for axis in range(3):
        if abs(direction[axis]) < 1e-12:
            if not lower[axis] <= point[axis] <= upper[axis]:
                return None
            continue
        a = (lower[axis] - point[axis]) / direction[axis]
        b = (upper[axis] - point[axis]) / direction[axis]
        t_low, t_high = max(t_low, min(a, b)), min(t_high, max(a, b))
    if t_low >= t_high:
        return None
    return point + t_low * direction, point + t_high * direction


def plane_in_box(ctx, point, normal):
    """The convex polygon where the plane crosses the search box, scene unit."""
    import pyvista as pv

    lower, upper = ctx.box_bounds
    outline = pv.Box(bounds=(lower[0], upper[0], lower[1], upper[1], lower[2], upper[2])).slice(
        normal=normal, origin=point)
    corners = np.unique(np.round(np.asarray(outline.points), 9), axis=0)
    if len(corners) < 3:
        return None
    centre = corners.mean(axis=0)
    u, v = perpendicular_pair(normal)
    order = np.argsort(np.arctan2((corners - centre) @ v, (corners - centre) @ u))
    return pv.PolyData(corners[order], faces=[len(order), *range(len(order))])


def guide_mesh(ctx):
    import pyvista as pv

    constraint = ctx.scene.constraint
    point = ctx.to_units(constraint.point)
    direction = np.asarray(constraint.direction, float)
    if constraint.kind == "line":
        chord = line_through_box(ctx, point, direction)
        if chord is None:
            return None
        radius = max(float(ctx.to_units(ctx.scene.probe.diameter)) / 2.0, 0.004 * ctx.size)
        return pv.Tube(pointa=chord[0], pointb=chord[1], radius=radius, n_sides=32, capping=True)
    if constraint.kind == "plane":
        return plane_in_box(ctx, point, direction)
    return None


def meshes(ctx) -> dict:
    mesh = guide_mesh(ctx)
    return {"guide": mesh} if mesh is not None else {}


def draw(plotter, ctx, legend) -> None:
    mesh = guide_mesh(ctx)
    if mesh is None:
        return
    kind = ctx.scene.constraint.kind
    if kind == "line":
        plotter.add_mesh(mesh, color=style.GUIDE, opacity=0.35, smooth_shading=True)
        legend.add("guide tube (probe's path)", style.GUIDE, "rectangle")
    else:
        plotter.add_mesh(mesh.extract_feature_edges(boundary_edges=True, feature_edges=False,
                                                    manifold_edges=False),
                         color=style.GUIDE, line_width=3)
        if ctx.section is None or not np.allclose(np.abs(ctx.section.normal), np.abs(
                ctx.scene.constraint.direction)):
            plotter.add_mesh(mesh, color=style.GUIDE, opacity=0.25)
        legend.add("guide plane (probe's centre)", style.GUIDE, "rectangle")
