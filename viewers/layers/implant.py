"""Layer "implant": the implant shell (physics.analysis computes it), a translucent surface
outside which |B| is below the implant limit; keep people with implanted devices outside it."""
from __future__ import annotations

import numpy as np

COLOUR = "#d9534f"
OPACITY = 0.18


def shell_mesh(ctx):
    """The shell as a pyvista surface in the scene's unit (made once per context)."""
    if "implant" not in ctx.made:
        import pyvista as pv

        shell = ctx.analysis.implant_surface
        faces = np.hstack([np.full((len(shell.faces), 1), 3), shell.faces]).ravel()
        ctx.made["implant"] = pv.PolyData(ctx.to_units(shell.points), faces)
    return ctx.made["implant"]


def meshes(ctx) -> dict:
    limit = ctx.analysis.implant_surface.limit_T
    return {f"implant shell {limit * 1e3:g} mT": shell_mesh(ctx)}


def draw(plotter, ctx, legend) -> None:
    mesh = shell_mesh(ctx)
    plotter.add_mesh(mesh, color=COLOUR, opacity=OPACITY, smooth_shading=True)
    plotter.add_mesh(mesh, color=COLOUR, style="wireframe", opacity=0.2, line_width=1)
    limit = ctx.analysis.implant_surface.limit_T
    shown = ctx.shown
    legend.add(f"implant shell, {shown.B(limit):g} {shown.field_label} (ICNIRP 2009)", COLOUR,
               "rectangle")
    ctx.note("implant: the shell of the magnets alone (steel plates left out); keep people "
             "with implanted medical devices outside it.")
