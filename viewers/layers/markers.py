"""Layer "markers": every equilibrium as a marker whose shape tells its class (filled sphere
stable, diamond saddle, hollow ring unstable, cube marginal), labelled with its number, class,
position and holding force."""
from __future__ import annotations

import numpy as np

from trapscape.scene.shapes.frames import frame_along
from trapscape.viewers.layers import style
from trapscape.viewers.layers.labels import place_labels, text_boxes
from trapscape.viewers.layers.screen import world_to_pixels
from trapscape.viewers.layers.traps_data import describe_force, describe_position

FULL_LABELS = 4  # with more equilibria than this, markers carry their number and class only
MAX_LABELS = 6  # of many equilibria, this many (the stable ones first) carry a label
CLASS_LEGEND = {
    "stable": "stable equilibrium (sphere)",
    "saddle": "saddle (diamond)",
    "unstable": "unstable (ring)",
    "marginal": "marginal (cube)",
}


def marker_radius(ctx) -> float:
    """The probe's own radius, kept between 0.8 % and 1.8 % of the box diagonal to be seen."""
    probe = float(ctx.to_units(ctx.scene.probe.diameter)) / 2.0
    scale = getattr(ctx, "marker_scale", 1.0)  # a web view's markers are drawn bigger
    return float(np.clip(probe, 0.008 * ctx.size, 0.018 * ctx.size)) * scale


def _ball(centre, radius, view_direction):
    import pyvista as pv

    return pv.Sphere(radius=radius, center=centre, theta_resolution=32, phi_resolution=24)


def _diamond(centre, radius, view_direction):
    import pyvista as pv

    diamond = pv.Octahedron(radius=radius * 1.25, center=centre)
    diamond.clear_data()
    return diamond


def _torus(centre, radius, view_direction):
    import pyvista as pv

    torus = pv.ParametricTorus(ringradius=radius, crosssectionradius=radius * 0.3)
    return _face(torus, view_direction, centre)


def _cube(centre, radius, view_direction):
    import pyvista as pv

    return pv.Cube(center=centre, x_length=1.5 * radius, y_length=1.5 * radius,
                   z_length=1.5 * radius)


GLYPH_MESHES = {"sphere": _ball, "diamond": _diamond, "ring": _torus, "cube": _cube}


def marker_mesh(kind: str, centre, radius, view_direction):
    """The glyph of an equilibrium class (style.MARKER_SHAPE), centred and sized."""
    glyph = GLYPH_MESHES.get(style.MARKER_SHAPE.get(kind, "cube"), _cube)
    return glyph(centre, radius, view_direction)


def _face(mesh, direction, centre):
    """Turn a mesh built about +z so that its axis points along `direction`, then place it."""
    frame = frame_along(direction)
    mesh.points = np.asarray(mesh.points) @ frame.T + np.asarray(centre)
    return mesh


MULTIPLE = "\u00d7"  # the times sign before a family's member count


def _times(equilibrium) -> str:
    """' ×6' when the marker stands for a family of six equivalent points, else ''."""
    return f" {MULTIPLE}{equilibrium.count}" if equilibrium.count > 1 else ""


def label_text(equilibrium, unit: str, full: bool, scale: float | None = None,
               ctx=None) -> str:
    """A marker's label; with a view context, its position and force in the reader's units."""
    head = f"{equilibrium.number} {equilibrium.kind}{_times(equilibrium)}"
    if equilibrium.contact:
        head += f", on {equilibrium.contact}"
    if not full:
        return head
    where = (describe_position(equilibrium.position, unit, scale) if ctx is None
             else ctx.position_words(equilibrium.position))
    force_words = describe_force if ctx is None else ctx.shown.force_text
    lines = [head, where]
    if equilibrium.closed_in:
        lines.append("closed in: no way out of the box")
    elif equilibrium.escape_force_N is not None:
        lines.append(f"holds {force_words(equilibrium.escape_force_N)}")
    return "\n".join(lines)


def marker_meshes(ctx, view_direction=(1.0, -1.0, 1.0)) -> list:
    radius = marker_radius(ctx)
    return [(e, marker_mesh(e.kind, e.position, radius, view_direction)) for e in ctx.equilibria]


def meshes(ctx) -> dict:
    view = getattr(ctx, "view_direction", (1.0, -1.0, 1.0))
    return {f"equilibrium {e.number} {e.kind}": m for e, m in marker_meshes(ctx, view)}


def ranked(equilibria) -> list:
    """Stable ones first (firmest first), then marginal, saddle, unstable, in report order."""
    order = {kind: i for i, kind in enumerate(("stable", "marginal", "saddle", "unstable"))}
    return sorted(equilibria, key=lambda e: (order.get(e.kind, 9), -(e.escape_force_N or 0.0),
                                             e.number))


def labelled(equilibria) -> list:
    """Which markers carry a label: all of a few; of many, the stable and marginal ones."""
    if len(equilibria) <= MAX_LABELS:
        return list(equilibria)
    return [e for e in ranked(equilibria) if e.kind in ("stable", "marginal")][:MAX_LABELS]


def table_rows(ctx) -> list:
    """One line per equilibrium for the picture's table (the firmest first)."""
    rows = []
    for e in ranked(ctx.equilibria):
        text = f"{e.number} {e.kind}{_times(e)} {ctx.position_words(e.position)}"
        if e.closed_in:
            text += ", closed in"
        elif e.escape_force_N is not None and e.kind in ("stable", "marginal"):
            text += f", holds {ctx.shown.force_text(e.escape_force_N)}"
        if e.contact:
            text += f", on {e.contact}"
        rows.append(text)
    return rows


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
            mapper = pv.DataSetMapper(mesh)
            mapper.scalar_visibility = False
            actor = pv.Actor(mapper=mapper)
            actor.prop.color = colour
            actor.prop.ambient = 0.3
            actor.prop.interpolation = "gouraud"
            overlay.add_actor(actor, reset_camera=False)
        else:
            plotter.add_mesh(mesh, color=colour, smooth_shading=True, ambient=0.3, scalars=None)
        if equilibrium.kind not in seen:
            seen.append(equilibrium.kind)
    full = len(equilibria) <= FULL_LABELS
    chosen = labelled(equilibria)
    ctx.pending_labels = [(e, label_text(e, ctx.unit, full, ctx.size, ctx)) for e in chosen]
    ctx.equilibria_table = [] if full else table_rows(ctx)
    for kind in style.MARKER:
        if kind in seen:
            legend.add(CLASS_LEGEND[kind], style.MARKER[kind], style.MARKER_SHAPE[kind])
    if any(e.count > 1 for e in equilibria):
        legend.add(f"{MULTIPLE}n: one marker for n equivalent points", style.TEXT, "none")


def draw_labels(plotter, ctx, area, obstacles=(), renderer=None) -> list:
    """After the camera is set and the text around the picture drawn: every chosen label placed
    in screen space (viewers.layers.labels) inside `area` (x0, y0, x1, y1 display pixels), clear
    of `obstacles`, of the other labels and of the markers. Returns what was placed."""
    pending = getattr(ctx, "pending_labels", [])
    if not pending:
        return []
    height = plotter.window_size[1]
    font = max(5, int(round(0.9 * ctx.font_size)))
    pixels = world_to_pixels(plotter, [e.position for e in ctx.equilibria])
    every = [(col, height - 1 - row) for col, row in pixels]
    where = {e.number: xy for e, xy in zip(ctx.equilibria, every)}
    anchors = [where[e.number] for e, _ in pending]
    marker_px = _marker_pixels(plotter, ctx)
    items = []
    for (equilibrium, text), anchor in zip(pending, anchors):
        texts = [text] + [t for t in (text.split("\n")[0], str(equilibrium.number)) if t != text]
        items.append((anchor, list(dict.fromkeys(texts))))
    obstacles = list(obstacles) + [box for _, box in text_boxes(plotter.renderer, labels=False)]
    placed = place_labels(plotter, items, font, area, obstacles, marker_px, markers=every,
                          renderer=renderer)
    if len(placed) < len(items):
        ctx.note(f"markers: {len(items) - len(placed)} of {len(items)} labels found no free "
                 "place in the picture; the table lists every equilibrium.")
    return placed


def _marker_pixels(plotter, ctx) -> float:
    """The marker's radius on the picture, pixels."""
    camera = plotter.camera
    # 1.6: a diamond (1.25 radii) seen obliquely reaches past the sphere it stands for
    return float(marker_radius(ctx) * 1.6 * plotter.window_size[1] / (2 * camera.parallel_scale))
