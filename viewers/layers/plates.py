"""Layer "plates": each steel plate as a slab behind its face, across the search box."""
from __future__ import annotations

import numpy as np

from trapscape.scene.shapes.frames import perpendicular_pair
from trapscape.viewers.layers import style


def plate_slab(ctx, plate):
    """The plate's slab (scene unit): its face through `point`, `thickness` behind it, wide
    enough to cover the search box's shadow on it."""
    import pyvista as pv

    normal = np.asarray(plate.normal, float)
    point = ctx.to_units(plate.point)
    thickness = float(ctx.to_units(plate.thickness)) or 0.02 * ctx.size
    u, v = perpendicular_pair(normal)
    corners = _box_corners(ctx.box_bounds)
    span_u = (corners - point) @ u
    span_v = (corners - point) @ v
    centre = point + u * span_u.mean() + v * span_v.mean() - normal * thickness / 2.0
    slab = pv.Box(bounds=(-0.5, 0.5, -0.5, 0.5, -0.5, 0.5))
    scale = np.array([np.ptp(span_u), np.ptp(span_v), thickness])
    frame = np.column_stack([u, v, normal])
    slab.points = (np.asarray(slab.points) * scale) @ frame.T + centre
    return slab


def _box_corners(bounds):
    lower, upper = bounds
    return np.array([[x, y, z] for x in (lower[0], upper[0]) for y in (lower[1], upper[1])
                     for z in (lower[2], upper[2])])


def meshes(ctx) -> dict:
    return {f"plate {p.name}": plate_slab(ctx, p) for p in ctx.scene.plates}


def draw(plotter, ctx, legend) -> None:
    if not ctx.scene.plates:
        return
    for plate in ctx.scene.plates:
        plotter.add_mesh(plate_slab(ctx, plate), color=style.PLATE, metallic=0.6, roughness=0.4,
                         pbr=False, specular=0.4, ambient=0.2)
    legend.add("steel plate", style.PLATE, "rectangle")
