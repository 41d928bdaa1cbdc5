"""Layer "forces" (waits for the physics it draws from)."""
from __future__ import annotations


def meshes(ctx) -> dict:
    return {}


def draw(plotter, ctx, legend) -> None:
    ctx.note("forces: not drawn yet, the physics it needs is not available.")
