"""Overlapping parts: which pairs of magnets share volume, and how deeply.

Overlap depth of parts A and B: twice the largest min(depth in A, depth in B) over the points
inside both, where depth is the distance to the part's surface (derived here). It is exact for
two spheres (2r - centre distance) and for two boxes pressed face into face (the slab's
thickness). It is found on a lattice of points in the two bounding boxes' intersection, so it is
good to about one lattice step, and an overlap thinner than ~1/20 of that intersection between
tilted parts can be missed (for meshes of many triangles the lattice is thinned further). Touching parts (shared faces) do not count as overlapping.
"""
from __future__ import annotations

import numpy as np

from trapscape.scene.measures import bounding_box, smallest_dimension
from trapscape.scene.shapes import shape_of
from trapscape.scene.shapes.frames import to_body
from trapscape.scene.shapes.meshops import winding_number

LATTICE = 21  # points per axis (odd, so the centre of the intersection is on it)
PAIR_BUDGET = 4e6  # point-triangle pairs of winding numbers per mesh test (~0.3 s of numpy)
MAX_HULL_FACES = 2000
MAX_SURFACE_SAMPLES = 200000


def _in_hull(magnet, p) -> np.ndarray:
    """Body points inside the mesh's convex hull (outside it is outside the mesh).

    A hull of many faces is not worth it (the test would cost as much as the winding number):
    then every point passes.
    """
    hull = _cached(magnet, "hull", lambda: _hull_equations(magnet.mesh_vertices))
    if hull is None:
        return np.ones(len(p), dtype=bool)
    size = float(np.ptp(magnet.mesh_vertices, axis=0).max())
    return np.all(p @ hull[:, :3].T + hull[:, 3] <= 1e-9 * size, axis=1)


def _hull_equations(vertices):
    from scipy.spatial import ConvexHull

    equations = ConvexHull(vertices).equations
    return equations if len(equations) <= MAX_HULL_FACES else None


_CACHE: dict = {}


def _cached(magnet, what, make):
    """Per-mesh helpers, kept while the mesh's vertex array lives (patterns share one array)."""
    key = (id(magnet.mesh_vertices), what)
    if key not in _CACHE or _CACHE[key][0] is not magnet.mesh_vertices:
        if len(_CACHE) > 64:
            _CACHE.clear()
        _CACHE[key] = (magnet.mesh_vertices, make())
    return _CACHE[key][1]


def surface_samples(triangles: np.ndarray, spacing: float) -> np.ndarray:
    """Points on every triangle, a barycentric grid no coarser than `spacing` (with corners)."""
    edges = np.linalg.norm(triangles - np.roll(triangles, 1, axis=1), axis=2).max(axis=1)
    steps = np.clip(np.ceil(edges / spacing).astype(int), 1, 64)
    samples = [triangles.reshape(-1, 3)]
    for n in np.unique(steps[steps > 1]):
        i, j = np.meshgrid(np.arange(n + 1), np.arange(n + 1), indexing="ij")
        keep = i + j <= n
        weights = np.column_stack([i[keep], j[keep], n - i[keep] - j[keep]]) / n
        chosen = triangles[steps == n]
        samples.append(np.einsum("wk,tkd->twd", weights, chosen).reshape(-1, 3))
    return np.vstack(samples)


def _surface_tree(magnet):
    from scipy.spatial import cKDTree

    triangles = magnet.mesh_vertices[magnet.mesh_faces]
    size = float(np.ptp(magnet.mesh_vertices, axis=0).max())
    area = float(np.linalg.norm(np.cross(triangles[:, 1] - triangles[:, 0],
                                         triangles[:, 2] - triangles[:, 0]), axis=1).sum() / 2)
    spacing = max(size / 100.0, np.sqrt(area / MAX_SURFACE_SAMPLES))
    return cKDTree(surface_samples(triangles, spacing))


def _mesh_depth(magnet, p):
    """Distance to the surface inside (winding number > 1/2), -1 outside (only the sign counts).

    The distance is to the nearest of dense surface samples (about 1/100 of the part's size
    apart), so it is good to that spacing, like the lattice it is evaluated on.
    """
    vertices, faces = shape_of(magnet).tessellation(magnet)
    depth = np.full(len(p), -1.0)
    in_hull = np.nonzero(_in_hull(magnet, p))[0]
    stride = max(1, int(np.ceil(len(in_hull) * len(faces) / PAIR_BUDGET)))
    in_hull = in_hull[::stride]  # a big mesh gets a thinner lattice, never minutes of work
    inside = in_hull[winding_number(p[in_hull], vertices, faces) > 0.5]
    if len(inside):
        depth[inside] = _cached(magnet, "surface", lambda: _surface_tree(magnet)).query(p[inside])[0]
    return depth


def _maybe_inside(magnet, points) -> np.ndarray:
    """A cheap superset of the points inside the part (its convex hull for a mesh)."""
    if shape_of(magnet).cheap_distance:
        return depth_inside(magnet, points) > 0
    return _in_hull(magnet, to_body(points, magnet.position, magnet.rotation))


def depth_inside(magnet, points: np.ndarray) -> np.ndarray:
    """(N,) distance from each world point to the part's surface, positive inside (minus the
    shape's signed distance; a mesh's from surface samples). Outside only its sign matters."""
    p = to_body(points, magnet.position, magnet.rotation)
    shape = shape_of(magnet)
    if shape.cheap_distance:
        return -shape.sdf(magnet, p)
    return _mesh_depth(magnet, p)


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


def line_inside_parts(point, direction, t_range, magnets, samples=4001) -> list:
    """[(index, t_first, t_last)] for each part the line point + t direction (t in t_range, m)
    runs through: the first and last samples inside it, on a grid of `samples` points."""
    t = np.linspace(t_range[0], t_range[1], samples)
    points = np.asarray(point, float) + t[:, None] * np.asarray(direction, float)
    found = []
    for index, magnet in enumerate(magnets):
        low, high = bounding_box(magnet)
        near = np.all((points >= low) & (points <= high), axis=1)
        if not near.any():
            continue
        tolerance = 1e-6 * smallest_dimension(magnet)
        inside = np.zeros(len(t), dtype=bool)
        inside[near] = depth_inside(magnet, points[near]) > tolerance
        if inside.any():
            hits = t[inside]
            found.append((index, float(hits[0]), float(hits[-1])))
    return found


def overlapping_pairs(magnets) -> list:
    """[(i, j, depth_m)] for every pair of parts that share volume."""
    if len(magnets) < 2:
        return []
    boxes = [bounding_box(m) for m in magnets]
    found = []
    for i, j in sorted(_box_pairs(np.array([b[0] for b in boxes]), np.array([b[1] for b in boxes]))):
        depth = overlap_depth(magnets[i], magnets[j], (boxes[i], boxes[j]))
        if depth > 0.0:
            found.append((i, j, depth))
    return found


def _box_pairs(lows, highs) -> list:
    """[(i, j)] with i < j for the boxes that share volume: sweep and prune along x (boxes
    sorted by their low x; each meets only the boxes that start before it ends), so the cost
    grows with the parts and the pairs found, not with parts squared."""
    order = np.argsort(lows[:, 0], kind="stable")
    starts = lows[order, 0]
    pairs = []
    for rank, i in enumerate(order):
        end = np.searchsorted(starts, highs[i, 0], side="left")
        others = order[rank + 1:end]
        if len(others) == 0:
            continue
        meets = np.all((lows[others] < highs[i]) & (highs[others] > lows[i]), axis=1)
        pairs.extend((min(i, j), max(i, j)) for j in others[meets].tolist())
    return pairs
