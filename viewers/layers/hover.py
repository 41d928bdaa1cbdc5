"""Layer "hover": for a family of parallel guide lines (every line along the guide's direction,
or every vertical line when the probe is free), the surface where the probe would come to rest
on its line: the force along the line (magnetic + gravity, physics/probe.py) is zero there and
restoring (its derivative along the line is negative)."""
from __future__ import annotations

import numpy as np

from trapscape.physics.analysis.views import guide_direction, probe_energy_and_force
from trapscape.viewers.layers import style

RESOLUTION = 48  # grid points on the longest side


def sheet(ctx):
    """The hover sheet (scene unit), or None where the force along the lines never balances."""
    if "hover sheet" in ctx.made:
        return ctx.made["hover sheet"]
    import pyvista as pv

    lower, upper = ctx.box_bounds
    step = float((upper - lower).max()) / (RESOLUTION - 1)
    dims = np.maximum(np.floor((upper - lower) / step + 1e-9).astype(int) + 1, 2)
    grid = pv.ImageData(dimensions=tuple(int(d) for d in dims), spacing=(step,) * 3,
                        origin=tuple(lower))
    direction = guide_direction(ctx.scene)
    _, force, ok = probe_energy_and_force(ctx.analysis, np.asarray(grid.points, float) * ctx.scale)
    along = force @ direction
    grid.point_data["force_along_N"] = along
    grid.point_data["admissible"] = ok.astype(float)
    slope = np.asarray(grid.compute_derivative(scalars="force_along_N")["gradient"]) @ direction
    grid.point_data["slope_N_per_unit"] = slope
    surface = grid.contour([0.0], scalars="force_along_N")
    result = None
    if surface.n_points:
        surface.point_data["keep"] = ((np.asarray(surface["admissible"]) > 0.999)
                                      & (np.asarray(surface["slope_N_per_unit"]) < 0)).astype(float)
        kept = surface.threshold(0.5, scalars="keep", preference="point", all_scalars=True)
        if kept.n_points:
            result = kept.extract_surface(algorithm=None)
    ctx.made["hover sheet"] = result
    return result


def meshes(ctx) -> dict:
    surface = sheet(ctx)
    return {"hover sheet": surface} if surface is not None else {}


def draw(plotter, ctx, legend) -> None:
    surface = sheet(ctx)
    if surface is None:
        ctx.note("hover: the force along the guide lines balances nowhere in the search box.")
        return
    plotter.add_mesh(surface, color=style.HOVER, opacity=0.55, smooth_shading=True,
                     specular=0.2, scalars=None)
    axis = "".join(a for a, v in zip("xyz", guide_direction(ctx.scene)) if abs(v) > 0.999) or "the guide"
    legend.add(f"hover sheet: rest points on lines along {axis}", style.HOVER, "rectangle")
