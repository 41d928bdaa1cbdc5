"""Overlapping parts: which pairs of magnets share volume, and how deeply.

Overlap depth of parts A and B: twice the largest min(depth in A, depth in B) over the points
inside both, where depth is the distance to the part's surface (derived here). It is exact for
two spheres (2r - centre distance) and for two boxes pressed face into face (the slab's
thickness). It is found on a lattice of points in the two bounding boxes' intersection, so it is
good to about one lattice step, and an overlap thinner than ~1/20 of that intersection between
tilted parts can be missed. Touching parts (shared faces) do not count as overlapping.
"""
from __future__ import annotations

import numpy as np

from scene.measures import bounding_box, smallest_dimension

LATTICE = 21  # points per axis (odd, so the centre of the intersection is on it)


def _wedge_depth(x, y, angle):
    """Distance to the boundary rays of the wedge |phi| <= angle/2, negative outside."""
    q = np.column_stack([x, y])
    nearest = np.full(len(x), np.inf)
    for edge in (angle / 2.0, -angle / 2.0):
        u = np.array([np.cos(edge), np.sin(edge)])
        t = np.clip(q @ u, 0.0, None)
        nearest = np.minimum(nearest, np.linalg.norm(q - t[:, None] * u, axis=1))
    inside = np.abs(np.arctan2(y, x)) <= angle / 2.0
    return np.where(inside, nearest, -nearest)


def _in_hull(magnet, p) -> np.ndarray:
    """Body points inside the mesh's convex hull (outside it is outside the mesh)."""
    from scipy.spatial import ConvexHull

    hull = ConvexHull(magnet.mesh_vertices).equations
    size = float(np.ptp(magnet.mesh_vertices, axis=0).max())
    return np.all(p @ hull[:, :3].T + hull[:, 3] <= 1e-9 * size, axis=1)


def _mesh_depth(magnet, p):
    """Distance to the surface inside (winding number > 1/2), -1 outside (only the sign counts)."""
    import trimesh

    triangles = magnet.mesh_vertices[magnet.mesh_faces]
    depth = np.full(len(p), -1.0)
    in_hull = np.nonzero(_in_hull(magnet, p))[0]
    inside = in_hull[winding_number(triangles, p[in_hull]) > 0.5]
    per_chunk = max(1, 200000 // len(triangles))
    for start in range(0, len(inside), per_chunk):
        rows = inside[start:start + per_chunk]
        pairs = np.repeat(p[rows], len(triangles), axis=0)
        closest = trimesh.triangles.closest_point(np.tile(triangles, (len(rows), 1, 1)), pairs)
        depth[rows] = np.linalg.norm(closest - pairs, axis=1).reshape(len(rows), -1).min(axis=1)
    return depth


def _maybe_inside(magnet, points) -> np.ndarray:
    """A cheap superset of the points inside the part (its convex hull for a mesh)."""
    if magnet.shape != "mesh":
        return depth_inside(magnet, points) > 0
    return _in_hull(magnet, (points - magnet.position) @ magnet.rotation)


def winding_number(triangles: np.ndarray, points: np.ndarray) -> np.ndarray:
    """Generalised winding number: 1 inside a closed outward mesh, 0 outside.

    Solid angle of each triangle by Van Oosterom & Strackee, IEEE Trans. Biomed. Eng. 30, 125
    (1983): tan(omega/2) = a.(b x c) / (|a||b||c| + (a.b)|c| + (a.c)|b| + (b.c)|a|).
    """
    total = np.zeros(len(points))
    for start in range(0, len(triangles), 2000):
        tri = triangles[start:start + 2000]
        a, b, c = (tri[None, :, k, :] - points[:, None, :] for k in range(3))
        la, lb, lc = (np.linalg.norm(v, axis=2) for v in (a, b, c))
        numerator = np.einsum("ijk,ijk->ij", a, np.cross(b, c))
        denominator = (la * lb * lc + np.einsum("ijk,ijk->ij", a, b) * lc
                       + np.einsum("ijk,ijk->ij", a, c) * lb + np.einsum("ijk,ijk->ij", b, c) * la)
        total += 2.0 * np.arctan2(numerator, denominator).sum(axis=1)
    return total / (4.0 * np.pi)


def depth_inside(magnet, points: np.ndarray) -> np.ndarray:
    """(N,) distance from each world point to the part's surface, positive inside.

    Exact inside (distance to the boundary of an intersection of sets is the least of the
    distances); outside only its sign matters here.
    """
    p = (points - magnet.position) @ magnet.rotation  # world -> body
    d = magnet.dims
    if magnet.shape == "box":
        return np.min(np.asarray(d) / 2.0 - np.abs(p), axis=1)
    if magnet.shape == "sphere":
        return d[0] / 2.0 - np.linalg.norm(p, axis=1)
    if magnet.shape == "mesh":
        return _mesh_depth(magnet, p)
    rho = np.hypot(p[:, 0], p[:, 1])
    height = d[2] if magnet.shape in ("ring", "arc") else d[1]
    depth = np.minimum(d[0] / 2.0 - rho, height / 2.0 - np.abs(p[:, 2]))
    if magnet.shape in ("ring", "arc"):
        depth = np.minimum(depth, rho - d[1] / 2.0)
    if magnet.shape == "arc":
        depth = np.minimum(depth, _wedge_depth(p[:, 0], p[:, 1], d[3]))
    return depth


def overlap_depth(first, second, boxes) -> float:
    """Overlap depth of two parts in m (0 when they do not share volume)."""
    low = np.maximum(boxes[0][0], boxes[1][0])
    high = np.minimum(boxes[0][1], boxes[1][1])
    tolerance = 1e-9 + 1e-6 * min(smallest_dimension(first), smallest_dimension(second))
    if np.any(high - low <= tolerance):
        return 0.0
    axes = [np.linspace(lo, hi, LATTICE) for lo, hi in zip(low, high)]
    points = np.stack(np.meshgrid(*axes, indexing="ij"), axis=-1).reshape(-1, 3)
    points = points[_maybe_inside(first, points) & _maybe_inside(second, points)]
    if len(points) == 0:
        return 0.0
    both = np.minimum(depth_inside(first, points), depth_inside(second, points))
    deepest = 2.0 * float(both.max())
    return deepest if deepest > 2.0 * tolerance else 0.0


def overlapping_pairs(magnets) -> list:
    """[(i, j, depth_m)] for every pair of parts that share volume."""
    if len(magnets) < 2:
        return []
    boxes = [bounding_box(m) for m in magnets]
    lows = np.array([b[0] for b in boxes])
    highs = np.array([b[1] for b in boxes])
    found = []
    for i in range(len(magnets) - 1):
        touching = np.all((lows[i + 1:] < highs[i]) & (highs[i + 1:] > lows[i]), axis=1)
        for j in np.nonzero(touching)[0] + i + 1:
            depth = overlap_depth(magnets[i], magnets[j], (boxes[i], boxes[j]))
            if depth > 0.0:
                found.append((i, int(j), depth))
    return found
