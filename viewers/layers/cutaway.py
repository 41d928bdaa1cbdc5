"""A section view's cutaway: the parts between the camera and the section plane are taken away
(drawn as faint outlines), parts the plane passes through are cut and capped, so the section
map is seen whole."""
from __future__ import annotations

import numpy as np


def towards_camera(ctx) -> np.ndarray:
    """The section's normal turned to face the camera."""
    normal = ctx.section.normal
    view = np.asarray(getattr(ctx, "view_direction", normal), float)
    return normal if normal @ view >= 0 else -normal


def kept_side(ctx, points) -> np.ndarray:
    """Distance behind the section plane as the camera sees it (>= 0: kept), scene unit."""
    origin = ctx.section.normal * ctx.section.level
    return -(np.asarray(points, float) - origin) @ towards_camera(ctx)


def active(ctx) -> bool:
    return ctx.section is not None and getattr(ctx, "cutaway", False)


def hidden_parts(ctx, meshes) -> set:
    """Indices of the parts wholly on the camera's side of the section."""
    if not active(ctx):
        return set()
    tolerance = 1e-9 * ctx.size
    return {i for i, mesh in enumerate(meshes) if np.all(kept_side(ctx, mesh.points) < tolerance)}


def cut_part(ctx, mesh):
    """The part's half behind the plane, capped with body-grey cells (polarity 0)."""
    distances = kept_side(ctx, mesh.points)
    if np.all(distances >= -1e-9 * ctx.size):
        return mesh
    normal = towards_camera(ctx)
    origin = ctx.section.normal * ctx.section.level
    kept = mesh.clip(normal=normal, origin=origin, invert=True)
    closed = mesh.clip_closed_surface(normal=normal, origin=origin)
    on_plane = np.abs(kept_side(ctx, closed.cell_centers().points)) < 1e-6 * ctx.size
    if on_plane.any():
        cap = closed.extract_cells(np.flatnonzero(on_plane)).extract_surface(algorithm=None)
        cap.cell_data.clear()
        cap.point_data.clear()
        cap.cell_data["polarity"] = np.zeros(cap.n_cells, np.int8)
        cap.cell_data["part"] = np.full(cap.n_cells, int(mesh.cell_data["part"][0]), np.int32)
        kept = kept.extract_surface(algorithm=None) + cap
    return kept


def parts_behind(ctx, meshes) -> list:
    """Indices of the parts wholly behind the section plane as the camera sees it: an opaque
    section map would hide them."""
    if ctx.section is None:
        return []
    tolerance = 1e-9 * ctx.size
    return [i for i, mesh in enumerate(meshes) if np.all(kept_side(ctx, mesh.points) > tolerance)]


def outline_parts_behind(target, ctx, legend, meshes, hidden=()) -> None:
    """The edges of the parts (`meshes`, world) behind the section, drawn on `target` (the overlay renderer
    over the picture, or the plotter), north-face edges dark and the rest mid grey, so that no
    magnet disappears behind the map."""
    import pyvista as pv

    from trapscape.viewers.layers import style

    behind = [i for i in parts_behind(ctx, meshes) if i not in hidden]
    if not behind:
        return
    width = max(2.0, getattr(ctx, "font_size", 8) / 4)
    for index in behind:
        mesh = meshes[index]
        for value, colour in ((0, "#5a5a5a"), (1, style.NORTH_FACE), (-1, "#8a7f5c")):
            pick = np.flatnonzero(np.asarray(mesh.cell_data["polarity"]) == value)
            if not pick.size:
                continue
            edges = mesh.extract_cells(pick).extract_surface(algorithm=None).extract_feature_edges(
                feature_angle=30, boundary_edges=True, non_manifold_edges=False,
                manifold_edges=False)
            if edges.n_points == 0:
                continue
            mapper = pv.DataSetMapper(edges)
            mapper.scalar_visibility = False
            actor = pv.Actor(mapper=mapper)
            actor.prop.color = colour
            actor.prop.line_width = width
            actor.prop.lighting = False
            target.add_actor(actor, reset_camera=False)
    legend.add("magnet behind the section (outline)", "#5a5a5a", "line")
