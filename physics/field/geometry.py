"""Signed distances to the primitive shapes and to meshes, in the body frame (negative inside).

Points (N, 3) in metres, distances in metres. The primitives are exact Euclidean distances:
a box from the per-axis excess q = |p| - h as |max(q, 0)| + min(max_i q_i, 0); cylinders, rings
and arcs as a 2-D distance in the xy-plane (circle, annulus, annular sector) extruded along z
with the same formula (common practice for signed distance functions). A mesh's distance is the
brute-force minimum over its triangles (closest point on a triangle: C. Ericson, Real-Time
Collision Detection, 2005, section 5.1.5), its sign from the winding number.

Inside tests follow the closed forms' surface convention (DESIGN.md Conventions): a point within
1e-12 of the part's largest dimension of its surface is on it and counts as outside, like the
field, which is evaluated on the outer side there.
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit, prange

from trapscape.physics.field.polyhedron import winding_number

SURFACE_TOL = 1e-12  # relative to the part's largest dimension


def _points(points) -> np.ndarray:
    return np.asarray(points, dtype=float).reshape(-1, 3)


def _extrude(d2: np.ndarray, z: np.ndarray, height: float) -> np.ndarray:
    """Exact signed distance of a 2-D region (signed distance d2) extruded over |z| <= h / 2."""
    dz = np.abs(z) - 0.5 * height
    outside = np.hypot(np.maximum(d2, 0.0), np.maximum(dz, 0.0))
    return outside + np.minimum(np.maximum(d2, dz), 0.0)


def box_sdf(points, size) -> np.ndarray:
    """Signed distance (N,) to a box centred at the origin with edges size along x, y, z."""
    p = _points(points)
    q = np.abs(p) - 0.5 * np.asarray(size, dtype=float)
    outside = np.linalg.norm(np.maximum(q, 0.0), axis=1)
    return outside + np.minimum(q.max(axis=1), 0.0)


def sphere_sdf(points, diameter: float) -> np.ndarray:
    """Signed distance (N,) to a sphere centred at the origin."""
    return np.linalg.norm(_points(points), axis=1) - 0.5 * diameter


def cylinder_sdf(points, diameter: float, height: float) -> np.ndarray:
    """Signed distance (N,) to a cylinder with axis z, centred at the origin."""
    p = _points(points)
    rho = np.hypot(p[:, 0], p[:, 1])
    return _extrude(rho - 0.5 * diameter, p[:, 2], height)


def ring_sdf(points, outer_d: float, inner_d: float, height: float) -> np.ndarray:
    """Signed distance (N,) to a ring (axis z, centred at the origin)."""
    p = _points(points)
    rho = np.hypot(p[:, 0], p[:, 1])
    d2 = np.maximum(0.5 * inner_d - rho, rho - 0.5 * outer_d)
    return _extrude(d2, p[:, 2], height)


def _annular_sector_sdf(x: np.ndarray, y: np.ndarray, r_out: float, r_in: float, half: float) -> np.ndarray:
    """2-D signed distance to {r_in <= rho <= r_out, |phi| <= half}, half < pi (derived here).

    By symmetry about the x axis use |y|; the boundary in the upper half is then the outer and
    inner arcs (their nearest point is at the point's own angle when that lies within the arc,
    else the arc's end) and the straight end from r_in e to r_out e, e = (cos half, sin half).
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


def arc_sdf(points, outer_d: float, inner_d: float, height: float, angle: float) -> np.ndarray:
    """Signed distance (N,) to an arc segment centred on body +x (angle in radians, axis z)."""
    if angle >= 2.0 * math.pi - 1e-9:
        return ring_sdf(points, outer_d, inner_d, height)
    p = _points(points)
    d2 = _annular_sector_sdf(p[:, 0], p[:, 1], 0.5 * outer_d, 0.5 * inner_d, 0.5 * angle)
    return _extrude(d2, p[:, 2], height)


@njit(cache=True)
def _closest_distance2(px, py, pz, ax, ay, az, bx, by, bz, cx, cy, cz):
    """Squared distance from p to triangle abc (Ericson 2005, ClosestPtPointTriangle)."""
    abx, aby, abz = bx - ax, by - ay, bz - az
    acx, acy, acz = cx - ax, cy - ay, cz - az
    apx, apy, apz = px - ax, py - ay, pz - az
    d1 = abx * apx + aby * apy + abz * apz
    d2 = acx * apx + acy * apy + acz * apz
    if d1 <= 0.0 and d2 <= 0.0:
        qx, qy, qz = ax, ay, az
    else:
        bpx, bpy, bpz = px - bx, py - by, pz - bz
        d3 = abx * bpx + aby * bpy + abz * bpz
        d4 = acx * bpx + acy * bpy + acz * bpz
        cpx, cpy, cpz = px - cx, py - cy, pz - cz
        d5 = abx * cpx + aby * cpy + abz * cpz
        d6 = acx * cpx + acy * cpy + acz * cpz
        vc = d1 * d4 - d3 * d2
        vb = d5 * d2 - d1 * d6
        va = d3 * d6 - d5 * d4
        if d3 >= 0.0 and d4 <= d3:
            qx, qy, qz = bx, by, bz
        elif d6 >= 0.0 and d5 <= d6:
            qx, qy, qz = cx, cy, cz
        elif vc <= 0.0 and d1 >= 0.0 and d3 <= 0.0:
            t = d1 / (d1 - d3)
            qx, qy, qz = ax + t * abx, ay + t * aby, az + t * abz
        elif vb <= 0.0 and d2 >= 0.0 and d6 <= 0.0:
            t = d2 / (d2 - d6)
            qx, qy, qz = ax + t * acx, ay + t * acy, az + t * acz
        elif va <= 0.0 and (d4 - d3) >= 0.0 and (d5 - d6) >= 0.0:
            t = (d4 - d3) / ((d4 - d3) + (d5 - d6))
            qx, qy, qz = bx + t * (cx - bx), by + t * (cy - by), bz + t * (cz - bz)
        else:
            denom = 1.0 / (va + vb + vc)
            v = vb * denom
            w = vc * denom
            qx = ax + abx * v + acx * w
            qy = ay + aby * v + acy * w
            qz = az + abz * v + acz * w
    dx, dy, dz = px - qx, py - qy, pz - qz
    return dx * dx + dy * dy + dz * dz


@njit(cache=True, parallel=True)
def _mesh_distance_kernel(points, V, F, out):
    for m in prange(points.shape[0]):
        px, py, pz = points[m, 0], points[m, 1], points[m, 2]
        best = np.inf
        for f in range(F.shape[0]):
            a, b, c = F[f, 0], F[f, 1], F[f, 2]
            d2 = _closest_distance2(px, py, pz, V[a, 0], V[a, 1], V[a, 2], V[b, 0], V[b, 1],
                                    V[b, 2], V[c, 0], V[c, 1], V[c, 2])
            if d2 < best:
                best = d2
        out[m] = math.sqrt(best)


def mesh_distance(points, vertices, faces) -> np.ndarray:
    """Unsigned distance (N,) to the surface of a triangle mesh (brute force over triangles)."""
    p = np.ascontiguousarray(_points(points))
    V = np.ascontiguousarray(vertices, dtype=float).reshape(-1, 3)
    F = np.ascontiguousarray(faces, dtype=np.int64).reshape(-1, 3)
    out = np.empty(len(p))
    _mesh_distance_kernel(p, V, F, out)
    return out


def mesh_sdf(points, vertices, faces) -> np.ndarray:
    """Signed distance (N,) to a closed outward-oriented mesh, negative inside (ray parity).

    Brute force over the triangles within one mesh size of its bounding box; farther out, the
    distance to the nearest vertex, which exceeds the true distance by less than the longest
    edge (a small relative error there, and the brute force would cost ~50 ns per triangle)."""
    from scipy.spatial import cKDTree

    from trapscape.physics.field.voxels import mesh_inside

    p = _points(points)
    V = np.asarray(vertices, dtype=float)
    lower, upper = V.min(axis=0), V.max(axis=0)
    box_distance = np.linalg.norm(np.maximum(np.maximum(lower - p, p - upper), 0.0), axis=1)
    near = box_distance <= float(np.linalg.norm(upper - lower))
    d = np.empty(len(p))
    d[~near] = cKDTree(V).query(p[~near])[0] if (~near).any() else 0.0
    if near.any():
        d[near] = mesh_distance(p[near], V, faces)
        inside = mesh_inside(p[near], V, faces)
        d[np.flatnonzero(near)[inside]] *= -1.0
    return d


def _part_size(shape: str, dims) -> float:
    if shape == "arc":
        return float(max(dims[0], dims[2]))
    return float(max(dims))


def shape_sdf(shape: str, dims, points, mesh=None) -> np.ndarray:
    """Signed distance (N,) to a part of the given scene.model shape in its body frame.

    dims as in scene.model.Magnet (metres; an arc's angle in radians); for "mesh" pass
    mesh=(vertices, faces).
    """
    if shape == "box":
        return box_sdf(points, dims)
    if shape == "cylinder":
        return cylinder_sdf(points, dims[0], dims[1])
    if shape == "ring":
        return ring_sdf(points, dims[0], dims[1], dims[2])
    if shape == "arc":
        return arc_sdf(points, dims[0], dims[1], dims[2], dims[3])
    if shape == "sphere":
        return sphere_sdf(points, dims[0])
    if shape == "mesh":
        if mesh is None:
            raise ValueError("shape 'mesh' needs mesh=(vertices, faces)")
        return mesh_sdf(points, mesh[0], mesh[1])
    raise ValueError(f"unknown shape {shape!r}")


def inside_shape(shape: str, dims, points, mesh=None) -> np.ndarray:
    """Bool mask (N,): the point lies inside the part (a point on the surface does not).

    For "mesh", and for an "arc" when its tessellation is passed as mesh=(vertices, faces), the
    test is the mesh's winding number, so it matches the polyhedron field exactly.
    """
    if mesh is not None and shape in ("mesh", "arc"):
        return winding_number(points, mesh[0], mesh[1]) > 0.5
    if shape == "mesh":
        raise ValueError("shape 'mesh' needs mesh=(vertices, faces)")
    return shape_sdf(shape, dims, points) < -SURFACE_TOL * _part_size(shape, dims)
