"""Primitives in a body: a sphere, cylinder, ring, box or arc segment that the body's vertices
lie on (within SURFACE_TOLERANCE of its size) and whose volume it has (within
VOLUME_TOLERANCE), with the position and rotation that place it. Vertices of a CAD
tessellation lie on the exact surfaces, so the fit is taken from them; the facets cut the
curved walls, so the volume is the looser test (a 48-facet circle holds 0.3 % less area).

Candidate axes are the principal axes of inertia and the normals of the largest flat faces (a
cube's principal axes are any three). An arc's axis is off its centroid: the centre is searched
along its line of symmetry for the smallest surface distance.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from types import SimpleNamespace

import numpy as np
from scipy.optimize import minimize_scalar

from trapscape.scene.patterns import axis_angle_matrix
from trapscape.scene.shapes.axes import positive, principal_axes
from trapscape.scene.shapes.frames import frame_along
from trapscape.scene.shapes.meshops import mesh_sdf, mesh_volume

SURFACE_TOLERANCE = 2e-3  # of the body's largest extent (chosen here: CAD vertices lie on it)
COVER_TOLERANCE = 1e-2  # of the size: primitive surface to the facets (a 24-facet turn's sag)
VOLUME_TOLERANCE = 0.03  # relative (chosen here: tessellations of 20 or more facets per turn)
ARC_SCAN = 400  # centre offsets tried along an arc's line of symmetry before refining


@dataclass
class Primitive:
    shape: str  # a key of scene.shapes.SHAPES
    dims: tuple  # SI: metres, an arc's angle in radians
    position: np.ndarray  # (3,) m
    rotation: np.ndarray  # (3, 3) body -> world
    volume_deviation: float  # |V_primitive - V_body| / V_body
    surface_deviation: float  # m, the largest distance of a body vertex from the primitive
    cover_deviation: float  # m, the largest distance of the primitive's surface from the body


def recognise(vertices, faces, exact_volume=None) -> Primitive | None:
    """The primitive the body is within tolerance, or None.

    Parameters
    ----------
    vertices : (V, 3) float, m.
    faces : (F, 3) int, outward.
    exact_volume : float or None, m^3 of the CAD solid (else the mesh's volume).

    Returns
    -------
    Primitive or None.

    References
    ----------
    Derived here (least surface distance over candidate frames).
    """
    v = np.asarray(vertices, float)
    f = np.asarray(faces, np.int64)
    volume = exact_volume if exact_volume else mesh_volume(v, f)
    centroid, _, axes = principal_axes(v, f)
    size = float(np.ptp(v, axis=0).max())
    directions = _directions(v, f, axes)
    found = [_sphere(v, centroid)]
    for frame in _frames(directions):
        found.append(_box(v, centroid, frame))
    corners = v[f]
    normals = np.cross(corners[:, 1] - corners[:, 0], corners[:, 2] - corners[:, 0])
    normals /= np.maximum(np.linalg.norm(normals, axis=1), 1e-300)[:, None]
    def walls(axis):
        on = np.zeros(len(v), bool)
        on[f[np.abs(normals @ axis) < 0.5].ravel()] = True
        return on

    for axis in directions:
        found.extend(_round(v, centroid, axis, axes, walls(axis), arcs=False))
    if not _passing(found, volume, size):  # arcs cost a search: only when nothing else fits
        for k in range(3):
            axis = positive(axes[:, k])
            found.extend(_round(v, centroid, axis, axes, walls(axis), arcs=True))
    ranked = []
    for shape, dims, position, rotation, distance in (c for c in found if c is not None):
        deviation = abs(_volume(shape, dims) - volume) / volume
        if distance <= SURFACE_TOLERANCE * size and deviation <= VOLUME_TOLERANCE:
            ranked.append((distance / size + deviation, shape, dims, position, rotation,
                           deviation, distance))
    for _, shape, dims, position, rotation, deviation, distance in sorted(ranked,
                                                                           key=lambda c: c[0]):
        cover = _cover(v, f, shape, dims, position, rotation)
        if cover <= COVER_TOLERANCE * size:
            return Primitive(shape, dims, position, rotation, deviation, distance, cover)
    return None


def _passing(found, volume, size) -> bool:
    return any(c is not None and c[-1] <= SURFACE_TOLERANCE * size
               and abs(_volume(c[0], c[1]) - volume) <= VOLUME_TOLERANCE * volume for c in found)


def _cover(v, f, shape, dims, position, rotation) -> float:
    """The largest distance from the primitive's surface (its tessellation's vertices, which
    lie on it) to the body's facets, m: catches a flat or a notch that no body vertex shows."""
    from trapscape.scene.shapes import SHAPES

    points, _ = SHAPES[shape].tessellation(SimpleNamespace(dims=dims), 64)
    return float(np.abs(mesh_sdf(points @ rotation.T + position, v, f)).max())


def _volume(shape, dims) -> float:
    from trapscape.scene.shapes import SHAPES

    return SHAPES[shape].volume(SimpleNamespace(dims=dims))


def _directions(v, f, axes) -> list:
    """The normals of the three largest flat faces and the principal axes, signed by
    `positive`, without repeats."""
    corners = v[f]
    cross = np.cross(corners[:, 1] - corners[:, 0], corners[:, 2] - corners[:, 0])
    area = np.linalg.norm(cross, axis=1)
    keep = area > 0
    normals = np.array([positive(n) for n in cross[keep] / area[keep, None]])
    _, inverse = np.unique(np.round(normals, 3), axis=0, return_inverse=True)
    inverse = inverse.ravel()
    totals = np.bincount(inverse, weights=area[keep])
    found = []  # flat faces' normals first: exact, where a tessellation's axes are not quite
    for k in np.argsort(totals)[::-1][:3]:
        members = inverse == k  # the cluster's area-weighted mean normal, not its rounded key
        found.append(positive((normals[members] * area[keep][members, None]).sum(axis=0)))
    found += [positive(axes[:, k]) for k in range(3)]
    unique = []
    for d in found:
        if all(abs(abs(d @ u) - 1.0) > 1e-9 for u in unique):
            unique.append(d / np.linalg.norm(d))
    return unique


def _frames(directions) -> list:
    frames = []
    for i, first in enumerate(directions):
        for second in directions[i + 1:]:
            if abs(first @ second) < 1e-6:
                third = np.cross(first, second)
                frames.append(np.column_stack([first, second, third / np.linalg.norm(third)]))
    return frames


def _sphere(v, centroid):
    r = np.linalg.norm(v - centroid, axis=1)
    radius = float(r.max())
    return "sphere", (2.0 * radius,), centroid, np.eye(3), float(np.abs(r - radius).max())


def _box(v, centroid, frame):
    local = (v - centroid) @ frame
    low, high = local.min(axis=0), local.max(axis=0)
    distance = np.minimum(np.abs(local - low), np.abs(local - high)).min(axis=1).max()
    return ("box", tuple(float(x) for x in high - low), centroid + frame @ ((low + high) / 2),
            frame, float(distance))


def _round(v, centroid, axis, axes, walls, arcs: bool) -> list:
    """A cylinder and a ring about the axis through the centroid, or an arc whose centre lies
    on a line of symmetry through the centroid. Every vertex must lie on a cap or a wall, and
    every vertex of a wall facet (`walls`) on a wall: an extruded mesh has all its vertices on
    the caps."""
    rotation = _tilt(axis)
    local = (v - centroid) @ rotation
    z = local[:, 2]
    low, high = z.min(), z.max()
    height = float(high - low)
    caps = np.minimum(np.abs(z - low), np.abs(z - high))
    position = centroid + axis * (low + high) / 2.0
    r = np.hypot(local[:, 0], local[:, 1])
    outer = float(r.max())
    rim = walls & (np.abs(r - outer) < 0.05 * outer)
    if rim.sum() >= 3:  # a tessellation's centroid is a little off the axis: fit the rim
        centre = _circle_centre(local[rim, :2])
        local[:, :2] -= centre
        position = position + rotation @ np.array([centre[0], centre[1], 0.0])
        r = np.hypot(local[:, 0], local[:, 1])
    outer, inner = float(r.max()), float(r.min())
    size = float(np.ptp(v, axis=0).max())
    if arcs:
        found = []
        for k in range(3):
            across = axes[:, k] - (axes[:, k] @ axis) * axis
            if np.linalg.norm(across) > 0.5:
                for sign in (1.0, -1.0):
                    found.append(_arc(local, caps, walls, rotation, axis, position,
                                      sign * across / np.linalg.norm(across)))
        return found
    on_wall = np.abs(r - outer)
    found = [("cylinder", (2 * outer, height), position, rotation,
              float(max(np.minimum(caps, on_wall).max(), on_wall[walls].max(initial=0.0))))]
    if inner > SURFACE_TOLERANCE * size:
        on_wall = np.minimum(on_wall, np.abs(r - inner))
        found.append(("ring", (2 * outer, 2 * inner, height), position, rotation,
                      float(max(np.minimum(caps, on_wall).max(),
                                on_wall[walls].max(initial=0.0)))))
    return found


def _circle_centre(points) -> np.ndarray:
    """Least-squares circle centre (2,) of points (K, 2): x^2 + y^2 = 2 a x + 2 b y + c
    (I. Kasa, IEEE Trans. Instrum. Meas. 25 (1976) 8-14)."""
    matrix = np.column_stack([2.0 * points, np.ones(len(points))])
    solution = np.linalg.lstsq(matrix, (points ** 2).sum(axis=1), rcond=None)[0]
    return solution[:2]


def _tilt(axis) -> np.ndarray:
    """The rotation turning body z onto the axis about z x axis (no turn about z): the
    smallest angles to write for a round part."""
    z = np.array([0.0, 0.0, 1.0])
    turn = np.cross(z, axis)
    if np.linalg.norm(turn) < 1e-12:
        return np.eye(3) if axis[2] > 0 else frame_along(axis)
    return axis_angle_matrix(turn, float(np.arccos(np.clip(axis[2], -1.0, 1.0))))


def _arc(local, caps, walls, rotation, axis, position, middle):
    """An arc centred on -t * middle from the centroid, t chosen for the least surface
    distance; body x through the arc's middle."""
    w = rotation.T @ middle
    w = w[:2] / np.linalg.norm(w[:2])
    across = np.array([-w[1], w[0]])
    plane = local[:, :2]
    span = float(np.ptp(plane, axis=0).max())

    def fit(t):
        q = plane + t * w
        r = np.linalg.norm(q, axis=1)
        phi = np.abs(np.arctan2(q @ across, q @ w))
        outer, inner, half = r.max(), r.min(), phi.max()
        ends = r * np.abs(np.sin(np.minimum(half - phi, 0.5 * np.pi)))
        side = np.minimum(np.minimum(np.abs(r - outer), np.abs(r - inner)), ends)
        distance = max(np.minimum(caps, side).max(), side[walls].max(initial=0.0))
        return float(distance), outer, inner, half

    offsets = np.concatenate([np.linspace(0.0, 2.0 * span, ARC_SCAN // 2),
                              np.geomspace(2.0 * span, 40.0 * span, ARC_SCAN // 2)])
    scores = [fit(t)[0] for t in offsets]
    k = int(np.argmin(scores))
    bracket = (offsets[max(k - 1, 0)], offsets[min(k + 1, len(offsets) - 1)])
    best = minimize_scalar(lambda t: fit(t)[0], bounds=bracket, method="bounded",
                           options={"xatol": 1e-9 * span})
    t = float(best.x) if best.fun < scores[k] else float(offsets[k])
    distance, outer, inner, half = fit(t)
    if half >= math.pi - 1e-6:
        return None
    x = rotation @ np.array([w[0], w[1], 0.0])
    frame = np.column_stack([x, np.cross(axis, x), axis])
    return ("arc", (2 * outer, 2 * inner, float(np.ptp(local[:, 2])), 2 * half),
            position - t * x, frame, distance)
