"""Coplanar faces of one charge summed through their boundary: the exact field of a flat region
for about log(n) of its n boundary edges.

A CAD cylinder's end cap is a fan of n long thin triangles from its centre; summing them costs n
triangles at every point, and no near/far split by triangle helps, since every sliver passes the
centre. The faces of one plane and one charge sigma form a flat region; its field is the sum,
over the boundary edges a -> b, of the field of the signed triangle (c, a, b), c any point of the
plane (the triangles cover the region once and cancel outside it). A chain of consecutive
boundary edges from v_i to v_j adds up to the triangle (c, v_i, v_j) plus the lens between the
chain and its chord (the polygon v_i ... v_j). Each loop of the boundary is halved recursively;
far from a chain's ball the lens enters by its charge, dipole and quadrupole moments, near it the
chain is split, down to single edges. The chains used cover the loop, so the edges c -> v of
their triangles cancel in pairs: a chain adds the solid angle of (c, v_i, v_j) and the logarithm
of its chord (derived here from the face formula of physics/field/polyhedron.py, Guptasarma &
Singh, Geophysics 64, 70 (1999); the multipole terms are the Taylor series of 1/|x - y|).

Error: past the quadrupole, a lens whose |area| has spread S (the integral of |y - y0|^2) within
rho of its centre adds at most (sqrt 2 / 4 pi) S rho / r^5 sum (j + 4) u^j to H and
(2 / 4 pi) S rho / r^6 sum (j + 4) (j + 5) u^j to grad H, u = rho / r (_reach2). A chain's lens is
used only where both are below NODE_TOLERANCE |sigma| (lengths in units of the mesh size), so a
point's error is below NODE_TOLERANCE times the number of chains used (a few hundred); measured
against the face-by-face sum, about 1e-10 (tests/physics/field/test_flat_regions.py).

Faces belong to one region when they are connected through nearly parallel neighbours and every
corner lies within single-precision rounding of one plane (a binary STL of a turned part); the
region's charge is their area-weighted mean. The difference from summing the rounded faces one
by one is then of the corners' offset over the distance (2.4e-7 of |M| measured at 50 um).

Units as in polyhedron.py: scaled lengths, and the kernels add 4 pi H and 4 pi grad H.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numba import njit, prange

from trapscape.physics.field.engine import serial_twin

MIN_FACES = 500  # fewer coplanar faces are summed face by face, which costs about the same
NODE_TOLERANCE = 1e-9  # a chain's lens error bound, relative to |sigma| (and |sigma| / L)
# Faces sharing an edge whose unit normals differ by less than this may lie in one plane: a CAD
# sliver's normal turns by up to 1e-3 when its corners are rounded to single precision.
FOLD = 1e-2
# A region's corners may lie this share of the mesh's largest coordinate off its plane: four
# units of single precision (a binary STL rounds every coordinate so), and 1e-12 of the size.
ROUNDING = 4.0 * 2.0**-24
_STACK = 128
# Points below which the regions are summed on one thread: a parallel call costs a thread start
# and join (about 1 ms of CPU on a busy machine), more than a few dozen points take.
PARALLEL_MIN_POINTS = 64


@dataclass(frozen=True, eq=False)
class FlatRegions:
    """The flat regions of one mesh and magnetisation, packed for the kernel.

    Groups g: normal (g, 3), sigma (g,), centre (g, 3) the fan point c, low/high (g, 3) the box of
    its faces, near (g,) how close to its plane a point is summed face by face; loops of group g
    are loop_first[g]:loop_first[g + 1]; loop k's tree starts at node root[k]. Nodes: the chain
    v[lo] .. v[hi] of the packed loop vertices (each loop repeats its first vertex at its end),
    children left/right (-1 for a single edge), ball centre, reach2 (the squared distance beyond
    which the lens's moments are used), and the lens's charge, dipole and quadrupole about the
    centre (sigma included)."""

    face_groups: tuple  # (faces of group g) for each g, ids into MeshTables.faces
    normal: np.ndarray
    sigma: np.ndarray
    centre: np.ndarray
    low: np.ndarray
    high: np.ndarray
    near: np.ndarray
    loop_first: np.ndarray
    root: np.ndarray
    vertices: np.ndarray
    lo: np.ndarray
    hi: np.ndarray
    left: np.ndarray
    right: np.ndarray
    ball: np.ndarray
    reach2: np.ndarray
    charge: np.ndarray
    dipole: np.ndarray
    quadrupole: np.ndarray
    chord_length: np.ndarray
    chord_normal: np.ndarray

    @property
    def faces(self) -> np.ndarray:
        return np.concatenate(self.face_groups)


# ---------------------------------------------------------------------------------------------
# grouping and loops


def _neighbours(tables, charged: np.ndarray) -> np.ndarray:
    """Pairs of charged faces sharing an edge whose normals differ by less than FOLD."""
    on = np.zeros(len(tables.faces), bool)
    on[charged] = True
    edge = tables.face_edges.ravel()
    face = np.repeat(np.arange(len(tables.faces)), 3)
    order = np.argsort(edge, kind="stable")
    edge, face = edge[order], face[order]
    twin = np.flatnonzero(edge[1:] == edge[:-1])
    a, b = face[twin], face[twin + 1]
    n = tables.unit_normal
    keep = on[a] & on[b] & (np.einsum("ij,ij->i", n[a], n[b]) > 1.0 - 0.5 * FOLD**2)
    return np.column_stack([a[keep], b[keep]])


def _groups(tables, sigma) -> list:
    """(face ids, normal, sigma, tolerance) of each set of at least MIN_FACES charged faces,
    connected through nearly parallel neighbours, whose corners all lie within the rounding of
    one plane (the area-weighted normal through their area-weighted centre); its charge is the
    faces' area-weighted mean (M . n of the plane: the area vectors of a flat polygon's pieces add
    up to its own). Tolerance: how far off the plane a corner may be, scaled units."""
    from scipy.sparse import coo_matrix
    from scipy.sparse.csgraph import connected_components

    scale = max(float(np.abs(sigma).max()), np.finfo(float).tiny)
    charged = np.flatnonzero(np.abs(sigma) > 1e-12 * scale)
    if len(charged) < MIN_FACES:
        return []
    pairs = _neighbours(tables, charged)
    count = len(tables.faces)
    graph = coo_matrix((np.ones(len(pairs)), (pairs[:, 0], pairs[:, 1])), shape=(count, count))
    _, label = connected_components(graph, directed=False)
    label = label[charged]
    sizes = np.bincount(label)
    largest = np.abs(tables.centre).max() / tables.scale + 0.5  # the coordinates' size, scaled
    tolerance = max(ROUNDING * largest, 1e-12)
    groups = []
    for component in np.flatnonzero(sizes >= MIN_FACES):
        faces = charged[label == component]
        area = tables.area_normal[faces]
        normal = area.sum(axis=0)
        normal /= np.linalg.norm(normal)
        weight = np.linalg.norm(area, axis=1)
        corners = tables.vertices[tables.faces[faces]]
        centre = np.einsum("f,fki->i", weight, corners) / (3.0 * weight.sum())
        if np.abs((corners - centre) @ normal).max() <= tolerance:
            groups.append((faces, normal, float(weight @ sigma[faces] / weight.sum()), tolerance))
    return groups


def _loops(faces: np.ndarray, vertex_count: int) -> list | None:
    """The boundary loops (vertex ids, in the faces' winding) of a set of faces; None when a
    vertex is met twice on the boundary (two loops touching), which the faces then handle."""
    directed = np.concatenate([faces[:, [0, 1]], faces[:, [1, 2]], faces[:, [2, 0]]])
    forward = directed[:, 0] * vertex_count + directed[:, 1]
    backward = directed[:, 1] * vertex_count + directed[:, 0]
    boundary = directed[~np.isin(forward, backward)]
    if len(boundary) == 0 or len(np.unique(boundary[:, 0])) != len(boundary):
        return None
    following = dict(zip(boundary[:, 0].tolist(), boundary[:, 1].tolist()))
    loops = []
    while following:
        start = next(iter(following))
        loop = [start]
        nxt = following.pop(start)
        while nxt != start:
            loop.append(nxt)
            nxt = following.pop(nxt, None)
            if nxt is None:
                return None
        loops.append(np.array(loop, dtype=np.int64))
    return loops


# ---------------------------------------------------------------------------------------------
# the chain trees


@njit(cache=True)
def _split(lo, hi, left, right, first_node, first, last):
    """Nodes of the chain first .. last (vertex ids), halved down to single edges; parents before
    children. Returns the number of nodes written."""
    count = 0
    stack_lo = np.empty(_STACK, np.int64)
    stack_hi = np.empty(_STACK, np.int64)
    stack_parent = np.empty(_STACK, np.int64)
    stack_side = np.empty(_STACK, np.int64)
    stack_lo[0], stack_hi[0], stack_parent[0], stack_side[0] = first, last, -1, 0
    top = 1
    while top > 0:
        top -= 1
        a, b, parent, side = stack_lo[top], stack_hi[top], stack_parent[top], stack_side[top]
        k = first_node + count
        count += 1
        lo[k], hi[k], left[k], right[k] = a, b, -1, -1
        if parent >= 0:
            if side == 0:
                left[parent] = k
            else:
                right[parent] = k
        if b - a > 1:
            m = (a + b) // 2
            stack_lo[top], stack_hi[top], stack_parent[top], stack_side[top] = m, b, k, 1
            top += 1
            stack_lo[top], stack_hi[top], stack_parent[top], stack_side[top] = a, m, k, 0
            top += 1
    return count


@njit(cache=True)
def _moments(v, n, sigma, lo, hi, left, right, first_node, count, ball, radius, area, spread,
             centroid, charge, dipole, quadrupole):
    """Ball, the lens moments, and its absolute area and spread (the integral of |y - y0|^2 over
    |area|, which bounds the higher moments) of nodes first_node .. + count, children first: a
    lens is its children's lenses and the triangle (v_lo, v_mid, v_hi); centroid: the first
    moment of |area| about the ball's centre."""
    for k in range(first_node + count - 1, first_node - 1, -1):
        a, b = lo[k], hi[k]
        low = v[a].copy()
        high = v[a].copy()
        for i in range(a, b + 1):
            for j in range(3):
                low[j] = min(low[j], v[i, j])
                high[j] = max(high[j], v[i, j])
        y0 = 0.5 * (low + high)
        ball[k] = y0
        r2 = 0.0
        for i in range(a, b + 1):
            d = v[i] - y0
            r2 = max(r2, d[0] * d[0] + d[1] * d[1] + d[2] * d[2])
        radius[k] = math.sqrt(r2)
        if left[k] < 0:
            continue
        for child in (left[k], right[k]):
            d = ball[child] - y0
            q, A = charge[child], area[child]
            charge[k] += q
            area[k] += A
            spread[k] += spread[child] + A * (d[0] * d[0] + d[1] * d[1] + d[2] * d[2])
            for i in range(3):
                spread[k] += 2.0 * d[i] * centroid[child, i]
                centroid[k, i] += centroid[child, i] + A * d[i]
                dipole[k, i] += dipole[child, i] + q * d[i]
                for j in range(3):
                    quadrupole[k, i, j] += (quadrupole[child, i, j] + dipole[child, i] * d[j]
                                            + d[i] * dipole[child, j] + q * d[i] * d[j])
        m = (a + b) // 2
        p0, p1, p2 = v[a] - y0, v[m] - y0, v[b] - y0
        cross = np.cross(p1 - p0, p2 - p0)
        signed = 0.5 * (cross[0] * n[0] + cross[1] * n[1] + cross[2] * n[2])
        q, A = sigma * signed, abs(signed)
        s = p0 + p1 + p2
        charge[k] += q
        area[k] += A
        for i in range(3):
            dipole[k, i] += q * s[i] / 3.0
            centroid[k, i] += A * s[i] / 3.0
            spread[k] += (A / 12.0) * (p0[i] * p0[i] + p1[i] * p1[i] + p2[i] * p2[i] + s[i] * s[i])
            for j in range(3):
                quadrupole[k, i, j] += (q / 12.0) * (p0[i] * p0[j] + p1[i] * p1[j]
                                                     + p2[i] * p2[j] + s[i] * s[j])


def _reach2(radius: np.ndarray, spread: np.ndarray) -> np.ndarray:
    """Squared distance from a ball's centre beyond which its lens's quadrupole expansion is
    within NODE_TOLERANCE, at least twice the radius.

    Past the quadrupole, degree l adds at most spread rho^(l - 2) / r^(l + 1) to the potential
    (|y - y0|^l <= rho^(l - 2) |y - y0|^2); its gradient at most sqrt(2) (l + 1) times that over r
    (Bernstein's inequality for P_l), its second derivatives 2 (l + 1) (l + 2) over r^2 (derived
    here). Summed over l >= 3 with u = rho / r: (sqrt 2 / 4 pi) spread rho sum (j + 4) u^j / r^5
    for H, (2 / 4 pi) spread rho sum (j + 4) (j + 5) u^j / r^6 for grad H."""
    load = spread * radius / (4.0 * math.pi * NODE_TOLERANCE)

    def needed(reach):
        u = np.minimum(radius / np.maximum(reach, 1e-300), 0.5)
        v = 1.0 / (1.0 - u)
        h_sum = 4.0 * v + u * v * v  # sum (j + 4) u^j
        g_sum = 20.0 * v + 10.0 * u * v * v + 2.0 * u * u * v**3  # sum (j + 4) (j + 5) u^j
        return np.maximum.reduce([2.0 * radius, (math.sqrt(2.0) * load * h_sum) ** 0.2,
                                  (2.0 * load * g_sum) ** (1.0 / 6.0)])

    reach = 2.0 * radius
    for _ in range(4):  # the sums shrink with u: a few rounds settle r
        reach = needed(reach)
    reach = np.maximum(reach, needed(reach))  # the bound holds at r (needed(r) <= r)
    return reach * reach


def flat_regions(tables, sigma: np.ndarray) -> FlatRegions | None:
    """The flat regions of a mesh whose faces carry the charges sigma, or None if it has none.

    Parameters
    ----------
    tables : MeshTables
        physics.field.polyhedron's tables (scaled units).
    sigma : numpy.ndarray, shape (F,)
        M . n of each face, A/m.

    Returns
    -------
    FlatRegions or None
    """
    found, loops_of = [], []
    for group in _groups(tables, sigma):
        loops = _loops(tables.faces[group[0]], len(tables.vertices))
        if loops is not None:
            found.append(group)
            loops_of.append(loops)
    if not found:
        return None
    groups = [faces for faces, _, _, _ in found]
    normal = np.array([n for _, n, _, _ in found])
    group_sigma = np.array([charge for _, _, charge, _ in found])
    v = tables.vertices
    loop_vertices = [np.append(loop, loop[0]) for loops in loops_of for loop in loops]
    sizes = np.array([len(ids) for ids in loop_vertices])
    starts = np.concatenate([[0], np.cumsum(sizes)[:-1]])
    packed = np.ascontiguousarray(v[np.concatenate(loop_vertices)])
    total_nodes = int(np.sum(2 * (sizes - 1) - 1))
    lo, hi, left, right = (np.empty(total_nodes, np.int64) for _ in range(4))
    ball = np.zeros((total_nodes, 3))
    radius, area, spread, charge = (np.zeros(total_nodes) for _ in range(4))
    centroid, dipole = np.zeros((total_nodes, 3)), np.zeros((total_nodes, 3))
    quadrupole = np.zeros((total_nodes, 3, 3))
    roots, loop_first, group_nodes, node = [], [0], [0], 0
    loop_index = 0
    for g, loops in enumerate(loops_of):
        for _ in loops:
            first, last = starts[loop_index], starts[loop_index] + sizes[loop_index] - 1
            count = _split(lo, hi, left, right, node, first, last)
            _moments(packed, normal[g], group_sigma[g], lo, hi, left, right, node, count, ball,
                     radius, area, spread, centroid, charge, dipole, quadrupole)
            roots.append(node)
            node += count
            loop_index += 1
        loop_first.append(loop_index)
        group_nodes.append(node)
    corners = [v[tables.faces[faces]].reshape(-1, 3) for faces in groups]
    chord = packed[hi] - packed[lo]
    chord_length = np.linalg.norm(chord, axis=1)
    node_normal = np.repeat(normal, np.diff(group_nodes), axis=0)
    unit = np.divide(chord, chord_length[:, None], out=np.zeros_like(chord),
                     where=chord_length[:, None] > 0)
    return FlatRegions(
        face_groups=tuple(groups), normal=normal, sigma=group_sigma,
        centre=np.array([c.mean(axis=0) for c in corners]),
        low=np.array([c.min(axis=0) for c in corners]),
        high=np.array([c.max(axis=0) for c in corners]),
        near=np.array([max(2.0 * tolerance, 1e-10) for _, _, _, tolerance in found]),
        loop_first=np.array(loop_first, np.int64), root=np.array(roots, np.int64),
        vertices=packed, lo=lo, hi=hi, left=left, right=right, ball=ball,
        reach2=_reach2(radius, spread), charge=charge, dipole=dipole, quadrupole=quadrupole,
        chord_length=chord_length, chord_normal=np.ascontiguousarray(np.cross(unit, node_normal)))


# ---------------------------------------------------------------------------------------------
# the field


@njit(cache=True, inline="always")
def _chord(cx, cy, cz, Rc, ax, ay, az, Ra, bx, by, bz, Rb, l, k, chord_normal, g, normal, sigma,
           want_h, want_g, H, G):
    """4 pi H (and grad) of a chain's chord a -> b seen from the fan point c (r = vertex - point,
    R = |r|): sigma times the solid angle of (c, a, b) along n, plus the chord's edge logarithm
    along its in-plane normal m = t x n (chain k, region g)."""
    m0, m1, m2 = chord_normal[k, 0], chord_normal[k, 1], chord_normal[k, 2]
    n0, n1, n2 = normal[g, 0], normal[g, 1], normal[g, 2]
    ab = ax * bx + ay * by + az * bz
    RR = Ra * Rb
    ux = ay * bz - az * by
    uy = az * bx - ax * bz
    uz = ax * by - ay * bx
    if ab >= 0.0:
        q = RR + ab
    else:
        q = (ux * ux + uy * uy + uz * uz) / (RR - ab)
    den, num = 1.0, 0.0
    if want_h:
        # solid angle of (c, a, b) = 2 arg(den + i num), r_c . (r_a x r_b) over Van Oosterom &
        # Strackee's denominator; the caller adds the args as one product's
        num = -(cx * ux + cy * uy + cz * uz)
        den = Rc * RR + (cx * ax + cy * ay + cz * az) * Rb + ab * Rc \
            + (bx * cx + by * cy + bz * cz) * Ra
        s = Ra + Rb + l
        L = sigma * math.log(s * s / (2.0 * q))
        H[0] += m0 * L
        H[1] += m1 * L
        H[2] += m2 * L
    if want_g:
        ia, ib = 1.0 / Ra, 1.0 / Rb
        t = sigma * l / q
        gx, gy, gz = t * (ax * ia + bx * ib), t * (ay * ia + by * ib), t * (az * ia + bz * ib)
        w = -sigma * (Ra + Rb) * ia * ib / q
        sx, sy, sz = w * ux, w * uy, w * uz
        G[0, 0] += m0 * gx + n0 * sx
        G[0, 1] += m0 * gy + n0 * sy
        G[0, 2] += m0 * gz + n0 * sz
        G[1, 0] += m1 * gx + n1 * sx
        G[1, 1] += m1 * gy + n1 * sy
        G[1, 2] += m1 * gz + n1 * sz
        G[2, 0] += m2 * gx + n2 * sx
        G[2, 1] += m2 * gy + n2 * sy
        G[2, 2] += m2 * gz + n2 * sz
    return den, num


@njit(cache=True, inline="always")
def _lens(px, py, pz, k, ball, charge, dipole, quadrupole, want_h, want_g, H, G):
    """4 pi H (and grad) of charge Q, dipole D and second moments S about y0: minus the gradient
    of Q/r - D . grad(1/r) + (1/2) S : grad grad(1/r), R = x - y0 (Taylor series of 1/|x - y|),
    of chain k (its ball centre y0; arrays indexed, not sliced: a view costs a reference count)."""
    Q = charge[k]
    R0, R1, R2 = px - ball[k, 0], py - ball[k, 1], pz - ball[k, 2]
    r2 = R0 * R0 + R1 * R1 + R2 * R2
    r = math.sqrt(r2)
    i3 = 1.0 / (r2 * r)
    i5 = i3 / r2
    i7 = i5 / r2
    D0, D1, D2 = dipole[k, 0], dipole[k, 1], dipole[k, 2]
    DR = D0 * R0 + D1 * R1 + D2 * R2
    q0 = quadrupole[k, 0, 0] * R0 + quadrupole[k, 0, 1] * R1 + quadrupole[k, 0, 2] * R2
    q1 = quadrupole[k, 1, 0] * R0 + quadrupole[k, 1, 1] * R1 + quadrupole[k, 1, 2] * R2
    q2 = quadrupole[k, 2, 0] * R0 + quadrupole[k, 2, 1] * R1 + quadrupole[k, 2, 2] * R2
    s = R0 * q0 + R1 * q1 + R2 * q2
    tr = quadrupole[k, 0, 0] + quadrupole[k, 1, 1] + quadrupole[k, 2, 2]
    # H_m = -(Q t_m - D_i t_im + S_ij t_ijm / 2), t the derivatives of 1/r
    a = Q * i3 + 3.0 * DR * i5 + 7.5 * s * i7 - 1.5 * tr * i5
    if want_h:
        H[0] += a * R0 - D0 * i3 - 3.0 * q0 * i5
        H[1] += a * R1 - D1 * i3 - 3.0 * q1 * i5
        H[2] += a * R2 - D2 * i3 - 3.0 * q2 * i5
    if want_g:
        i9 = i7 / r2
        R = (R0, R1, R2)
        Dv = (D0, D1, D2)
        qv = (q0, q1, q2)
        # G_mk = -(Q t_mk - D_i t_imk + S_ij t_ijmk / 2)
        c_rr = -3.0 * Q * i5 - 15.0 * DR * i7 - 52.5 * s * i9 + 7.5 * tr * i7
        c_d = a
        for m in range(3):
            for j in range(3):
                g = c_rr * R[m] * R[j] + 3.0 * (Dv[m] * R[j] + Dv[j] * R[m]) * i5 \
                    + 15.0 * (qv[m] * R[j] + qv[j] * R[m]) * i7 - 3.0 * quadrupole[k, m, j] * i5
                if m == j:
                    g += c_d
                G[m, j] += g


@njit(cache=True, inline="always")
def _region_point(px, py, pz, g, normal, sigma, centre, loop_first, root, v, lo, hi, left, right,
                  ball, reach2, charge, dipole, quadrupole, chord_length, chord_normal, want_h,
                  want_g, H, G, stack):
    cx, cy, cz = centre[g, 0] - px, centre[g, 1] - py, centre[g, 2] - pz
    Rc = math.sqrt(cx * cx + cy * cy + cz * cz)
    # chords come in loop order, each starting where the last ended: its vertex is reused
    last, bx, by, bz, Rb = -1, 0.0, 0.0, 0.0, 1.0
    # the chords' solid angles: the sum of the args of den + i num is the arg of their product
    # (the total lies within (-2 pi, 2 pi) off the plane), one atan2 for all; kept in range
    zr, zi = 1.0, 0.0
    for loop in range(loop_first[g], loop_first[g + 1]):
        stack[0] = root[loop]
        top = 1
        while top > 0:
            top -= 1
            k = stack[top]
            if left[k] >= 0:
                dx, dy, dz = px - ball[k, 0], py - ball[k, 1], pz - ball[k, 2]
                if dx * dx + dy * dy + dz * dz < reach2[k]:
                    stack[top] = right[k]
                    stack[top + 1] = left[k]
                    top += 2
                    continue
                _lens(px, py, pz, k, ball, charge, dipole, quadrupole, want_h, want_g, H, G)
            if chord_length[k] == 0.0:  # a whole loop: no chord
                continue
            a, b = lo[k], hi[k]
            if a == last:
                ax, ay, az, Ra = bx, by, bz, Rb
            else:
                ax, ay, az = v[a, 0] - px, v[a, 1] - py, v[a, 2] - pz
                Ra = math.sqrt(ax * ax + ay * ay + az * az)
            bx, by, bz = v[b, 0] - px, v[b, 1] - py, v[b, 2] - pz
            Rb = math.sqrt(bx * bx + by * by + bz * bz)
            last = b
            den, num = _chord(cx, cy, cz, Rc, ax, ay, az, Ra, bx, by, bz, Rb, chord_length[k], k,
                              chord_normal, g, normal, sigma[g], want_h, want_g, H, G)
            zr, zi = zr * den - zi * num, zr * num + zi * den
            size = abs(zr) + abs(zi)
            if size > 1e150 or size < 1e-150:
                zr, zi = zr / size, zi / size
    if want_h:
        omega = sigma[g] * 2.0 * math.atan2(zi, zr)
        H[0] += normal[g, 0] * omega
        H[1] += normal[g, 1] * omega
        H[2] += normal[g, 2] * omega


@njit(cache=True, parallel=True, error_model="numpy")
def _regions_kernel(points, normal, sigma, centre, low, high, near, loop_first, root, v, lo, hi,
                    left, right, ball, reach2, charge, dipole, quadrupole, chord_length,
                    chord_normal, want_h, want_g, H, G, on_face):
    """Adds the regions' 4 pi H and grad into H, G; on_face[m, g] marks the points in region g's
    plane and box, left for the face-by-face sum."""
    for m in prange(points.shape[0]):
        px, py, pz = points[m, 0], points[m, 1], points[m, 2]
        h = np.zeros(3)
        gm = np.zeros((3, 3))
        stack = np.empty(_STACK, np.int64)
        for g in range(normal.shape[0]):
            height = ((px - centre[g, 0]) * normal[g, 0] + (py - centre[g, 1]) * normal[g, 1]
                      + (pz - centre[g, 2]) * normal[g, 2])
            d = near[g]
            if (abs(height) <= d and low[g, 0] - d <= px <= high[g, 0] + d
                    and low[g, 1] - d <= py <= high[g, 1] + d
                    and low[g, 2] - d <= pz <= high[g, 2] + d):
                on_face[m, g] = True
                continue
            _region_point(px, py, pz, g, normal, sigma, centre, loop_first, root, v, lo, hi,
                          left, right, ball, reach2, charge, dipole, quadrupole, chord_length,
                          chord_normal, want_h, want_g, h, gm, stack)
        if want_h:
            for i in range(3):
                H[m, i] += h[i]
        if want_g:
            for i in range(3):
                for j in range(3):
                    G[m, i, j] += gm[i, j]


_regions_serial = serial_twin(_regions_kernel)


def add_regions(points: np.ndarray, regions: FlatRegions, want_h: bool, want_g: bool,
                H: np.ndarray, G: np.ndarray) -> np.ndarray:
    """Add the flat regions' 4 pi H and 4 pi grad H (scaled units) at scaled points into H, G.

    Parameters
    ----------
    points : numpy.ndarray, shape (N, 3)
        In units of the mesh size, about its box centre (polyhedron's scaled points).
    regions : FlatRegions
    want_h, want_g : bool
        Which of H and grad H to add.
    H : numpy.ndarray, shape (N, 3)
    G : numpy.ndarray, shape (N, 3, 3)
        Added to; the one not wanted may be a placeholder.

    Returns
    -------
    numpy.ndarray of bool, shape (N, g)
        The points in a region's plane and box, which the caller sums face by face instead.
    """
    on_face = np.zeros((len(points), len(regions.sigma)), bool)
    r = regions
    kernel = _regions_kernel if len(points) >= PARALLEL_MIN_POINTS else _regions_serial
    kernel(points, r.normal, r.sigma, r.centre, r.low, r.high, r.near, r.loop_first, r.root,
                    r.vertices, r.lo, r.hi, r.left, r.right, r.ball, r.reach2, r.charge, r.dipole,
                    r.quadrupole, r.chord_length, r.chord_normal, want_h, want_g, H, G, on_face)
    return on_face
