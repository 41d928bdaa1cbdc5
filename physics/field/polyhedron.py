"""Uniformly magnetised polyhedron (closed, outward-oriented triangle mesh): exact H and gradient.

Each face f carries the surface charge sigma_f = M . n_f. A uniformly charged flat triangle gives
H = (sigma / 4 pi) [Omega n + sum_edges m_e ln((R_a + R_b + l) / (R_a + R_b - l))], Omega its
signed solid angle (positive on the +n side) and m_e the outward in-plane normal of edge e
(Guptasarma & Singh, Geophysics 64, 70 (1999)); the solid angle from
tan(Omega / 2) = (p - v1) . ((v2 - v1) x (v3 - v1)) / (R1 R2 R3 + (r1.r2) R3 + (r1.r3) R2 + (r2.r3) R1)
(Van Oosterom & Strackee, IEEE Trans. Biomed. Eng. 30, 125 (1983)). The edge logarithms depend
on the edge only, so each shared edge is evaluated once with its two faces' coefficients summed.

Gradient (derived here): grad ln(...) = l (r_a/R_a + r_b/R_b) / (R_a R_b + r_a . r_b) with
r = vertex - p, and grad Omega of a triangle is the Biot-Savart sum over its edges,
-(r_a x r_b) (R_a + R_b) / (R_a R_b (R_a R_b + r_a . r_b)) for each edge a -> b in the face's
winding order. R_a R_b + r_a . r_b is formed as |r_a x r_b|^2 / (R_a R_b - r_a . r_b) where it
would cancel (a point beside an edge).

Many coplanar faces of one charge (a CAD cap's fan of slivers) are summed through their boundary
instead, by physics/field/flat_regions.py: to within 1e-9 of sigma, and for faces coplanar only to
a binary STL's single-precision rounding, to within that rounding's effect (2.4e-7 of |M| at 50 um).

Numerics (DESIGN.md Conventions): lengths are scaled by the largest bounding-box side L; a point
within 1e-12 L of a face is on it and takes the outer side's value (the face's solid angle is
+2 pi there); a point within 1e-12 L of an edge or a vertex is pushed outward (along the sum of
the adjacent unit normals) by 1e-9 L. Nothing returns NaN or inf.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache

import numpy as np
from numba import njit, prange

from trapscape.physics.field.engine import serial_twin
from trapscape.physics.field.flat_regions import add_regions, flat_regions

SURFACE_TOL = 1e-12  # relative to the mesh size; the same convention as physics.field.cuboid
EDGE_PUSH = 1e-9  # relative to the mesh size
_CHUNK = 64  # points per scratch allocation
# Point-face pairs below which the field runs on one thread: a parallel call costs a thread start
# and join (about 1 ms of CPU on a busy machine), more than a few hundred points of a mesh of a
# few hundred faces; the same bound as physics/field/families.py. Both kernels give the same
# numbers (tests/physics/field/test_serial_kernels.py).
PARALLEL_MIN_WORK = 50_000
CHARGE_CUT = 1e-12  # faces and edges below this share of the largest charge are not summed
_INV_4PI = 1.0 / (4.0 * math.pi)


@dataclass(frozen=True, eq=False)
class MeshTables:
    """A mesh prepared for the kernels: scaled, edges shared, outward push directions."""

    centre: np.ndarray  # (3,) bounding-box centre, metres
    scale: float  # largest bounding-box side L, metres
    vertices: np.ndarray  # (V, 3) (v - centre) / L
    faces: np.ndarray  # (F, 3) int64, non-degenerate faces only
    face_edges: np.ndarray  # (F, 3) edge ids of a->b, b->c, c->a
    face_edge_sign: np.ndarray  # (F, 3) +1 where the face runs along the edge's own direction
    edges: np.ndarray  # (E, 2) vertex ids, a < b
    edge_length: np.ndarray  # (E,)
    area_normal: np.ndarray  # (F, 3) (v2 - v1) x (v3 - v1), scaled units
    unit_normal: np.ndarray  # (F, 3)
    edge_normal: np.ndarray  # (F, 3, 3) outward in-plane unit normal of each face edge
    vertex_push: np.ndarray  # (V, 3) unit
    edge_push: np.ndarray  # (E, 3) unit


_TABLES_CACHE: dict = {}
_TABLES_BY_IDENTITY: dict = {}  # (id, id) of read-only arrays -> ((the arrays), tables)


def mesh_tables(vertices: np.ndarray, faces: np.ndarray) -> MeshTables:
    """Prepare (and remember) the tables of a closed, outward-oriented triangle mesh.

    Parameters
    ----------
    vertices : array_like, shape (V, 3)
        m.
    faces : array_like of int, shape (F, 3)
        Vertex indices, counter-clockwise seen from outside (a closed, oriented mesh).

    Returns
    -------
    MeshTables
        Scaled by the largest bounding-box side; cached on the arrays' bytes (up to 65 meshes),
        and on their identity when they are read-only and own their data.

    Raises
    ------
    ValueError
        A mesh with no triangles or no extent, face indices outside the vertex list, or a mesh
        that is not closed or not consistently oriented (mesh_tables).
    """
    frozen = _frozen_pair(vertices, faces)
    if frozen in _TABLES_BY_IDENTITY:
        return _TABLES_BY_IDENTITY[frozen][1]
    held = (vertices, faces)  # the arrays themselves, so that their ids stay theirs
    vertices = np.ascontiguousarray(vertices, dtype=float).reshape(-1, 3)
    faces = np.ascontiguousarray(faces, dtype=np.int64).reshape(-1, 3)
    key = (vertices.tobytes(), faces.tobytes())
    tables = _TABLES_CACHE.get(key)
    if tables is None:
        tables = _build_tables(vertices, faces)
        if len(_TABLES_CACHE) > 64:
            _TABLES_CACHE.clear()
        _TABLES_CACHE[key] = tables
    if frozen is not None:
        if len(_TABLES_BY_IDENTITY) > 64:
            _TABLES_BY_IDENTITY.clear()
        _TABLES_BY_IDENTITY[frozen] = (held, tables)
    return tables


def _frozen_pair(vertices, faces):
    """(id, id) of two read-only arrays that own their data (a scene's mesh, frozen when it
    is loaded): held, their ids stay theirs, and nothing writes to them; None for anything else. Hashing a 100,000-triangle
    mesh's bytes takes milliseconds, and a trap search asks for the same mesh thousands of times."""
    if all(isinstance(a, np.ndarray) and a.flags.owndata and not a.flags.writeable
           for a in (vertices, faces)):
        return id(vertices), id(faces)
    return None


def _unit(v: np.ndarray, fallback: np.ndarray) -> np.ndarray:
    norm = np.linalg.norm(v, axis=-1, keepdims=True)
    return np.where(norm > 1e-12, v / np.where(norm > 0, norm, 1.0), fallback)


def _build_tables(vertices: np.ndarray, faces: np.ndarray) -> MeshTables:
    if faces.size == 0 or vertices.size == 0:
        raise ValueError("the mesh has no triangles; give a closed triangle mesh.")
    if faces.min() < 0 or faces.max() >= len(vertices):
        raise ValueError("the mesh has face indices outside its vertex list; re-export the mesh.")
    lo, hi = vertices.min(axis=0), vertices.max(axis=0)
    centre = 0.5 * (lo + hi)
    scale = float(np.max(hi - lo))
    if not scale > 0.0:
        raise ValueError("the mesh has no extent; give a closed triangle mesh with volume.")
    v = (vertices - centre) / scale
    a, b, c = v[faces[:, 0]], v[faces[:, 1]], v[faces[:, 2]]
    area_normal = np.cross(b - a, c - a)
    area2 = np.linalg.norm(area_normal, axis=1)
    keep = area2 > 1e-14  # zero-area faces carry no charge and subtend no solid angle
    _check_closed(faces)
    faces = faces[keep]
    area_normal = area_normal[keep]
    unit_normal = area_normal / area2[keep, None]

    directed = np.stack([faces[:, [0, 1]], faces[:, [1, 2]], faces[:, [2, 0]]], axis=1)  # (F, 3, 2)
    lo_id = directed.min(axis=2)
    hi_id = directed.max(axis=2)
    keys = lo_id.astype(np.int64) * len(v) + hi_id
    unique, inverse = np.unique(keys.ravel(), return_inverse=True)
    edges = np.stack([unique // len(v), unique % len(v)], axis=1)
    face_edges = inverse.reshape(-1, 3)
    face_edge_sign = np.where(directed[:, :, 0] == lo_id, 1.0, -1.0)
    edge_vec = v[edges[:, 1]] - v[edges[:, 0]]
    edge_length = np.linalg.norm(edge_vec, axis=1)

    start = v[directed[:, :, 0]]
    end = v[directed[:, :, 1]]
    along = end - start
    edge_normal = np.cross(along, unit_normal[:, None, :])
    edge_normal /= np.linalg.norm(edge_normal, axis=2, keepdims=True)

    corner_angle = _corner_angles(v, faces)
    vertex_sum = np.zeros_like(v)
    for k in range(3):
        np.add.at(vertex_sum, faces[:, k], corner_angle[:, k, None] * unit_normal)
    edge_sum = np.zeros((len(edges), 3))
    for k in range(3):
        np.add.at(edge_sum, face_edges[:, k], unit_normal)
    fallback_v = np.zeros_like(v)
    fallback_v[:, 2] = 1.0
    fallback_e = np.zeros_like(edge_sum)
    fallback_e[:, 2] = 1.0
    tables = MeshTables(
        centre=centre, scale=scale, vertices=np.ascontiguousarray(v), faces=np.ascontiguousarray(faces),
        face_edges=np.ascontiguousarray(face_edges), face_edge_sign=np.ascontiguousarray(face_edge_sign),
        edges=np.ascontiguousarray(edges), edge_length=edge_length,
        area_normal=np.ascontiguousarray(area_normal), unit_normal=np.ascontiguousarray(unit_normal),
        edge_normal=np.ascontiguousarray(edge_normal),
        vertex_push=np.ascontiguousarray(_unit(vertex_sum, fallback_v)),
        edge_push=np.ascontiguousarray(_unit(edge_sum, fallback_e)),
    )
    return tables


def _check_closed(faces: np.ndarray) -> None:
    """Every edge must be used exactly twice, once in each direction (closed and oriented)."""
    directed = np.concatenate([faces[:, [0, 1]], faces[:, [1, 2]], faces[:, [2, 0]]])
    n = int(faces.max()) + 1
    forward = directed[:, 0].astype(np.int64) * n + directed[:, 1]
    backward = directed[:, 1].astype(np.int64) * n + directed[:, 0]
    forward_sorted = np.sort(forward)
    if np.any(forward_sorted[1:] == forward_sorted[:-1]):
        raise ValueError("the mesh is not consistently oriented (an edge is used twice in the same "
                         "direction); repair it so that every face is ordered counter-clockwise "
                         "seen from outside.")
    if not np.array_equal(forward_sorted, np.sort(backward)):
        raise ValueError("the mesh is not closed (some edges belong to only one triangle); repair "
                         "it into a watertight solid.")


def _corner_angles(v: np.ndarray, faces: np.ndarray) -> np.ndarray:
    angles = np.empty(faces.shape)
    for k in range(3):
        p = v[faces[:, k]]
        q = v[faces[:, (k + 1) % 3]] - p
        r = v[faces[:, (k + 2) % 3]] - p
        cos = np.einsum("ij,ij->i", q, r) / (np.linalg.norm(q, axis=1) * np.linalg.norm(r, axis=1))
        angles[:, k] = np.arccos(np.clip(cos, -1.0, 1.0))
    return angles


# ---------------------------------------------------------------------------------------------
# kernels


@njit(cache=True)
def _locate(px, py, pz, V, EV, elen, r, R, dot, q, s):
    """Vertex vectors r = v - p and R = |r|; per edge r_a . r_b, q = R_a R_b + r_a . r_b and
    s = R_a + R_b. Returns (kind, index): kind 1 = on a vertex, 2 = on an edge, 0 = neither."""
    tol2 = SURFACE_TOL * SURFACE_TOL
    for i in range(V.shape[0]):
        x = V[i, 0] - px
        y = V[i, 1] - py
        z = V[i, 2] - pz
        r[i, 0] = x
        r[i, 1] = y
        r[i, 2] = z
        R2 = x * x + y * y + z * z
        if R2 <= tol2:
            return 1, i
        R[i] = math.sqrt(R2)
    for e in range(EV.shape[0]):
        a = EV[e, 0]
        b = EV[e, 1]
        d = r[a, 0] * r[b, 0] + r[a, 1] * r[b, 1] + r[a, 2] * r[b, 2]
        RR = R[a] * R[b]
        dot[e] = d
        s[e] = R[a] + R[b]
        if d >= 0.0:
            q[e] = RR + d
        else:
            cx = r[a, 1] * r[b, 2] - r[a, 2] * r[b, 1]
            cy = r[a, 2] * r[b, 0] - r[a, 0] * r[b, 2]
            cz = r[a, 0] * r[b, 1] - r[a, 1] * r[b, 0]
            c2 = cx * cx + cy * cy + cz * cz
            if c2 <= tol2 * elen[e] * elen[e]:
                return 2, e
            q[e] = c2 / (RR - d)
    return 0, 0


@njit(cache=True)
def _locate_pushed(px, py, pz, V, EV, elen, vpush, epush, r, R, dot, q, s):
    """_locate, pushing the point off a vertex or an edge first. Returns the point used."""
    push = EDGE_PUSH
    while True:
        kind, idx = _locate(px, py, pz, V, EV, elen, r, R, dot, q, s)
        if kind == 0:
            return px, py, pz
        d = vpush[idx] if kind == 1 else epush[idx]
        px += push * d[0]
        py += push * d[1]
        pz += push * d[2]
        push *= 10.0  # only a degenerate mesh (two coincident edges) lands on another one


@njit(cache=True)
def _solid_angle(f, FV, FE, A2, r, R, dot):
    """Signed solid angle of face f (positive on its +n side; +2 pi on the face itself)."""
    i = FV[f, 0]
    j = FV[f, 1]
    k = FV[f, 2]
    # (p - v1) . A2 = -r_i . A2 = 2 A h, h the signed height above the face
    num = -(r[i, 0] * A2[f, 0] + r[i, 1] * A2[f, 1] + r[i, 2] * A2[f, 2])
    den = (R[i] * R[j] * R[k] + dot[FE[f, 0]] * R[k] + dot[FE[f, 1]] * R[i] + dot[FE[f, 2]] * R[j])
    area2 = math.sqrt(A2[f, 0] * A2[f, 0] + A2[f, 1] * A2[f, 1] + A2[f, 2] * A2[f, 2])
    if abs(num) <= SURFACE_TOL * area2:
        # in the face's plane: on the triangle (den < 0) take the outer limit
        return 2.0 * math.pi if den < 0.0 else 0.0
    return 2.0 * math.atan2(num, den)


@njit(cache=True, error_model="numpy")
def _field_chunk(chunk, points, V, FV, FE, EV, elen, A2, sn, ce, de, vpush, epush, faces_on,
                 edges_on, want_h, want_g, H, G):
    """H (4 pi H / (sigma-weighted) sums) and G at the points of one chunk, in scaled units (see
    polyhedron_H). Only the charged faces (faces_on) and the edges next to one (edges_on) are
    summed."""
    n = points.shape[0]
    r = np.empty((V.shape[0], 3))
    R = np.empty(V.shape[0])
    dot = np.empty(EV.shape[0])
    q = np.empty(EV.shape[0])
    s = np.empty(EV.shape[0])
    for m in range(chunk * _CHUNK, min(n, (chunk + 1) * _CHUNK)):
        px, py, pz = _locate_pushed(points[m, 0], points[m, 1], points[m, 2], V, EV, elen,
                                    vpush, epush, r, R, dot, q, s)
        hx = 0.0
        hy = 0.0
        hz = 0.0
        gxx = gxy = gxz = gyx = gyy = gyz = gzx = gzy = gzz = 0.0
        for k in range(edges_on.shape[0]):
            e = edges_on[k]
            a = EV[e, 0]
            b = EV[e, 1]
            l = elen[e]
            if want_h:
                sl = s[e] + l
                L = math.log(sl * sl / (2.0 * q[e]))
                hx += ce[e, 0] * L
                hy += ce[e, 1] * L
                hz += ce[e, 2] * L
            if want_g:
                inv_q = 1.0 / q[e]
                ia = 1.0 / R[a]
                ib = 1.0 / R[b]
                # grad of the edge log: l (r_a / R_a + r_b / R_b) / q
                t = l * inv_q
                lx = t * (r[a, 0] * ia + r[b, 0] * ib)
                ly = t * (r[a, 1] * ia + r[b, 1] * ib)
                lz = t * (r[a, 2] * ia + r[b, 2] * ib)
                # Biot-Savart vector of the edge a -> b: -(r_a x r_b) (R_a + R_b) / (R_a R_b q)
                w = -s[e] * ia * ib * inv_q
                bx = w * (r[a, 1] * r[b, 2] - r[a, 2] * r[b, 1])
                by = w * (r[a, 2] * r[b, 0] - r[a, 0] * r[b, 2])
                bz = w * (r[a, 0] * r[b, 1] - r[a, 1] * r[b, 0])
                c0, c1, c2 = ce[e, 0], ce[e, 1], ce[e, 2]
                d0, d1, d2 = de[e, 0], de[e, 1], de[e, 2]
                gxx += c0 * lx + d0 * bx
                gxy += c0 * ly + d0 * by
                gxz += c0 * lz + d0 * bz
                gyx += c1 * lx + d1 * bx
                gyy += c1 * ly + d1 * by
                gyz += c1 * lz + d1 * bz
                gzx += c2 * lx + d2 * bx
                gzy += c2 * ly + d2 * by
                gzz += c2 * lz + d2 * bz
        if want_h:
            for k in range(faces_on.shape[0]):
                f = faces_on[k]
                om = _solid_angle(f, FV, FE, A2, r, R, dot)
                hx += sn[f, 0] * om
                hy += sn[f, 1] * om
                hz += sn[f, 2] * om
            H[m, 0] = hx
            H[m, 1] = hy
            H[m, 2] = hz
        if want_g:
            G[m, 0, 0] = gxx
            G[m, 0, 1] = gxy
            G[m, 0, 2] = gxz
            G[m, 1, 0] = gyx
            G[m, 1, 1] = gyy
            G[m, 1, 2] = gyz
            G[m, 2, 0] = gzx
            G[m, 2, 1] = gzy
            G[m, 2, 2] = gzz


@njit(cache=True, parallel=True, error_model="numpy")
def _field_kernel(points, V, FV, FE, EV, elen, A2, sn, ce, de, vpush, epush, faces_on, edges_on,
                  want_h, want_g, H, G):
    """_field_chunk over every chunk of the points, the chunks shared out over the threads."""
    for chunk in prange((points.shape[0] + _CHUNK - 1) // _CHUNK):
        _field_chunk(chunk, points, V, FV, FE, EV, elen, A2, sn, ce, de, vpush, epush, faces_on,
                     edges_on, want_h, want_g, H, G)


_field_serial = serial_twin(_field_kernel)


# ---------------------------------------------------------------------------------------------
# public functions


def _charges(tables: MeshTables, sigma: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """sigma_f n_f (F, 3), the edge-log coefficients c_e (E, 3) and the solid-angle gradient
    coefficients d_e (E, 3) of face charges sigma_f, A/m."""
    sn = sigma[:, None] * tables.unit_normal
    n_edges = len(tables.edges)
    ce = np.zeros((n_edges, 3))
    de = np.zeros((n_edges, 3))
    for k in range(3):
        np.add.at(ce, tables.face_edges[:, k], sigma[:, None] * tables.edge_normal[:, k, :])
        np.add.at(de, tables.face_edges[:, k], tables.face_edge_sign[:, k, None] * sn)
    return np.ascontiguousarray(sn), ce, de


def _charged(sn, ce, de) -> tuple[np.ndarray, np.ndarray]:
    """Indices of the faces that carry charge and of the edges whose terms are not zero.

    A face parallel to M (a rotor segment's top and bottom, a disc's side) adds nothing; for a
    radial or axial M that is about half the faces, and skipping them halves the cost. The cut is
    relative, so what is skipped is below 1e-12 of the largest face charge.
    """
    def nonzero(rows):
        size = np.abs(rows).max(axis=1)
        return np.flatnonzero(size > CHARGE_CUT * max(size.max(), np.finfo(float).tiny))
    return nonzero(sn), nonzero(np.hstack([ce, de]))


@dataclass(frozen=True, eq=False)
class FaceSums:
    """The charges of faces summed one by one: sigma n, edge coefficients, and the faces and
    edges that carry any."""

    sn: np.ndarray
    ce: np.ndarray
    de: np.ndarray
    faces_on: np.ndarray
    edges_on: np.ndarray


def _face_sums(tables: MeshTables, sigma: np.ndarray) -> FaceSums:
    sn, ce, de = _charges(tables, sigma)
    sums = FaceSums(sn, ce, de, *_charged(sn, ce, de))
    for array in vars(sums).values():
        array.flags.writeable = False  # one copy serves every later call
    return sums


@lru_cache(maxsize=128)
def _charge_tables(tables: MeshTables, magnetization: tuple) -> tuple:
    """The faces summed one by one and the flat regions summed by their boundary (or None),
    remembered: a trap search asks for the same part thousands of times."""
    sigma = tables.unit_normal @ np.asarray(magnetization, dtype=float)
    regions = flat_regions(tables, sigma)
    if regions is not None:
        sigma = sigma.copy()
        sigma[regions.faces] = 0.0
    return _face_sums(tables, sigma), regions


@lru_cache(maxsize=128)
def _region_alone(tables: MeshTables, magnetization: tuple, g: int) -> FaceSums:
    """Flat region g's faces alone, summed one by one: for the rare points in its plane."""
    sigma = tables.unit_normal @ np.asarray(magnetization, dtype=float)
    faces = _charge_tables(tables, magnetization)[1].face_groups[g]
    own = np.zeros_like(sigma)
    own[faces] = sigma[faces]
    return _face_sums(tables, own)


def _scaled_points(tables: MeshTables, points) -> np.ndarray:
    points = np.asarray(points, dtype=float).reshape(-1, 3)
    return np.ascontiguousarray((points - tables.centre) / tables.scale)


def _sum_faces(p, t: MeshTables, sums: FaceSums, want_h, want_g, H, G):
    """Writes the faces' 4 pi H and 4 pi grad H (scaled units) into H, G."""
    work = len(p) * len(sums.faces_on)
    kernel = _field_kernel if work >= PARALLEL_MIN_WORK else _field_serial
    kernel(p, t.vertices, t.faces, t.face_edges, t.edges, t.edge_length, t.area_normal,
           sums.sn, sums.ce, sums.de, t.vertex_push, t.edge_push, sums.faces_on, sums.edges_on,
           want_h, want_g, H, G)


def _run_field(points, vertices, faces, magnetization, want_h, want_g):
    t = mesh_tables(vertices, faces)
    M = tuple(float(m) for m in np.asarray(magnetization, dtype=float).reshape(3))
    sums, regions = _charge_tables(t, M)
    p = _scaled_points(t, points)
    H = np.zeros((len(p), 3)) if want_h else np.empty((1, 3))
    G = np.zeros((len(p), 3, 3)) if want_g else np.empty((1, 3, 3))
    if regions is None or len(sums.faces_on):
        _sum_faces(p, t, sums, want_h, want_g, H, G)
    if regions is not None:
        in_plane = add_regions(p, regions, want_h, want_g, H, G)
        for g in np.flatnonzero(in_plane.any(axis=0)):
            rows = np.flatnonzero(in_plane[:, g])
            H_g, G_g = np.zeros((len(rows), 3)), np.zeros((len(rows), 3, 3))
            _sum_faces(np.ascontiguousarray(p[rows]), t, _region_alone(t, M, int(g)), True, True,
                       H_g, G_g)
            if want_h:
                H[rows] += H_g
            if want_g:
                G[rows] += G_g
    # the unused output is a never-written placeholder: scale only what was computed
    return (H * _INV_4PI if want_h else None), (G * (_INV_4PI / t.scale) if want_g else None)


def polyhedron_H(points: np.ndarray, vertices: np.ndarray, faces: np.ndarray, magnetization) -> np.ndarray:
    """H of a uniformly magnetised closed mesh. Inside the solid B = mu0 (H + M).

    Parameters
    ----------
    points : array_like, shape (N, 3)
        Body-frame points, m.
    vertices : array_like, shape (V, 3)
        m.
    faces : array_like of int, shape (F, 3)
        Vertex indices, counter-clockwise seen from outside (a closed, oriented mesh).
    magnetization : array_like, shape (3,)
        Uniform M in the body frame, A/m.

    Returns
    -------
    numpy.ndarray, shape (N, 3)
        A/m.

    Raises
    ------
    ValueError
        A mesh with no triangles or no extent, face indices outside the vertex list, or a mesh
        that is not closed or not consistently oriented (mesh_tables).

    References
    ----------
    D. Guptasarma and B. Singh, Geophysics 64, 70 (1999); the solid angle:
    A. Van Oosterom and J. Strackee, IEEE Trans. Biomed. Eng. 30, 125 (1983).
    """
    return _run_field(points, vertices, faces, magnetization, True, False)[0]


def polyhedron_H_gradient(points: np.ndarray, vertices: np.ndarray, faces: np.ndarray, magnetization) -> np.ndarray:
    """dH_i/dx_j of a uniformly magnetised closed mesh; trace-free and symmetric off the surface.

    Parameters
    ----------
    points : array_like, shape (N, 3)
        Body-frame points, m.
    vertices : array_like, shape (V, 3)
        m.
    faces : array_like of int, shape (F, 3)
        Vertex indices, counter-clockwise seen from outside (a closed, oriented mesh).
    magnetization : array_like, shape (3,)
        Uniform M in the body frame, A/m.

    Returns
    -------
    numpy.ndarray, shape (N, 3, 3)
        G[n, i, j] = dH_i/dx_j, A/m^2.

    Raises
    ------
    ValueError
        A mesh with no triangles or no extent, face indices outside the vertex list, or a mesh
        that is not closed or not consistently oriented (mesh_tables).

    References
    ----------
    D. Guptasarma and B. Singh, Geophysics 64, 70 (1999); the solid angle:
    A. Van Oosterom and J. Strackee, IEEE Trans. Biomed. Eng. 30, 125 (1983);
    the gradient derived here.
    """
    return _run_field(points, vertices, faces, magnetization, False, True)[1]


def polyhedron_H_and_gradient(points: np.ndarray, vertices: np.ndarray, faces: np.ndarray,
                              magnetization) -> tuple[np.ndarray, np.ndarray]:
    """H and dH_i/dx_j of a uniformly magnetised closed mesh in one pass.

    Parameters
    ----------
    points : array_like, shape (N, 3)
        Body-frame points, m.
    vertices : array_like, shape (V, 3)
        m.
    faces : array_like of int, shape (F, 3)
        Vertex indices, counter-clockwise seen from outside (a closed, oriented mesh).
    magnetization : array_like, shape (3,)
        Uniform M in the body frame, A/m.

    Returns
    -------
    H : numpy.ndarray, shape (N, 3)
        A/m.
    G : numpy.ndarray, shape (N, 3, 3)
        G[n, i, j] = dH_i/dx_j, A/m^2.

    Raises
    ------
    ValueError
        A mesh with no triangles or no extent, face indices outside the vertex list, or a mesh
        that is not closed or not consistently oriented (mesh_tables).

    References
    ----------
    D. Guptasarma and B. Singh, Geophysics 64, 70 (1999); the solid angle:
    A. Van Oosterom and J. Strackee, IEEE Trans. Biomed. Eng. 30, 125 (1983);
    the gradient derived here.
    """
    return _run_field(points, vertices, faces, magnetization, True, True)
