"""Operations on closed, outward-oriented triangle meshes: volume, centroid, thickness, solid angle
and winding number, ray-parity inside test, distance (through the cached bounding-volume
hierarchy of meshtree.py; the brute-force forms over every triangle are kept as references). Arguments: points (N, 3) float in m,
vertices (V, 3) float in m, faces (F, 3) int, counter-clockwise seen from outside.

Surface convention (DESIGN.md Conventions): a point within SURFACE_TOL of the mesh size of the
surface is on it and counts as outside, like the field, which takes the outer side there.
"""
from __future__ import annotations

import math

import numba
import numpy as np
from numba import njit, prange

from trapscape.scene.shapes.meshtree import (JITTER, _closest_distance2, forest_signed_distance,
                                             mesh_tree, tree_distance, tree_inside,
                                             tree_signed_distance)

SURFACE_TOL = 1e-12  # relative to the mesh's largest bounding-box side


def _points(points) -> np.ndarray:
    return np.asarray(points, dtype=float).reshape(-1, 3)


def mesh_size(vertices) -> float:
    """Largest side of the mesh's axis-aligned bounding box.

    Parameters
    ----------
    vertices : (V, 3) float, m.

    Returns
    -------
    float, m.

    References
    ----------
    Common practice.
    """
    return float(np.ptp(np.asarray(vertices, float), axis=0).max())


def mesh_volume(vertices: np.ndarray, faces: np.ndarray) -> float:
    """Signed volume of a closed triangle mesh, positive for outward faces.

    Parameters
    ----------
    vertices, faces : (V, 3) m and (F, 3) int (module docstring).

    Returns
    -------
    float, m^3.

    References
    ----------
    Divergence theorem: V = sum over faces of det(a, b, c) / 6 (e.g. C. Zhang and T. Chen,
    ICIP 2001, "Efficient feature extraction for 2D/3D objects in mesh representation").
    """
    a, b, c = (vertices[faces[:, k]] for k in range(3))
    return float(np.einsum("ij,ij->i", a, np.cross(b, c)).sum() / 6.0)


def volume_centroid(vertices: np.ndarray, faces: np.ndarray) -> np.ndarray:
    """Centroid (3,) of the solid, m: the signed tetrahedra (origin, a, b, c) weighted by volume.

    Parameters
    ----------
    vertices, faces : (V, 3) m and (F, 3) int (module docstring).

    Returns
    -------
    (3,) float64, m, in the mesh's frame.

    References
    ----------
    Derived here (centroid of a tetrahedron is the mean of its corners; volumes add).
    """
    tri = np.asarray(vertices, float)[faces]
    volumes = np.einsum("ij,ij->i", tri[:, 0], np.cross(tri[:, 1], tri[:, 2])) / 6.0
    return (volumes[:, None] * tri.sum(axis=1) / 4.0).sum(axis=0) / volumes.sum()


def triangle_areas(triangles: np.ndarray) -> np.ndarray:
    """Areas of triangles, |(b - a) x (c - a)| / 2.

    Parameters
    ----------
    triangles : (F, 3, 3) float, m, corners a, b, c of each triangle.

    Returns
    -------
    (F,) float64, m^2.

    References
    ----------
    Textbook vector geometry.
    """
    return 0.5 * np.linalg.norm(
        np.cross(triangles[:, 1] - triangles[:, 0], triangles[:, 2] - triangles[:, 0]), axis=1)


def mesh_thickness(vertices, faces) -> float:
    """A closed mesh's smallest dimension, m.

    The smaller of the extent along the surface's principal axes (area-weighted triangle
    centroids: a part exported tilted in assembly coordinates is measured across its own
    thickness) and 6 V / A (a cube's edge, a sphere's diameter, three times a thin wall).

    Parameters
    ----------
    vertices, faces : (V, 3) m and (F, 3) int (module docstring).

    Returns
    -------
    float, m.

    References
    ----------
    Derived here (principal axes of the surface; 6 V / A of a cube and a sphere).
    """
    vertices = np.asarray(vertices, float)
    triangles = vertices[np.asarray(faces)]
    areas = triangle_areas(triangles)
    centroids = triangles.mean(axis=1)
    centred = centroids - np.average(centroids, axis=0, weights=areas)
    axes = np.linalg.eigh((centred * areas[:, None]).T @ centred)[1]
    along = vertices @ axes
    extents = along.max(axis=0) - along.min(axis=0)
    return float(min(extents.min(), 6.0 * mesh_volume(vertices, np.asarray(faces)) / areas.sum()))


@njit(cache=True, parallel=True)
def _solid_angle_sum(points, triangles, out):
    """Sum over triangles of the signed solid angle seen from each point (Van Oosterom &
    Strackee, IEEE Trans. Biomed. Eng. 30, 125 (1983)):
    tan(omega/2) = a.(b x c) / (|a||b||c| + (a.b)|c| + (a.c)|b| + (b.c)|a|)."""
    for m in prange(points.shape[0]):
        total = 0.0
        for t in range(triangles.shape[0]):
            ax = triangles[t, 0, 0] - points[m, 0]
            ay = triangles[t, 0, 1] - points[m, 1]
            az = triangles[t, 0, 2] - points[m, 2]
            bx = triangles[t, 1, 0] - points[m, 0]
            by = triangles[t, 1, 1] - points[m, 1]
            bz = triangles[t, 1, 2] - points[m, 2]
            cx = triangles[t, 2, 0] - points[m, 0]
            cy = triangles[t, 2, 1] - points[m, 1]
            cz = triangles[t, 2, 2] - points[m, 2]
            la = math.sqrt(ax * ax + ay * ay + az * az)
            lb = math.sqrt(bx * bx + by * by + bz * bz)
            lc = math.sqrt(cx * cx + cy * cy + cz * cz)
            numerator = ax * (by * cz - bz * cy) + ay * (bz * cx - bx * cz) + az * (bx * cy - by * cx)
            denominator = (la * lb * lc + (ax * bx + ay * by + az * bz) * lc
                           + (ax * cx + ay * cy + az * cz) * lb + (bx * cx + by * cy + bz * cz) * la)
            total += 2.0 * math.atan2(numerator, denominator)
        out[m] = total


def solid_angle(points, vertices, faces) -> np.ndarray:
    """(N,) total signed solid angle (sr) the mesh's faces subtend at each point: 4 pi inside
    a closed outward mesh, 0 outside.

    Parameters
    ----------
    points, vertices, faces : (N, 3) m, (V, 3) m and (F, 3) int (module docstring).

    Returns
    -------
    (N,) float64, steradian.

    References
    ----------
    A. van Oosterom and J. Strackee, IEEE Trans. Biomed. Eng. 30, 125 (1983).
    """
    p = np.ascontiguousarray(_points(points))
    triangles = np.ascontiguousarray(np.asarray(vertices, float)[np.asarray(faces, np.int64)])
    out = np.empty(len(p))
    _solid_angle_sum(p, triangles, out)
    return out


def winding_number(points, vertices, faces) -> np.ndarray:
    """(N,) generalised winding number: 1 inside a closed outward mesh, 0 outside; a point
    within SURFACE_TOL of the mesh size of its surface counts as outside (0).

    Parameters
    ----------
    points, vertices, faces : (N, 3) m, (V, 3) m and (F, 3) int (module docstring).

    Returns
    -------
    (N,) float64, dimensionless.

    References
    ----------
    W = (total solid angle) / 4 pi (A. Jacobson, L. Kavan and O. Sorkine-Hornung, ACM Trans.
    Graph. 32, 33 (2013)); solid angles by van Oosterom & Strackee (1983).
    """
    p = _points(points)
    W = solid_angle(p, vertices, faces) / (4.0 * math.pi)
    maybe = np.flatnonzero(np.abs(W) > 1e-9)
    if len(maybe):
        on = mesh_distance(p[maybe], vertices, faces) <= SURFACE_TOL * mesh_size(vertices)
        W[maybe[on]] = 0.0
    return W


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


def brute_mesh_distance(points, vertices, faces) -> np.ndarray:
    """Unsigned distance (N,) to the surface, over every triangle: the reference that
    mesh_distance must equal.

    Parameters
    ----------
    points, vertices, faces : (N, 3) m, (V, 3) m and (F, 3) int (module docstring).

    Returns
    -------
    (N,) float64, m.

    References
    ----------
    Closest point on a triangle: C. Ericson, Real-Time Collision Detection, 2005, 5.1.5.
    """
    p = np.ascontiguousarray(_points(points))
    V = np.ascontiguousarray(vertices, dtype=float).reshape(-1, 3)
    F = np.ascontiguousarray(faces, dtype=np.int64).reshape(-1, 3)
    out = np.empty(len(p))
    _mesh_distance_kernel(p, V, F, out)
    return out


def mesh_distance(points, vertices, faces) -> np.ndarray:
    """Unsigned distance (N,) to the surface of a triangle mesh (the mesh's cached tree).

    Parameters
    ----------
    points, vertices, faces : (N, 3) m, (V, 3) m and (F, 3) int (module docstring).

    Returns
    -------
    (N,) float64, m.

    References
    ----------
    Closest point on a triangle: C. Ericson, Real-Time Collision Detection, 2005, 5.1.5; the
    tree: ibid. 6.2.
    """
    return tree_distance(points, mesh_tree(vertices, faces))


def _far_from(vertices, points) -> np.ndarray:
    """Points farther than one bounding-box diagonal from the mesh's bounding box."""
    lower, upper = vertices.min(axis=0), vertices.max(axis=0)
    box_distance = np.linalg.norm(np.maximum(np.maximum(lower - points, points - upper), 0.0),
                                  axis=1)
    return box_distance > float(np.linalg.norm(upper - lower))


def mesh_sdf_and_normal(points, vertices, faces) -> tuple[np.ndarray, np.ndarray]:
    """Signed distance (N,) to a closed outward-oriented mesh (negative inside) and its
    gradient (N, 3), the outward unit normal of the closest feature.

    Exact (the mesh's cached tree) within one bounding-box diagonal of the mesh's bounding box;
    farther out, the distance to the nearest vertex, which exceeds the true distance by less
    than the longest edge, and its gradient (the rule of the brute force this replaced, kept
    so that figures computed far from a part, such as the implant distance, stay as they were).

    Parameters
    ----------
    points, vertices, faces : (N, 3) m, (V, 3) m and (F, 3) int (module docstring).

    Returns
    -------
    distance : (N,) float64, m.
    normal : (N, 3) float64, unit.

    References
    ----------
    Ericson (2005) 5.1.5 for the distance; the sign from the closest feature's angle-weighted
    pseudonormal (J. A. Baerentzen and H. Aanaes, IEEE Trans. Vis. Comput. Graph. 11, 243
    (2005)), ray parity on the surface itself.
    """
    p = _points(points)
    V = np.asarray(vertices, dtype=float)
    tree = mesh_tree(vertices, faces)
    far = _far_from(V, p)
    if not far.any():
        return tree_signed_distance(p, tree)
    distance, normal = np.empty(len(p)), np.empty((len(p), 3))
    distance[far], nearest = tree.vertex_tree.query(p[far])
    normal[far] = (p[far] - V[nearest]) / distance[far][:, None]
    if not far.all():
        distance[~far], normal[~far] = tree_signed_distance(p[~far], tree)
    return distance, normal


def mesh_diagonal(vertices) -> float:
    """The length of a mesh's bounding-box diagonal, m (mesh_sdf's far-field rule).

    Parameters
    ----------
    vertices : (V, 3) m.

    Returns
    -------
    float, m.
    """
    V = np.asarray(vertices, dtype=float)
    return float(np.linalg.norm(V.max(axis=0) - V.min(axis=0)))


def nearest_mesh_sdf(bodies, diagonals, forest, best, todo, box_distances) -> np.ndarray:
    """The smallest of best and mesh_sdf of each mesh a point is tried on, from one search of
    the meshes' packed trees (meshtree.forest_signed_distance) and mesh_sdf's far-field rule.

    Parameters
    ----------
    bodies : (P, N, 3) float, m, the points in each mesh's frame.
    diagonals : sequence of P floats, m, each mesh's mesh_diagonal.
    forest : meshtree.Forest of the P meshes' trees, in that order.
    best : (N,) float, m, the smallest signed distance known so far (inf for none).
    todo : (N, P) bool, the meshes each point is tried on.
    box_distances : (N, P) float, m, from each point to each mesh's bounding box (0 inside),
        as _far_from computes them (the same expression on the vertices' box).

    Returns
    -------
    (N,) float64, m.

    References
    ----------
    As mesh_sdf_and_normal.
    """
    best, todo = np.array(best, dtype=float), np.array(todo, dtype=bool)
    for j, diagonal in enumerate(diagonals):
        far = todo[:, j] & (box_distances[:, j] > diagonal)  # as _far_from
        if far.any():
            best[far] = np.minimum(best[far], forest.trees[j].vertex_tree.query(bodies[j][far])[0])
            todo[far, j] = False
    return forest_signed_distance(bodies, forest, best, todo, box_distances)


def mesh_sdf(points, vertices, faces) -> np.ndarray:
    """Signed distance (N,) to a closed outward-oriented mesh, negative inside (the distance of
    mesh_sdf_and_normal, with its far-field rule).

    Parameters
    ----------
    points, vertices, faces : (N, 3) m, (V, 3) m and (F, 3) int (module docstring).

    Returns
    -------
    (N,) float64, m.

    References
    ----------
    As mesh_sdf_and_normal.
    """
    return mesh_sdf_and_normal(points, vertices, faces)[0]


# -- ray parity --------------------------------------------------------------------------------
# A ray from the point along +z crosses the closed surface an odd number of times exactly when
# the point is inside (e.g. J. O'Rourke, Computational Geometry in C, 2nd ed., 7.4). With a
# bounding-box rejection per triangle this costs about 1 ns per triangle and point, an order of
# magnitude less than the winding number, which is what the dipole lattices of mesh parts need.

# Rays through a mesh edge or vertex would count twice; the ray's foot is shifted by an
# irrational fraction of the mesh size (meshtree.JITTER), a measure-zero accident for lattice
# points.


@numba.njit(parallel=True, cache=True)
def _column_parity_kernel(columns, starts, order, z, triangles, boxes, out):
    """One ray along +z per column of points sharing (x, y); each point then counts the
    crossings above it (sub-sampled lattices put many points on each column)."""
    for c in numba.prange(columns.shape[0]):
        px, py = columns[c, 0], columns[c, 1]
        crossings = np.empty(triangles.shape[0])
        count = 0
        for t in range(triangles.shape[0]):
            if px < boxes[t, 0] or px > boxes[t, 1] or py < boxes[t, 2] or py > boxes[t, 3]:
                continue
            ax, ay, az = triangles[t, 0, 0], triangles[t, 0, 1], triangles[t, 0, 2]
            bx, by, bz = triangles[t, 1, 0], triangles[t, 1, 1], triangles[t, 1, 2]
            cx, cy, cz = triangles[t, 2, 0], triangles[t, 2, 1], triangles[t, 2, 2]
            det = (bx - ax) * (cy - ay) - (cx - ax) * (by - ay)
            if det == 0.0:
                continue
            u = ((px - ax) * (cy - ay) - (cx - ax) * (py - ay)) / det
            v = ((bx - ax) * (py - ay) - (px - ax) * (by - ay)) / det
            if u < 0.0 or v < 0.0 or u + v > 1.0:
                continue
            crossings[count] = az + u * (bz - az) + v * (cz - az)
            count += 1
        for k in range(starts[c], starts[c + 1]):
            n = order[k]
            above = 0
            for j in range(count):
                if crossings[j] > z[n]:
                    above += 1
            out[n] = above % 2 == 1


def _triangle_tables(vertices, faces):
    triangles = np.ascontiguousarray(vertices[np.asarray(faces, dtype=np.int64)])
    boxes = np.column_stack([triangles[:, :, 0].min(1), triangles[:, :, 0].max(1),
                             triangles[:, :, 1].min(1), triangles[:, :, 1].max(1)])
    return triangles, np.ascontiguousarray(boxes)


def mesh_inside(points, vertices, faces) -> np.ndarray:
    """(N,) bool: which points lie inside the closed mesh, by ray parity (the mesh's cached tree).

    Parameters
    ----------
    points, vertices, faces : (N, 3) m, (V, 3) m and (F, 3) int (module docstring).

    Returns
    -------
    (N,) bool.

    References
    ----------
    Ray parity (Jordan curve theorem in 3D): J. O'Rourke, Computational Geometry in C, 2nd ed.
    (1998), 7.4.
    """
    return tree_inside(points, mesh_tree(vertices, faces))


def brute_mesh_inside(points: np.ndarray, vertices: np.ndarray, faces: np.ndarray) -> np.ndarray:
    """(N,) bool: which points lie inside the closed mesh, by ray parity over every triangle:
    the reference that mesh_inside must equal.

    Parameters
    ----------
    points, vertices, faces : (N, 3) m, (V, 3) m and (F, 3) int (module docstring).

    Returns
    -------
    (N,) bool.

    References
    ----------
    Ray parity (Jordan curve theorem in 3D): J. O'Rourke, Computational Geometry in C, 2nd ed.
    (1998), 7.4.
    """
    points = np.asarray(points, dtype=float).reshape(-1, 3)
    vertices = np.asarray(vertices, dtype=float)
    size = float(np.ptp(vertices, axis=0).max())
    shifted = points.copy()
    shifted[:, :2] += JITTER * size
    triangles, boxes = _triangle_tables(vertices, faces)
    out = np.zeros(len(points), dtype=np.bool_)
    # one complex key per (x, y): a 1D unique is far faster than unique(axis=0)
    keys, column_of = np.unique(shifted[:, 0] + 1j * shifted[:, 1], return_inverse=True)
    columns = np.column_stack([keys.real, keys.imag])
    order = np.argsort(column_of, kind="stable")
    starts = np.searchsorted(column_of[order], np.arange(len(keys) + 1))
    _column_parity_kernel(np.ascontiguousarray(columns), starts, order,
                          np.ascontiguousarray(shifted[:, 2]), triangles, boxes, out)
    return out
