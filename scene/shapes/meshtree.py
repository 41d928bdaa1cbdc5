"""A bounding-volume hierarchy over a closed triangle mesh: closest point, signed distance, the
surface normal of the closest feature and the ray-parity inside test, each visiting only the
triangles whose boxes can matter (about log F of them instead of all F).

Arguments as in meshops: points (N, 3) float in m, vertices (V, 3) float in m, faces (F, 3) int,
counter-clockwise seen from outside. The per-triangle arithmetic is meshops' own (Ericson's
closest point, the +z ray crossing), so distances equal the brute force's exactly and the
parity agrees with it; only the order in which triangles are visited changes. Each node is
bounded by its axis-aligned box and by a box turned to its principal axes (see _turned_boxes).

Why our own tree: the libraries at hand either need a spatial-index C library and loop in
Python per query (trimesh's proximity with rtree) or work in single precision (Embree), and the
brute force they replace is exact in double precision. A median-split tree in numba is short,
exact and needs no new dependency.
"""
from __future__ import annotations

import math
import weakref
from dataclasses import dataclass

import numba
import numpy as np
from numba import njit, prange
from scipy.spatial import cKDTree

LEAF_SIZE = 8
_STACK = 128  # a median split halves every level: depth <= log2(F / LEAF_SIZE) + 1

# Rays through a mesh edge or vertex would count twice; shifting the ray's foot by an irrational
# fraction of the mesh size makes that a measure-zero accident for lattice points.
JITTER = np.array([0.70710678e-9, 0.31830989e-9])

# closest-feature codes: which part of triangle abc holds the closest point
_FACE, _VERTEX_A, _VERTEX_B, _VERTEX_C, _EDGE_AB, _EDGE_AC, _EDGE_BC = range(7)


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


@dataclass(frozen=True, eq=False)
class MeshTree:
    """The hierarchy and the pseudonormals of one mesh (build with ``mesh_tree``).

    Attributes
    ----------
    triangles : (F, 3, 3) float, m, corners in the tree's leaf order.
    face_index : (F,) int, the original face of each row of ``triangles``.
    lower, upper : (nodes, 3) float, m, each node's box.
    first, count, left : (nodes,) int, a leaf's rows [first, first + count) (count 0 for an
        inner node, whose children are left and left + 1).
    bounds : (nodes, 21) float, each node's two boxes in one row for the distance search (in
        separate arrays it measured 2 to 3 times slower at 100,000 triangles): lower and upper
        (m), then the box turned to the node's principal axes, its centre (m), padded half sizes
        (m) and the three axes (``_turned_boxes``). A median split leaves at least LEAF_SIZE / 2
        triangles in a leaf, so there are fewer than 4 F / LEAF_SIZE nodes: at most 84 bytes
        per triangle (5.5 MB at 100,000 triangles, beside 7.2 MB of corners and 16.8 MB of
        normals).
    face_normals : (F, 3) unit outward normals, leaf order.
    corner_normals : (F, 3, 3) angle-weighted vertex pseudonormals at a, b, c (leaf order).
    edge_normals : (F, 3, 3) edge pseudonormals of ab, ac, bc (leaf order).
    manifold : bool, every edge shared by exactly two faces (else the sign comes from parity).
    size : float, m, the mesh's largest bounding-box side.
    vertex_tree : scipy.spatial.cKDTree of the vertices (meshops' far-field rule).
    """

    triangles: np.ndarray
    face_index: np.ndarray
    lower: np.ndarray
    upper: np.ndarray
    first: np.ndarray
    count: np.ndarray
    left: np.ndarray
    bounds: np.ndarray
    face_normals: np.ndarray
    corner_normals: np.ndarray
    edge_normals: np.ndarray
    manifold: bool
    size: float
    vertex_tree: cKDTree


@njit(cache=True)
def _build(centres, low_t, high_t, leaf_size):
    """Median split along the widest axis of the triangles' centres, top down."""
    n = centres.shape[0]
    order = np.arange(n)
    most = 2 * n + 1
    lower = np.empty((most, 3))
    upper = np.empty((most, 3))
    first = np.zeros(most, np.int64)
    count = np.zeros(most, np.int64)
    left = np.full(most, -1, np.int64)
    span = np.zeros(most, np.int64)  # rows of an unfinished node
    stack = np.empty(_STACK, np.int64)
    first[0], span[0] = 0, n
    stack[0] = 0
    nodes, top = 1, 1
    while top > 0:
        top -= 1
        node = stack[top]
        s, e = first[node], first[node] + span[node]
        for k in range(3):
            lo, hi = np.inf, -np.inf
            for r in range(s, e):
                lo = min(lo, low_t[order[r], k])
                hi = max(hi, high_t[order[r], k])
            lower[node, k], upper[node, k] = lo, hi
        widest, extent = 0, -1.0
        for k in range(3):
            clo, chi = np.inf, -np.inf
            for r in range(s, e):
                clo = min(clo, centres[order[r], k])
                chi = max(chi, centres[order[r], k])
            if chi - clo > extent:
                widest, extent = k, chi - clo
        if e - s <= leaf_size or extent <= 0.0:
            count[node] = e - s
            continue
        rows = order[s:e].copy()
        ranked = np.argsort(centres[rows, widest], kind="mergesort")
        order[s:e] = rows[ranked]
        middle = s + (e - s) // 2
        left[node] = nodes
        first[nodes], span[nodes] = s, middle - s
        first[nodes + 1], span[nodes + 1] = middle, e - middle
        stack[top], stack[top + 1] = nodes + 1, nodes
        top += 2
        nodes += 2
    return (order, lower[:nodes], upper[:nodes], first[:nodes], count[:nodes], left[:nodes],
            span[:nodes])


# CAD exports a cylinder's end caps as fans of long thin triangles from the centre to the rim:
# their axis-aligned boxes span much of the cap and overlap near its centre, so they prune
# little. A node of neighbouring slivers is a thin wedge, which a box turned to the node's
# principal axes holds tightly (cutting the slivers into pieces instead would shrink the boxes'
# overlap only by the number of pieces per sliver). A node's bound is the larger of its two
# boxes' distances; the search takes the child of nearer bound first and skips a node whose bound
# is not below the best triangle so far.
#
# The turned box is padded (by _PAD of the coordinates' size, against its own rounding and that
# of the closest point computed on a triangle, both a few ulps) so that its distance stays below
# every distance computed to the node's triangles: no triangle that could become the best is
# skipped, and the distance is bit for bit the minimum over all triangles. Only where triangles
# tie exactly (a shared vertex or edge, coplanar neighbours) may another of them be found first.
_PAD = 1e-12


@njit(cache=True)
def _eigenvectors(a):
    """Rows: the eigenvectors of the symmetric 3 x 3 matrix a (overwritten), by cyclic Jacobi
    rotations (G. H. Golub and C. F. Van Loan, Matrix Computations, 4th ed., 8.5); orthonormal
    to rounding however few sweeps converge, which is all a turned box needs."""
    v = np.eye(3)
    for _ in range(10):
        off = a[0, 1] ** 2 + a[0, 2] ** 2 + a[1, 2] ** 2
        if off <= 1e-24 * (a[0, 0] ** 2 + a[1, 1] ** 2 + a[2, 2] ** 2):
            break
        for k in range(3):
            p, q = (0, 1) if k == 0 else ((0, 2) if k == 1 else (1, 2))
            if a[p, q] == 0.0:
                continue
            theta = (a[q, q] - a[p, p]) / (2.0 * a[p, q])
            t = (1.0 if theta >= 0.0 else -1.0) / (abs(theta) + math.sqrt(theta * theta + 1.0))
            c = 1.0 / math.sqrt(t * t + 1.0)
            s = t * c
            for m in (a, v):  # a P and v P: columns p and q turned
                for i in range(3):
                    mp, mq = m[i, p], m[i, q]
                    m[i, p], m[i, q] = c * mp - s * mq, s * mp + c * mq
            for i in range(3):  # P^T a: rows p and q turned
                ap, aq = a[p, i], a[q, i]
                a[p, i], a[q, i] = c * ap - s * aq, s * ap + c * aq
    return np.ascontiguousarray(v.T)


@njit(cache=True)
def _principal_axes(tri, s, e):
    """The mean of rows s..e's corners and the eigenvectors of their scatter matrix (rows)."""
    mean = np.zeros(3)
    for r in range(s, e):
        for j in range(3):
            mean += tri[r, j]
    mean /= 3 * (e - s)
    scatter = np.zeros((3, 3))
    for r in range(s, e):
        for j in range(3):
            d0, d1, d2 = tri[r, j, 0] - mean[0], tri[r, j, 1] - mean[1], tri[r, j, 2] - mean[2]
            scatter[0, 0] += d0 * d0
            scatter[0, 1] += d0 * d1
            scatter[0, 2] += d0 * d2
            scatter[1, 1] += d1 * d1
            scatter[1, 2] += d1 * d2
            scatter[2, 2] += d2 * d2
    scatter[1, 0], scatter[2, 0], scatter[2, 1] = scatter[0, 1], scatter[0, 2], scatter[1, 2]
    return mean, _eigenvectors(scatter)


@njit(cache=True)
def _turned_boxes(tri, lower, upper, first, span):
    """Per node: its axis-aligned box, then the centre, padded half sizes and axes of the box
    turned to the principal axes of its triangles' corners (Gottschalk, Lin and Manocha,
    SIGGRAPH 1996), packed as MeshTree.bounds."""
    nodes = first.shape[0]
    bounds = np.empty((nodes, 21))
    for node in range(nodes):
        s, e = first[node], first[node] + span[node]
        mean, axes = _principal_axes(tri, s, e)
        lo, hi = np.full(3, np.inf), np.full(3, -np.inf)
        reach = 0.0
        for r in range(s, e):
            for j in range(3):
                x, y, z = tri[r, j, 0], tri[r, j, 1], tri[r, j, 2]
                reach = max(reach, abs(x), abs(y), abs(z))
                dx, dy, dz = x - mean[0], y - mean[1], z - mean[2]
                for a in range(3):
                    t = axes[a, 0] * dx + axes[a, 1] * dy + axes[a, 2] * dz
                    lo[a], hi[a] = min(lo[a], t), max(hi[a], t)
        half = 0.5 * (hi - lo)
        centre = mean + 0.5 * ((lo[0] + hi[0]) * axes[0] + (lo[1] + hi[1]) * axes[1]
                               + (lo[2] + hi[2]) * axes[2])
        bounds[node, 0:3], bounds[node, 3:6] = lower[node], upper[node]
        bounds[node, 6:9] = centre
        bounds[node, 9:12] = half + _PAD * (9.0 * reach + 2.0 * half.max())
        bounds[node, 12:21] = axes.ravel()
    return bounds


def _unit(vectors):
    size = np.linalg.norm(vectors, axis=-1, keepdims=True)
    return np.divide(vectors, size, out=np.zeros_like(vectors), where=size > 0.0)


def _pseudonormals(vertices, faces):
    """Face normals, angle-weighted vertex normals and edge normals (sum of the two faces').

    References
    ----------
    J. A. Baerentzen and H. Aanaes, IEEE Trans. Vis. Comput. Graph. 11, 243 (2005).
    """
    tri = vertices[faces]
    face = _unit(np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0]))
    corner = np.zeros((len(vertices), 3))
    for k in range(3):
        u = _unit(tri[:, (k + 1) % 3] - tri[:, k])
        w = _unit(tri[:, (k + 2) % 3] - tri[:, k])
        angle = np.arccos(np.clip(np.einsum("ij,ij->i", u, w), -1.0, 1.0))
        np.add.at(corner, faces[:, k], angle[:, None] * face)
    ends = np.stack([faces[:, [0, 1]], faces[:, [0, 2]], faces[:, [1, 2]]], axis=1)  # ab, ac, bc
    pairs = np.sort(ends, axis=2).reshape(-1, 2)
    keys = pairs[:, 0] * (int(faces.max(initial=0)) + 1) + pairs[:, 1]  # 1D: unique(axis=0) is slow
    _, edge_of, shared = np.unique(keys, return_inverse=True, return_counts=True)
    edge_of = edge_of.reshape(-1)
    edge_sum = np.zeros((len(shared), 3))
    np.add.at(edge_sum, edge_of, np.repeat(face, 3, axis=0))
    edges = edge_sum[edge_of].reshape(len(faces), 3, 3)
    return face, corner[faces], edges, bool(np.all(shared == 2))


def build_tree(vertices, faces) -> MeshTree:
    """The hierarchy and pseudonormals of a closed mesh (use ``mesh_tree`` for the cached one).

    Parameters
    ----------
    vertices, faces : (V, 3) m and (F, 3) int (module docstring).

    Returns
    -------
    MeshTree

    References
    ----------
    Median-split bounding-volume hierarchy: C. Ericson, Real-Time Collision Detection (2005), 6.2.
    """
    vertices = np.ascontiguousarray(vertices, dtype=float).reshape(-1, 3)
    faces = np.ascontiguousarray(faces, dtype=np.int64).reshape(-1, 3)
    tri = vertices[faces]
    low, high = np.ascontiguousarray(tri.min(axis=1)), np.ascontiguousarray(tri.max(axis=1))
    # split at box centres, not centroids: a cylinder side's two triangles per facet then share
    # one (their centroids lie a third of the height apart), and a point near the rim finds its
    # equally near cap and side triangles in fewer subtrees (41 nodes a query instead of 65 on
    # the 100,000-triangle disc)
    order, lower, upper, first, count, left, span = _build(0.5 * (low + high), low, high,
                                                           LEAF_SIZE)
    ordered = np.ascontiguousarray(tri[order])
    face, corner, edges, manifold = _pseudonormals(vertices, faces)
    return MeshTree(ordered, order, lower, upper, first, count, left,
                    _turned_boxes(ordered, lower, upper, first, span),
                    np.ascontiguousarray(face[order]), np.ascontiguousarray(corner[order]),
                    np.ascontiguousarray(edges[order]), manifold,
                    float(np.ptp(vertices, axis=0).max()), cKDTree(vertices))


# One tree per mesh array pair, kept while the arrays live. Mesh parts hold read-only arrays
# (scene/meshes.py), so their identity names the mesh; a writeable array may change in place and
# is keyed by its bytes as well.
_TREES: dict = {}


def _key(vertices, faces):
    key = (id(vertices), id(faces))
    if vertices.flags.writeable or faces.flags.writeable:
        key += (hash(vertices.tobytes()), hash(faces.tobytes()))
    return key


def mesh_tree(vertices, faces) -> MeshTree:
    """The cached tree of a mesh: built on first use, dropped when its arrays are.

    Parameters
    ----------
    vertices, faces : (V, 3) m and (F, 3) int, numpy arrays (module docstring).

    Returns
    -------
    MeshTree
    """
    if not (isinstance(vertices, np.ndarray) and isinstance(faces, np.ndarray)):
        return build_tree(vertices, faces)
    key = _key(vertices, faces)
    entry = _TREES.get(key)
    if entry is not None and entry[0]() is vertices and entry[1]() is faces:
        return entry[2]
    tree = build_tree(vertices, faces)
    try:
        refs = (weakref.ref(vertices, lambda _, trees=_TREES: trees.pop(key, None)),
                weakref.ref(faces))
    except TypeError:
        return tree
    _TREES[key] = (*refs, tree)
    return tree


@njit(cache=True)
def _feature(px, py, pz, tri, t):
    """Which feature of triangle t holds the closest point (Ericson's regions, same tests as
    meshops._closest_distance2), and that point."""
    ax, ay, az = tri[t, 0, 0], tri[t, 0, 1], tri[t, 0, 2]
    bx, by, bz = tri[t, 1, 0], tri[t, 1, 1], tri[t, 1, 2]
    cx, cy, cz = tri[t, 2, 0], tri[t, 2, 1], tri[t, 2, 2]
    abx, aby, abz = bx - ax, by - ay, bz - az
    acx, acy, acz = cx - ax, cy - ay, cz - az
    apx, apy, apz = px - ax, py - ay, pz - az
    d1 = abx * apx + aby * apy + abz * apz
    d2 = acx * apx + acy * apy + acz * apz
    if d1 <= 0.0 and d2 <= 0.0:
        return _VERTEX_A, ax, ay, az
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
        return _VERTEX_B, bx, by, bz
    if d6 >= 0.0 and d5 <= d6:
        return _VERTEX_C, cx, cy, cz
    if vc <= 0.0 and d1 >= 0.0 and d3 <= 0.0:
        s = d1 / (d1 - d3)
        return _EDGE_AB, ax + s * abx, ay + s * aby, az + s * abz
    if vb <= 0.0 and d2 >= 0.0 and d6 <= 0.0:
        s = d2 / (d2 - d6)
        return _EDGE_AC, ax + s * acx, ay + s * acy, az + s * acz
    if va <= 0.0 and (d4 - d3) >= 0.0 and (d5 - d6) >= 0.0:
        s = (d4 - d3) / ((d4 - d3) + (d5 - d6))
        return _EDGE_BC, bx + s * (cx - bx), by + s * (cy - by), bz + s * (cz - bz)
    denom = 1.0 / (va + vb + vc)
    v = vb * denom
    w = vc * denom
    return _FACE, ax + abx * v + acx * w, ay + aby * v + acy * w, az + abz * v + acz * w


@njit(cache=True)
def _node_distance2(px, py, pz, bounds, node, best):
    """A lower bound of the squared distance from p to node's triangles: the larger of its
    boxes' (the turned one only where the axis-aligned one is nearer than best). The turned
    box's distance is taken less a slack for the rounding of p's coordinates along its axes."""
    b = bounds
    gx = max(b[node, 0] - px, px - b[node, 3], 0.0)
    gy = max(b[node, 1] - py, py - b[node, 4], 0.0)
    gz = max(b[node, 2] - pz, pz - b[node, 5], 0.0)
    d2 = gx * gx + gy * gy + gz * gz
    if d2 >= best:
        return d2
    dx, dy, dz = px - b[node, 6], py - b[node, 7], pz - b[node, 8]
    slack = _PAD * (abs(dx) + abs(dy) + abs(dz))
    g0 = max(abs(b[node, 12] * dx + b[node, 13] * dy + b[node, 14] * dz) - b[node, 9] - slack, 0.0)
    g1 = max(abs(b[node, 15] * dx + b[node, 16] * dy + b[node, 17] * dz) - b[node, 10] - slack, 0.0)
    g2 = max(abs(b[node, 18] * dx + b[node, 19] * dy + b[node, 20] * dz) - b[node, 11] - slack, 0.0)
    return max(d2, g0 * g0 + g1 * g1 + g2 * g2)


@njit(cache=True)
def _nearest_row(px, py, pz, tri, bounds, first, count, left, root=0, bound=np.inf):
    """Row of the closest triangle under the tree's node root and the squared distance to it
    (depth-first, the child with the nearer bound first, nodes whose bound is not nearer than
    the best so far skipped); row -1 when no triangle is strictly nearer than the squared
    distance bound."""
    stack = np.empty(_STACK, np.int64)
    reach = np.empty(_STACK)  # each stacked node's bound
    stack[0] = root
    reach[0] = _node_distance2(px, py, pz, bounds, root, bound)
    top = 1
    best, row = bound, -1
    while top > 0:
        top -= 1
        node = stack[top]
        if reach[top] >= best:
            continue  # nothing in it can be strictly nearer
        if count[node] > 0:
            for t in range(first[node], first[node] + count[node]):
                d2 = _closest_distance2(px, py, pz, tri[t, 0, 0], tri[t, 0, 1], tri[t, 0, 2],
                                        tri[t, 1, 0], tri[t, 1, 1], tri[t, 1, 2],
                                        tri[t, 2, 0], tri[t, 2, 1], tri[t, 2, 2])
                if d2 < best:
                    best, row = d2, t
            continue
        a, b = left[node], left[node] + 1
        da = _node_distance2(px, py, pz, bounds, a, best)
        db = _node_distance2(px, py, pz, bounds, b, best)
        if da <= db:
            a, b, da, db = b, a, db, da
        if da < best:  # the farther child goes below the nearer one on the stack
            stack[top], reach[top] = a, da
            top += 1
        if db < best:
            stack[top], reach[top] = b, db
            top += 1
    return row, best


@njit(cache=True)
def _distance_one(m, points, tri, bounds, first, count, left, out):
    out[m] = math.sqrt(_nearest_row(points[m, 0], points[m, 1], points[m, 2], tri, bounds, first,
                                    count, left)[1])


@njit(cache=True)
def _distance_serial(points, tri, bounds, first, count, left, out):
    for m in range(points.shape[0]):
        _distance_one(m, points, tri, bounds, first, count, left, out)


@njit(cache=True, parallel=True)
def _distance_parallel(points, tri, bounds, first, count, left, out):
    for m in prange(points.shape[0]):
        _distance_one(m, points, tri, bounds, first, count, left, out)


@njit(cache=True)
def _pseudonormal(row, feature, face_n, corner_n, edge_n):
    """The pseudonormal of a feature of triangle row (face, vertex or edge)."""
    if feature == _FACE:
        return face_n[row, 0], face_n[row, 1], face_n[row, 2]
    if feature <= _VERTEX_C:
        k = feature - _VERTEX_A
        return corner_n[row, k, 0], corner_n[row, k, 1], corner_n[row, k, 2]
    k = feature - _EDGE_AB
    return edge_n[row, k, 0], edge_n[row, k, 1], edge_n[row, k, 2]


@njit(cache=True)
def _signed_one(m, points, tri, bounds, first, count, left, face_n, corner_n, edge_n,
                distance, normal, sign_known):
    """Distance, the outward unit normal of the distance field and (where the pseudonormal
    decides it) the sign: -1 inside, +1 outside, 0 left to the caller."""
    px, py, pz = points[m, 0], points[m, 1], points[m, 2]
    row, d2 = _nearest_row(px, py, pz, tri, bounds, first, count, left)
    feature, qx, qy, qz = _feature(px, py, pz, tri, row)
    nx, ny, nz = _pseudonormal(row, feature, face_n, corner_n, edge_n)
    dx, dy, dz = px - qx, py - qy, pz - qz
    along = dx * nx + dy * ny + dz * nz
    distance[m] = math.sqrt(d2)
    sign_known[m] = -1.0 if along < 0.0 else (1.0 if along > 0.0 else 0.0)
    length = math.sqrt(dx * dx + dy * dy + dz * dz)
    if length > 0.0:
        s = -1.0 if along < 0.0 else 1.0
        normal[m, 0], normal[m, 1], normal[m, 2] = s * dx / length, s * dy / length, s * dz / length
    else:  # on the surface: the pseudonormal itself
        size = math.sqrt(nx * nx + ny * ny + nz * nz)
        normal[m, 0], normal[m, 1], normal[m, 2] = nx / size, ny / size, nz / size


@njit(cache=True)
def _signed_serial(points, tri, bounds, first, count, left, face_n, corner_n, edge_n,
                   distance, normal, sign_known):
    for m in range(points.shape[0]):
        _signed_one(m, points, tri, bounds, first, count, left, face_n, corner_n, edge_n,
                    distance, normal, sign_known)


@njit(cache=True, parallel=True)
def _signed_parallel(points, tri, bounds, first, count, left, face_n, corner_n, edge_n,
                     distance, normal, sign_known):
    for m in prange(points.shape[0]):
        _signed_one(m, points, tri, bounds, first, count, left, face_n, corner_n, edge_n,
                    distance, normal, sign_known)


@njit(cache=True)
def _parity_one(m, points, tri, lower, upper, first, count, left, margin, out):
    """The +z ray of meshops' parity test through the tree: nodes whose (x, y) box misses the
    ray's foot, or that lie wholly below the point, hold no crossing above it."""
    px, py, pz = points[m, 0], points[m, 1], points[m, 2]
    stack = np.empty(_STACK, np.int64)
    stack[0] = 0
    top = 1
    above = 0
    while top > 0:
        top -= 1
        node = stack[top]
        if (px < lower[node, 0] or px > upper[node, 0] or py < lower[node, 1]
                or py > upper[node, 1] or upper[node, 2] + margin < pz):
            continue
        if count[node] == 0:
            stack[top] = left[node]
            stack[top + 1] = left[node] + 1
            top += 2
            continue
        for t in range(first[node], first[node] + count[node]):
            ax, ay, az = tri[t, 0, 0], tri[t, 0, 1], tri[t, 0, 2]
            bx, by, bz = tri[t, 1, 0], tri[t, 1, 1], tri[t, 1, 2]
            cx, cy, cz = tri[t, 2, 0], tri[t, 2, 1], tri[t, 2, 2]
            if (px < min(ax, bx, cx) or px > max(ax, bx, cx) or py < min(ay, by, cy)
                    or py > max(ay, by, cy)):
                continue
            det = (bx - ax) * (cy - ay) - (cx - ax) * (by - ay)
            if det == 0.0:
                continue
            u = ((px - ax) * (cy - ay) - (cx - ax) * (py - ay)) / det
            v = ((bx - ax) * (py - ay) - (px - ax) * (by - ay)) / det
            if u < 0.0 or v < 0.0 or u + v > 1.0:
                continue
            if az + u * (bz - az) + v * (cz - az) > pz:
                above += 1
    out[m] = above % 2 == 1


@njit(cache=True)
def _parity_serial(points, tri, lower, upper, first, count, left, margin, out):
    for m in range(points.shape[0]):
        _parity_one(m, points, tri, lower, upper, first, count, left, margin, out)


@njit(cache=True, parallel=True)
def _parity_parallel(points, tri, lower, upper, first, count, left, margin, out):
    for m in prange(points.shape[0]):
        _parity_one(m, points, tri, lower, upper, first, count, left, margin, out)


# Below this many points a query runs on one thread: starting the others costs more than the
# tree search of a few hundred points (and the contact search asks for a few at a time).
PARALLEL_FROM = 2048


def _parity_arrays(tree):
    return tree.triangles, tree.lower, tree.upper, tree.first, tree.count, tree.left


def _search_arrays(tree):
    return tree.triangles, tree.bounds, tree.first, tree.count, tree.left


def _points(points):
    return np.ascontiguousarray(np.asarray(points, dtype=float).reshape(-1, 3))


def tree_distance(points, tree: MeshTree) -> np.ndarray:
    """Unsigned distance (N,) to the mesh's surface, equal to meshops.mesh_distance.

    Parameters
    ----------
    points : (N, 3) m.
    tree : MeshTree

    Returns
    -------
    (N,) float64, m.

    References
    ----------
    C. Ericson, Real-Time Collision Detection (2005), 5.1.5 (closest point on a triangle) and
    6.2 (bounding-volume hierarchies).
    """
    p = _points(points)
    out = np.empty(len(p))
    kernel = _distance_parallel if len(p) >= PARALLEL_FROM else _distance_serial
    kernel(p, *_search_arrays(tree), out)
    return out


def tree_inside(points, tree: MeshTree) -> np.ndarray:
    """(N,) bool, inside by +z ray parity with meshops' jitter; equal to meshops.mesh_inside.

    Parameters
    ----------
    points : (N, 3) m.
    tree : MeshTree

    Returns
    -------
    (N,) bool.

    References
    ----------
    J. O'Rourke, Computational Geometry in C, 2nd ed. (1998), 7.4.
    """
    p = _points(points).copy()
    p[:, :2] += JITTER * tree.size
    out = np.zeros(len(p), dtype=np.bool_)
    # a crossing's height is interpolated, so it may pass its triangle's top by a rounding error
    kernel = _parity_parallel if len(p) >= PARALLEL_FROM else _parity_serial
    kernel(p, *_parity_arrays(tree), 1e-12 * tree.size, out)
    return out


def tree_signed_distance(points, tree: MeshTree) -> tuple[np.ndarray, np.ndarray]:
    """Signed distance (N,) (negative inside) and the outward unit normal (N, 3) there.

    The sign is that of (p - q) . n with q the closest point and n the pseudonormal of the
    feature (face, edge or vertex) that holds q; a point on the surface, or any point of a mesh
    with an edge not shared by two faces, takes the sign of the ray-parity test instead. The
    normal is sign * (p - q) / |p - q|, the gradient of the signed distance (on the surface, the
    pseudonormal).

    Parameters
    ----------
    points : (N, 3) m.
    tree : MeshTree

    Returns
    -------
    distance : (N,) float64, m.
    normal : (N, 3) float64, unit.

    References
    ----------
    J. A. Baerentzen and H. Aanaes, IEEE Trans. Vis. Comput. Graph. 11, 243 (2005) (angle-
    weighted pseudonormals decide the sign); Ericson (2005) 5.1.5 for the closest point.
    """
    p = _points(points)
    distance, normal, sign = np.empty(len(p)), np.empty((len(p), 3)), np.empty(len(p))
    kernel = _signed_parallel if len(p) >= PARALLEL_FROM else _signed_serial
    kernel(p, *_search_arrays(tree), tree.face_normals, tree.corner_normals, tree.edge_normals,
           distance, normal, sign)
    unknown = np.flatnonzero(sign == 0.0) if tree.manifold else np.arange(len(p))
    if len(unknown):
        parity = np.where(tree_inside(p[unknown], tree), -1.0, 1.0)
        normal[unknown] *= (parity * np.where(sign[unknown] == 0.0, 1.0, sign[unknown]))[:, None]
        sign[unknown] = parity
    return sign * distance, normal


# -- several meshes at once: the nearest of them --------------------------------------------------

@dataclass(frozen=True, eq=False)
class Forest:
    """The trees of several meshes packed into one set of arrays (``pack_trees``): tree j's
    nodes start at roots[j], its rows of ``triangles`` where its leaves say."""

    trees: tuple
    triangles: np.ndarray
    bounds: np.ndarray
    first: np.ndarray
    count: np.ndarray
    left: np.ndarray
    roots: np.ndarray
    face_normals: np.ndarray
    corner_normals: np.ndarray
    edge_normals: np.ndarray
    manifold: np.ndarray


def pack_trees(trees) -> Forest:
    """One Forest of the given MeshTrees (their rows and nodes renumbered, nothing recomputed).

    Parameters
    ----------
    trees : sequence of MeshTree

    Returns
    -------
    Forest
    """
    trees = tuple(trees)
    rows = np.cumsum([0] + [len(t.triangles) for t in trees])[:-1]
    roots = np.cumsum([0] + [len(t.lower) for t in trees])[:-1]
    left = [np.where(t.count == 0, t.left + root, -1) for t, root in zip(trees, roots)]

    def joined(name):
        return np.ascontiguousarray(np.concatenate([getattr(t, name) for t in trees]))

    return Forest(trees, joined("triangles"), joined("bounds"),
                  np.concatenate([t.first + r for t, r in zip(trees, rows)]), joined("count"),
                  np.concatenate(left), 
                  roots.astype(np.int64), joined("face_normals"),
                  joined("corner_normals"), joined("edge_normals"),
                  np.array([t.manifold for t in trees]))


@njit(cache=True)
def _nearest_one(m, bodies, tri, bounds, first, count, left, roots, face_n, corner_n,
                 edge_n, manifold, todo, in_box, order, best, values, unknown):
    """Point m against every tree j it is to be tried on (todo), in the given order (nearest
    box first): a tree whose box holds the point is searched whole (it may be inside); another
    only for triangles strictly nearer than the best signed distance so far (none when that is
    not positive: outside its box the point is outside the mesh)."""
    b = best[m]
    for i in range(roots.shape[0]):
        j = order[m, i]
        if not todo[m, j]:
            continue
        if in_box[m, j]:
            bound = np.inf
        elif b > 0.0:
            bound = b * b * (1.0 + 1e-12)  # a bound, not a decision: sqrt may round either way
        else:
            continue
        px, py, pz = bodies[j, m, 0], bodies[j, m, 1], bodies[j, m, 2]
        row, d2 = _nearest_row(px, py, pz, tri, bounds, first, count, left, roots[j], bound)
        if row < 0:
            continue
        feature, qx, qy, qz = _feature(px, py, pz, tri, row)
        nx, ny, nz = _pseudonormal(row, feature, face_n, corner_n, edge_n)
        along = (px - qx) * nx + (py - qy) * ny + (pz - qz) * nz
        distance = math.sqrt(d2)
        values[m, j] = -distance if along < 0.0 else distance
        unknown[m, j] = along == 0.0 or not manifold[j]
        b = min(b, values[m, j])


@njit(cache=True)
def _nearest_serial(bodies, tri, bounds, first, count, left, roots, face_n, corner_n,
                    edge_n, manifold, todo, in_box, order, best, values, unknown):
    for m in range(bodies.shape[1]):
        _nearest_one(m, bodies, tri, bounds, first, count, left, roots, face_n, corner_n,
                     edge_n, manifold, todo, in_box, order, best, values, unknown)


@njit(cache=True, parallel=True)
def _nearest_parallel(bodies, tri, bounds, first, count, left, roots, face_n, corner_n,
                      edge_n, manifold, todo, in_box, order, best, values, unknown):
    for m in prange(bodies.shape[1]):
        _nearest_one(m, bodies, tri, bounds, first, count, left, roots, face_n, corner_n,
                     edge_n, manifold, todo, in_box, order, best, values, unknown)


def forest_signed_distance(bodies, forest: Forest, best, todo, box_distances) -> np.ndarray:
    """The smallest of best and the signed distances (tree_signed_distance's) to the meshes
    each point is to be tried on, from one search over the forest.

    Equal to taking the minimum over every tried mesh's tree_signed_distance: a mesh is only
    skipped, or its search cut short, where none of its triangles can beat the best so far.

    Parameters
    ----------
    bodies : (P, N, 3) float, m, the points in each mesh's frame.
    forest : Forest of P meshes.
    best : (N,) float, m, the smallest signed distance known so far (inf for none).
    todo : (N, P) bool, the meshes each point is tried on.
    box_distances : (N, P) float, m, from each point to each mesh's bounding box (0 in it):
        the meshes are tried nearest box first.

    Returns
    -------
    (N,) float64, m.

    References
    ----------
    As tree_signed_distance; pruning against the best so far: Ericson (2005) 6.2.
    """
    bodies = np.ascontiguousarray(bodies, dtype=float)
    best = np.ascontiguousarray(best, dtype=float)
    n = bodies.shape[1]
    values = np.full((n, len(forest.trees)), np.inf)
    unknown = np.zeros((n, len(forest.trees)), np.bool_)
    kernel = _nearest_parallel if n >= PARALLEL_FROM else _nearest_serial
    kernel(bodies, forest.triangles, forest.bounds, forest.first, forest.count, forest.left,
           forest.roots, forest.face_normals, forest.corner_normals,
           forest.edge_normals, forest.manifold, np.ascontiguousarray(todo, np.bool_),
           np.ascontiguousarray(box_distances == 0.0),
           np.ascontiguousarray(np.argsort(box_distances, axis=1, kind="stable")), best, values,
           unknown)
    for j in np.flatnonzero(unknown.any(axis=0)):  # the sign from ray parity
        rows = np.flatnonzero(unknown[:, j])
        inside = tree_inside(bodies[j, rows], forest.trees[j])
        values[rows, j] = np.where(inside, -1.0, 1.0) * np.abs(values[rows, j])
    return np.minimum(best, values.min(axis=1))
