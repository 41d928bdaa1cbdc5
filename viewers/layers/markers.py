"""Layer "markers": every equilibrium as a marker whose shape tells its class (filled sphere
stable, diamond saddle, hollow ring unstable, cube marginal), labelled with its number, class,
position and holding force."""
from __future__ import annotations

import numpy as np

from viewers.layers import style
from viewers.layers.traps_data import describe_force, describe_position

FULL_LABELS = 4  # with more equilibria than this, markers carry their number and class only
CLASS_LEGEND = {
    "stable": "stable equilibrium (sphere)",
    "saddle": "saddle (diamond)",
    "unstable": "unstable (ring)",
    "marginal": "marginal (cube)",
}


def marker_radius(ctx) -> float:
    probe = float(ctx.to_units(ctx.scene.probe.diameter)) / 2.0
    return max(probe, 0.014 * ctx.size)


def marker_mesh(kind: str, centre, radius, view_direction):
    import pyvista as pv

    shape = style.MARKER_SHAPE.get(kind, "cube")
    if shape == "sphere":
        return pv.Sphere(radius=radius, center=centre, theta_resolution=32, phi_resolution=24)
    if shape == "diamond":
        return pv.Octahedron(radius=radius * 1.25, center=centre)
    if shape == "ring":
        torus = pv.ParametricTorus(ringradius=radius, crosssectionradius=radius * 0.3)
        return _face(torus, view_direction, centre)
    return pv.Cube(center=centre, x_length=1.5 * radius, y_length=1.5 * radius,
                   z_length=1.5 * radius)


def _face(mesh, direction, centre):
    """Turn a mesh built about +z so that its axis points along `direction`, then place it."""
    direction = np.asarray(direction, float) / np.linalg.norm(direction)
    helper = np.eye(3)[np.argmin(np.abs(direction))]
    u = np.cross(direction, helper)
    u /= np.linalg.norm(u)
    frame = np.column_stack([u, np.cross(direction, u), direction])
    mesh.points = np.asarray(mesh.points) @ frame.T + np.asarray(centre)
    return mesh


def label_text(equilibrium, unit: str, full: bool) -> str:
    head = f"{equilibrium.number} {equilibrium.kind}"
    if equilibrium.contact:
        head += f", on {equilibrium.contact}"
    if not full:
        return head
    lines = [head, describe_position(equilibrium.position, unit)]
    if equilibrium.closed_in:
        lines.append("closed in: no way out of the box")
    elif equilibrium.escape_force_N is not None:
        lines.append(f"holds {describe_force(equilibrium.escape_force_N)}")
    return "\n".join(lines)


def marker_meshes(ctx, view_direction=(1.0, -1.0, 1.0)) -> list:
    radius = marker_radius(ctx)
    return [(e, marker_mesh(e.kind, e.position, radius, view_direction)) for e in ctx.equilibria]


def meshes(ctx) -> dict:
    view = getattr(ctx, "view_direction", (1.0, -1.0, 1.0))
    return {f"equilibrium {e.number} {e.kind}": m for e, m in marker_meshes(ctx, view)}


def draw(plotter, ctx, legend, overlay=None) -> None:
    """overlay: a renderer drawn over the scene, so markers behind magnets stay visible."""
    import pyvista as pv

    equilibria = ctx.equilibria
    if not equilibria:
        if ctx.trap_report is not None:
            ctx.note("markers: the trap search found no equilibrium in the search box.")
        return
    view = getattr(ctx, "view_direction", (1.0, -1.0, 1.0))
    seen = []
    for equilibrium, mesh in marker_meshes(ctx, view):
        colour = style.MARKER.get(equilibrium.kind, style.MARKER["marginal"])
        if overlay is not None:
            actor = pv.Actor(mapper=pv.DataSetMapper(mesh))
            actor.prop.color = colour
            actor.prop.ambient = 0.3
            overlay.add_actor(actor, reset_camera=False)
        else:
            plotter.add_mesh(mesh, color=colour, smooth_shading=True, ambient=0.3)
        if equilibrium.kind not in seen:
            seen.append(equilibrium.kind)
    full = len(equilibria) <= FULL_LABELS
    offset = np.asarray(ctx.label_offset if hasattr(ctx, "label_offset") else (0, 0, 0), float)
    points = np.array([e.position for e in equilibria]) + offset * marker_radius(ctx) * 1.6
    plotter.add_point_labels(points, [label_text(e, ctx.unit, full) for e in equilibria],
                             font_size=int(1.7 * ctx.font_size), text_color=style.TEXT, shape_color="#ffffff",
                             shape_opacity=0.8, show_points=False, always_visible=True,
                             margin=4, justification_horizontal="left", bold=False)
    for kind in style.MARKER:
        if kind in seen:
            legend.add(CLASS_LEGEND[kind], style.MARKER[kind], style.MARKER_SHAPE[kind])
