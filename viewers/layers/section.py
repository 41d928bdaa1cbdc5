"""Layer "section": |B| in mT on an axis-aligned plane through the traps, with its field lines.

The plane contains the guide line when the probe rides one, is the guide plane when it slides on
one, and otherwise faces the camera as squarely as an axis plane can; it passes through the
headline trap (else the constraint's point, else the middle of the search box)."""
from __future__ import annotations

import numpy as np

from trapscape.viewers.layers import style
from trapscape.viewers.layers.context import Section
from trapscape.viewers.layers.cutaway import towards_camera

PREFERENCE = (1, 0, 2)  # y, then x, then z: the front view first
SEPARATION = 11  # cells between neighbouring 2D field lines (of about 220 on the long side)


def choose_section(ctx, view_direction, axis=None, level=None) -> Section:
    scene = ctx.scene
    if axis is None:
        axis = _auto_axis(scene.constraint, np.asarray(view_direction, float))
    if level is None:
        through = _through_point(ctx)
        level = float(through[axis])
    lower, upper = ctx.box_bounds
    level = float(np.clip(level, lower[axis], upper[axis]))
    if abs(level) < 1e-6 * ctx.size:  # a solver's 1e-10 off a symmetry plane reads as 0
        level = 0.0
    return Section(axis=int(axis), level=level)


def _auto_axis(constraint, view) -> int:
    direction = np.asarray(constraint.direction, float)
    if constraint.kind == "plane":
        return int(np.argmax(np.abs(direction)))
    candidates = list(PREFERENCE)
    if constraint.kind == "line":
        candidates = [a for a in PREFERENCE if abs(direction[a]) < 0.5] or candidates
    scores = [abs(view[a]) for a in candidates]
    best = max(scores)
    if best < 0.3:  # the view looks along the line: cut across it instead
        return int(np.argmax(np.abs(view)))
    return candidates[scores.index(best)]  # first of the best, in order of preference


def _through_point(ctx) -> np.ndarray:
    headline = ctx.headline
    if headline is not None:
        return headline.position
    constraint = ctx.scene.constraint
    if constraint.kind != "free":
        return ctx.to_units(constraint.point)
    return ctx.box_bounds.mean(axis=0)


def section_grid(ctx):
    """The sampled plane (ImageData one point thick along the axis) with the field arrays and
    `free` (1 outside the magnets and in front of every plate)."""
    cache = ctx.made.get("section grid")
    if cache is not None and cache[0] == (ctx.section.axis, ctx.section.level):
        return cache[1]
    import pyvista as pv

    axis, level = ctx.section.axis, ctx.section.level
    lower, upper = ctx.box_bounds.copy()
    others = [a for a in range(3) if a != axis]
    step = float((upper[others] - lower[others]).max()) / (ctx.section_resolution - 1)
    dims = [1, 1, 1]
    spacing = [step] * 3
    for a in others:
        dims[a] = int(np.floor((upper[a] - lower[a]) / step + 1e-9)) + 1
    origin = lower.copy()
    origin[axis] = level
    grid = pv.ImageData(dimensions=dims, spacing=spacing, origin=origin)
    ctx.field_on(grid)
    grid.point_data["free"] = ((grid["inside_magnet"] < 0) & (grid["in_model"] > 0)).astype(float)
    ctx.made["section grid"] = ((axis, level), grid)
    return grid


def field_map(ctx):
    """The section's free part (cells with every corner outside the magnets)."""
    grid = section_grid(ctx)
    if not np.any(grid["free"] > 0.5):
        return None
    return grid.threshold(0.5, scalars="free", preference="point", all_scalars=True)


def field_lines(ctx):
    """Evenly spaced 2D lines of the in-plane B, kept where they run through free space."""
    import pyvista as pv

    grid = section_grid(ctx)
    axis = ctx.section.axis
    others = [a for a in range(3) if a != axis]
    dims = [grid.dimensions[a] for a in others]
    B = np.asarray(grid["B_T"])[:, others]
    norm = np.linalg.norm(B, axis=1, keepdims=True)
    unit = np.divide(B, norm, out=np.zeros_like(B), where=norm > 0)
    flat = pv.ImageData(dimensions=(dims[0], dims[1], 1), spacing=(grid.spacing[others[0]],
                        grid.spacing[others[1]], 1.0), origin=(0.0, 0.0, 0.0))
    # VTK orders points x fastest; dropping the normal axis keeps that order, so the (u, v)
    # image with u = the lower remaining axis takes the values as they are
    flat.point_data["direction"] = np.column_stack([unit, np.zeros(flat.n_points)])
    flat.point_data["free"] = np.asarray(grid["free"])
    flat.set_active_vectors("direction")
    lines = _longest_trace(flat, dims, step=float(max(flat.spacing[0], flat.spacing[1])))
    if lines is None:
        return None
    if lines.n_points == 0:
        return None
    kept = lines.threshold(0.999, scalars="free", preference="point", all_scalars=True)
    if kept.n_points == 0:
        return None
    kept = kept.extract_surface(algorithm=None)
    local = np.asarray(kept.points)
    world = np.zeros_like(local)
    lower = np.asarray(grid.origin, float)
    world[:, others[0]] = lower[others[0]] + local[:, 0]
    world[:, others[1]] = lower[others[1]] + local[:, 1]
    world[:, axis] = ctx.section.level
    kept.points = world
    return kept


def _longest_trace(flat, dims, step):
    """2D field lines traced both ways from seeds on a coarse lattice of the free part of the
    section (VTK's stream tracer; its evenly-spaced 2D variant crashed on some sections)."""
    import pyvista as pv

    free = np.asarray(flat["free"]) > 0.5
    lattice = np.zeros(tuple(dims[::-1]), dtype=bool)  # (v, u): VTK orders u fastest
    stride = 2 * SEPARATION  # traced both ways, so seeds sparser than the wanted line spacing
    lattice[stride // 2::stride, stride // 2::stride] = True
    seeds = np.asarray(flat.points)[lattice.ravel() & free]
    if len(seeds) == 0:
        return None
    lines = flat.streamlines_from_source(
        pv.PolyData(seeds), vectors="direction", integration_direction="both",
        initial_step_length=0.5, step_unit="cl", max_steps=4000,
        max_length=0.6 * float(max(dims)) * step)
    return lines if lines.n_points else None


def meshes(ctx) -> dict:
    result = {}
    surface = field_map(ctx)
    if surface is not None:
        result["section"] = surface.extract_surface(algorithm=None)
    return result


def draw(plotter, ctx, legend, colour_scale) -> None:
    surface = field_map(ctx)
    if surface is None:
        ctx.note("section: the section plane lies wholly inside magnets or behind a plate.")
        return
    plotter.add_mesh(surface, scalars=colour_scale.scalars(surface), **colour_scale.mesh_kwargs(),
                     lighting=False, show_scalar_bar=False)
    lines = field_lines(ctx)
    if lines is not None:
        lift = towards_camera(ctx) * 2e-3 * ctx.size
        lines.points = np.asarray(lines.points) + lift
        plotter.add_mesh(lines, color=style.FIELD_LINE_2D, line_width=colour_scale.line_width,
                         opacity=0.85, lighting=False)
        legend.add(f"field lines on the section ({ctx.section_words()})",
                   style.FIELD_LINE_2D, "line")
    colour_scale.used = True
