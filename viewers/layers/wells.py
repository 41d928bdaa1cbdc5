"""Layer "wells": where the probe is caught, as physics/traps.py flooded it: an interval of the
guide line (a sleeve around the tube), a region of the guide plane (a thin closed plate), or a
3D region (a closed surface). Every well is a closed surface in the scene's coordinates and unit,
so it can go into CAD as it is."""
from __future__ import annotations

import numpy as np

from trapscape.viewers.layers import style


def well_meshes(ctx) -> list:
    """[(equilibrium, closed surface)] for every equilibrium that has a well."""
    cache = ctx.made.get("wells")
    if cache is not None:
        return cache
    report = ctx.trap_report
    result = []
    thin = 0
    for equilibrium in ctx.equilibria:
        well = getattr(equilibrium.source, "well", None)
        if well is None or report is None:
            continue
        if report.grid.kind != "line" and not resolved(report.grid, well):
            thin += 1
            continue
        mesh = _line_well(ctx, well) if report.grid.kind == "line" else _region_well(ctx, report.grid, well)
        if mesh is not None and mesh.n_points:
            result.append((equilibrium, mesh))
    if thin:
        ctx.note(f"wells: {thin} wells span fewer than {MIN_SPAN} scan cells across and are not "
                 "drawn (a surface of them would be a ragged flake); a finer search-box spacing "
                 "resolves them.")
    ctx.made["wells"] = result
    return result


MIN_SPAN = 3  # scan cells a drawn well spans along each axis of its grid


def resolved(grid, well) -> bool:
    """Whether the scan grid resolves the well: it spans MIN_SPAN cells along every axis."""
    mask = np.asarray(well.cells, bool).reshape(tuple(int(n) for n in grid.shape))
    if not mask.any():
        return False
    spans = [np.ptp(np.flatnonzero(mask.any(axis=tuple(a for a in range(mask.ndim) if a != k)))) + 1
             for k in range(mask.ndim)]
    return min(spans) >= MIN_SPAN


def _line_well(ctx, well):
    import pyvista as pv

    if well.interval_m is None:
        return None
    constraint = ctx.scene.constraint
    direction = np.asarray(constraint.direction, float)
    t0, t1 = (float(ctx.to_units(t)) for t in well.interval_m)
    spacing = float(ctx.to_units(ctx.trap_report.grid.spacing))
    t0, t1 = t0 - spacing / 2.0, t1 + spacing / 2.0  # the samples' own share of the line
    start = ctx.to_units(constraint.point) + t0 * direction
    radius = 1.3 * max(float(ctx.to_units(ctx.scene.probe.diameter)) / 2.0, 0.004 * ctx.size)
    sleeve = pv.Cylinder(center=start + direction * (t1 - t0) / 2.0, direction=direction,
                         radius=radius, height=t1 - t0, resolution=48, capping=True)
    return sleeve.triangulate().clean()


def _region_well(ctx, grid, well):
    """Marching cubes on the well's cells padded with empty cells: a closed surface."""
    import pyvista as pv

    shape = tuple(int(n) for n in grid.shape)
    mask = np.asarray(well.cells, bool).reshape(shape)
    axes = np.asarray(grid.axes, float)
    spacing = float(ctx.to_units(grid.spacing))
    steps = [spacing] * len(shape)
    if len(shape) == 2:
        mask = mask[:, :, None]
        axes = np.vstack([axes, np.cross(axes[0], axes[1])])
        steps.append(0.5 * spacing)
    padded = np.pad(mask, 1).astype(float)
    image = pv.ImageData(dimensions=padded.shape, spacing=steps, origin=[-s for s in steps])
    image.point_data["well"] = padded.ravel(order="F")  # VTK: first axis fastest
    surface = image.contour([0.5], scalars="well")
    if surface.n_points == 0:
        return None
    surface = surface.smooth_taubin(n_iter=20, pass_band=0.1)
    origin = ctx.to_units(grid.origin)
    surface.points = origin + np.asarray(surface.points) @ axes
    surface.point_data.clear()
    return surface.clean()


def meshes(ctx) -> dict:
    return {f"well of equilibrium {e.number}": mesh for e, mesh in well_meshes(ctx)}


def draw(plotter, ctx, legend) -> None:
    wells = well_meshes(ctx)
    if not wells:
        thin_noted = any(note.startswith("wells:") for note in ctx.notes)
        if (ctx.trap_report is not None and not thin_noted
                and any(e.kind == "stable" for e in ctx.equilibria)):
            ctx.note("wells: the stable equilibria have no well extent in the trap report.")
        return
    for _, mesh in wells:
        plotter.add_mesh(mesh, color=style.WELL, opacity=style.WELL_OPACITY, smooth_shading=True)
        rim = mesh.extract_feature_edges(feature_angle=50, boundary_edges=False,
                                         non_manifold_edges=False, manifold_edges=False)
        if rim.n_points:  # a flat well's outline, in a darker orange to stand out on the map
            plotter.add_mesh(rim, color=style.WELL_EDGE, line_width=max(2.0, ctx.font_size / 4))
    legend.add("well: where the probe is caught", style.WELL, "rectangle")
