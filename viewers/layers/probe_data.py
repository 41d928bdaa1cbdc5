"""The probe's force and energy where the layers need them, from physics/probe.py (the point
model, gravity included). Points are in the scene's unit here and metres inside physics."""
from __future__ import annotations

import numpy as np


def probe_model(ctx):
    cached = getattr(ctx, "_probe_model", None)
    if cached is None:
        from trapscape.physics.probe.laws import PointProbe, ProbeLaw

        cached = PointProbe(ctx.model, ProbeLaw.from_scene(ctx.scene))
        ctx._probe_model = cached
    return cached


def admissible(ctx, points) -> np.ndarray:
    """(N,) bool: the probe's centre can be there (clearance >= d/2, in front of every plate)."""
    points_m = np.asarray(points, float).reshape(-1, 3) * ctx.scale
    clearance = ctx.model.clearance(points_m)
    return (clearance >= ctx.scene.probe.diameter / 2.0) & ctx.model.in_model(points_m)


def energy_and_force(ctx, points):
    """U (N,) in J and F (N, 3) in N at points (scene unit); zero where not admissible, with
    the admissible mask as the third value."""
    points = np.asarray(points, float).reshape(-1, 3)
    ok = admissible(ctx, points)
    U = np.zeros(len(points))
    F = np.zeros((len(points), 3))
    if ok.any():
        U[ok], F[ok] = probe_model(ctx).energy_and_force(points[ok] * ctx.scale)
    return U, F, ok


def guide_direction(ctx) -> np.ndarray:
    """The direction of a family of parallel guide lines: the constraint's line, else up
    (against gravity), else world z."""
    constraint = ctx.scene.constraint
    if constraint.kind == "line":
        direction = np.asarray(constraint.direction, float)
    else:
        gravity = np.asarray(ctx.scene.gravity, float)
        direction = -gravity if np.linalg.norm(gravity) > 0 else np.array([0.0, 0.0, 1.0])
    return direction / np.linalg.norm(direction)
