"""Extruded annular sectors (cylinders, rings, arcs): 2-D signed distance, support function and
tessellation, shared by the round shapes.

Body frame: axis body z, centred at z = 0, the sector spanning -angle/2 .. +angle/2 about body
+x. Distances are exact Euclidean: a 2-D distance in the xy-plane (circle, annulus, annular
sector) extruded along z (common practice for signed distance functions).

Tessellation: n equal steps of Delta = angle / n, the fewest for which the inscribed polygon's
chord sag r (1 - cos(Delta / 2)) is at most `tolerance` r (default 1e-4, i.e. 223 segments for a
full ring). The polygon's radii are then scaled by sqrt(Delta / sin Delta) (area-preserving: each
wedge's area (1/2) r_p^2 sin Delta equals the circle sector's (1/2) r^2 Delta, derived here), so
the mesh has the sector's exact volume and moment M V; its surface then lies within (2/3)
tolerance r of the true cylinder (r Delta^2 / 12 out at the vertices, r Delta^2 / 24 in at
mid-chord).
"""
from __future__ import annotations

import math

import numpy as np


def extrude(d2: np.ndarray, z: np.ndarray, height: float) -> np.ndarray:
    """Exact signed distance of a 2-D region extruded over |z| <= height / 2.

    Parameters
    ----------
    d2 : (N,) float, m, the 2-D signed distance of each point's (x, y) to the region.
    z : (N,) float, m.
    height : float, m.

    Returns
    -------
    (N,) float64, m, negative inside.

    References
    ----------
    Extrusion of a signed distance field (I. Quilez, "distance functions", common practice).
    """
    dz = np.abs(z) - 0.5 * height
    outside = np.hypot(np.maximum(d2, 0.0), np.maximum(dz, 0.0))
    return outside + np.minimum(np.maximum(d2, dz), 0.0)


def annular_sector_sdf(x: np.ndarray, y: np.ndarray, r_out: float, r_in: float, half: float) -> np.ndarray:
    """2-D signed distance (N,) to {r_in <= rho <= r_out, |phi| <= half}, half < pi.

    By symmetry about the x axis use |y|; the boundary in the upper half is then the outer and
    inner arcs (their nearest point is at the point's own angle when that lies within the arc,
    else the arc's end) and the straight end from r_in e to r_out e, e = (cos half, sin half).

    Parameters
    ----------
    x, y : (N,) float, m.
    r_out, r_in : float, m.
    half : float, rad, half the sector's angle.

    Returns
    -------
    (N,) float64, m, negative inside.

    References
    ----------
    Derived here.
    """
    y = np.abs(y)
    rho = np.hypot(x, y)
    phi = np.arctan2(y, x)
    ex, ey = math.cos(half), math.sin(half)
    within = phi <= half

    def arc_distance(r):
        return np.where(within, np.abs(rho - r), np.hypot(x - r * ex, y - r * ey))

    t = np.clip(x * ex + y * ey, r_in, r_out)
    d = np.minimum(arc_distance(r_out), np.hypot(x - t * ex, y - t * ey))
    if r_in > 0.0:
        d = np.minimum(d, arc_distance(r_in))
    inside = within & (rho >= r_in) & (rho <= r_out)
    return np.where(inside, -d, d)


def sector_support(r_in: float, r_out: float, height: float, angle: float, directions) -> np.ndarray:
    """max over the extruded annular sector of d . x for each direction d.

    A linear function over the sector is largest on its convex hull's boundary: at the outer
    arc at the direction's own angle when that lies within the sector, else at one of its four
    corners (r_in or r_out at +-angle/2); z adds |d_z| height / 2 (derived here).

    Parameters
    ----------
    r_in, r_out, height : float, m.
    angle : float, rad, in (0, 2 pi].
    directions : (K, 3) float.

    Returns
    -------
    (K,) float64, m (times |d|).

    References
    ----------
    Derived here.
    """
    d = np.asarray(directions, float).reshape(-1, 3)
    planar = np.hypot(d[:, 0], d[:, 1])
    half = 0.5 * angle
    within = np.abs(np.arctan2(d[:, 1], d[:, 0])) <= half
    corners = np.array([[r * math.cos(s * half), r * math.sin(s * half)]
                        for r in (r_in, r_out) for s in (-1.0, 1.0)])
    if angle >= 2.0 * math.pi:
        best = r_out * planar
    else:
        best = (d[:, :2] @ corners.T).max(axis=1)
        best = np.where(within, np.maximum(best, r_out * planar), best)
    return best + np.abs(d[:, 2]) * height / 2.0


ARC_SAG_TOLERANCE = 1e-4  # chord sag of the inscribed polygon, relative to the radius
_FULL_TURN = 2.0 * math.pi


def arc_segments_for(tolerance: float = ARC_SAG_TOLERANCE, angle: float = _FULL_TURN) -> int:
    """The number of segments over `angle` keeping the chord sag r (1 - cos(Delta/2)) within
    tolerance r.

    Parameters
    ----------
    tolerance : float, relative to the radius, in (0, 1).
    angle : float, rad.

    Returns
    -------
    int, at least 3 for a full turn, and steps below pi / 2.

    References
    ----------
    Chord sag of a circular arc (textbook geometry).
    """
    if not 0.0 < tolerance < 1.0:
        raise ValueError(f"sag tolerance must be in (0, 1), got {tolerance}")
    max_step = 2.0 * math.acos(1.0 - tolerance)
    n = math.ceil(angle / max_step - 1e-9)
    # at least 3 for a ring and steps below pi/2, so that sin(Delta) stays well away from 0
    n_min = 3 if _is_full_turn(angle) else 1
    return max(n, n_min, math.ceil(angle / (0.5 * math.pi) - 1e-9))


def _is_full_turn(angle: float) -> bool:
    return abs(angle - _FULL_TURN) <= 1e-9


def sector_mesh(outer_diameter: float, inner_diameter: float, height: float, angle: float,
                segments: int | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Closed outward triangle mesh of an extruded annular sector centred on body +x; a full
    2 pi gives a ring, and inner_diameter 0 a pie slice (or a cylinder for a full turn).

    Parameters
    ----------
    outer_diameter, inner_diameter, height : float, m.
    angle : float, rad, in (0, 2 pi].
    segments : int, optional; default: the fewest keeping the chord sag within
        ARC_SAG_TOLERANCE of the radius (arc_segments_for).

    Returns
    -------
    vertices : (V, 3) float64, m, body frame.
    faces : (F, 3) int64, counter-clockwise seen from outside.

    References
    ----------
    Area-preserving polygon radius r sqrt(Delta / sin Delta): derived here (module docstring).
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
        raise ValueError(
            f"an arc needs 0 <= inner diameter < outer diameter and a positive height, got "
            f"{outer_diameter}, {inner_diameter}, {height} m; fix its dimensions.")
    if not (0.0 < angle <= _FULL_TURN + 1e-9):
        raise ValueError(f"an arc's angle must be in (0, 360] degrees, got {math.degrees(angle):g}; fix it.")
