"""Tessellation of an arc segment (or a full ring) into a closed, outward-oriented triangle mesh.

Body frame: the arc is centred on body +x (it spans -angle/2 .. +angle/2 about body z), its axis
is body z and it is centred at z = 0. Its field is the polyhedron field of this mesh
(physics.field.polyhedron), exact for the mesh.

Segments: n equal steps of Delta = angle / n, the fewest for which the inscribed polygon's chord
sag r (1 - cos(Delta / 2)) is at most `tolerance` r (default 1e-4, i.e. 223 segments for a full
ring). The polygon's radii are then scaled by sqrt(Delta / sin Delta) (area-preserving: each
wedge's area (1/2) r_p^2 sin Delta equals the circle sector's (1/2) r^2 Delta, derived here), so
the mesh has the arc's exact volume and moment M V; its surface then lies within (2/3) tolerance
r of the true cylinder (r Delta^2 / 12 out at the vertices, r Delta^2 / 24 in at mid-chord).
"""
from __future__ import annotations

import math

import numpy as np

from trapscape.scene.errors import SceneError

ARC_SAG_TOLERANCE = 1e-4  # chord sag of the inscribed polygon, relative to the radius
_FULL_TURN = 2.0 * math.pi


def arc_segments_for(tolerance: float = ARC_SAG_TOLERANCE, angle: float = _FULL_TURN) -> int:
    """The number of segments over `angle` (radians) keeping the chord sag <= tolerance * r."""
    if not 0.0 < tolerance < 1.0:
        raise ValueError(f"sag tolerance must be in (0, 1), got {tolerance}")
    max_step = 2.0 * math.acos(1.0 - tolerance)
    n = math.ceil(angle / max_step - 1e-9)
    # at least 3 for a ring and steps below pi/2, so that sin(Delta) stays well away from 0
    n_min = 3 if _is_full_turn(angle) else 1
    return max(n, n_min, math.ceil(angle / (0.5 * math.pi) - 1e-9))


def _is_full_turn(angle: float) -> bool:
    return abs(angle - _FULL_TURN) <= 1e-9


def arc_mesh(outer_diameter: float, inner_diameter: float, height: float, angle: float,
             segments: int | None = None) -> tuple[np.ndarray, np.ndarray]:
    """(vertices (V, 3) in m, faces (F, 3)) of the arc segment; a full 2 pi gives a ring.

    inner_diameter may be 0 (a pie slice, or a cylinder for a full turn).
    """
    _validate(outer_diameter, inner_diameter, height, angle)
    full = _is_full_turn(angle)
    n = segments if segments is not None else arc_segments_for(ARC_SAG_TOLERANCE, angle)
    if n < (3 if full else 1) or angle / n >= 0.5 * math.pi + 1e-12:
        raise ValueError(f"{n} segments are too few for an angle of {angle} rad")
    step = angle / n
    scale = math.sqrt(step / math.sin(step))  # area-preserving polygon radius
    r_out = 0.5 * outer_diameter * scale
    r_in = 0.5 * inner_diameter * scale
    n_cols = n if full else n + 1
    phi = -0.5 * angle + step * np.arange(n_cols)
    if full:
        phi = step * np.arange(n_cols) - math.pi + 0.5 * step  # a ring: no seam needed at +x
    c, s = np.cos(phi), np.sin(phi)
    zb, zt = -0.5 * height, 0.5 * height
    solid = inner_diameter > 0.0

    ob = np.stack([r_out * c, r_out * s, np.full(n_cols, zb)], axis=1)
    ot = np.stack([r_out * c, r_out * s, np.full(n_cols, zt)], axis=1)
    parts = [ob, ot]
    if solid:
        parts += [np.stack([r_in * c, r_in * s, np.full(n_cols, zb)], axis=1),
                  np.stack([r_in * c, r_in * s, np.full(n_cols, zt)], axis=1)]
    else:
        parts += [np.array([[0.0, 0.0, zb], [0.0, 0.0, zt]])]
    vertices = np.concatenate(parts)
    OB, OT = 0, n_cols
    if solid:
        IB, IT = 2 * n_cols, 3 * n_cols
    else:
        CB, CT = 2 * n_cols, 2 * n_cols + 1

    k = np.arange(n)
    k1 = (k + 1) % n_cols
    tris = [
        # outer wall, normal +rho: (ob_k, ob_k+1, ot_k+1), (ob_k, ot_k+1, ot_k)
        np.stack([OB + k, OB + k1, OT + k1], axis=1),
        np.stack([OB + k, OT + k1, OT + k], axis=1),
    ]
    if solid:
        tris += [
            np.stack([IB + k, IT + k, IT + k1], axis=1),  # inner wall, normal -rho
            np.stack([IB + k, IT + k1, IB + k1], axis=1),
            np.stack([OT + k, OT + k1, IT + k1], axis=1),  # top, normal +z
            np.stack([OT + k, IT + k1, IT + k], axis=1),
            np.stack([OB + k, IB + k, IB + k1], axis=1),  # bottom, normal -z
            np.stack([OB + k, IB + k1, OB + k1], axis=1),
        ]
    else:
        tris += [
            np.stack([OT + k, OT + k1, np.full(n, CT)], axis=1),
            np.stack([OB + k, np.full(n, CB), OB + k1], axis=1),
        ]
    if not full:
        last = n_cols - 1
        if solid:
            tris += [np.array([[OB, OT, IT], [OB, IT, IB],  # end at -angle/2, normal -phi
                               [OB + last, IB + last, IT + last], [OB + last, IT + last, OT + last]])]
        else:
            tris += [np.array([[OB, OT, CT], [OB, CT, CB],
                               [OB + last, CB, CT], [OB + last, CT, OT + last]])]
    faces = np.concatenate(tris).astype(np.int64)
    return vertices, faces


def _validate(outer_diameter, inner_diameter, height, angle) -> None:
    if not (outer_diameter > 0.0 and height > 0.0 and 0.0 <= inner_diameter < outer_diameter):
        raise SceneError(
            f"an arc needs 0 <= inner diameter < outer diameter and a positive height, got "
            f"{outer_diameter}, {inner_diameter}, {height} m; fix its dimensions.")
    if not (0.0 < angle <= _FULL_TURN + 1e-9):
        raise SceneError(f"an arc's angle must be in (0, 360] degrees, got {math.degrees(angle):g}; fix it.")
