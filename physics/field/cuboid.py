"""Uniformly magnetised cuboid: exact H and its gradient from the surface charges.

Body frame: a box centred at the origin with edges size = (a, b, c) along body x, y, z; any
magnetisation M (A/m). With psi(r) = (1/4 pi) integral_V dV' / |r - r'|, the field of the
charges is H = Hess(psi) M and dH_i/dx_j = sum_k d^3 psi / dx_i dx_j dx_k M_k (derived here
from phi = -M . grad psi). For a box these derivatives are sums over the 8 corners and 12 edges:
- off-diagonal d^2 psi / dx dy = (1/4 pi) sum_{z-edges} s_x s_y ln((t_hi + R_hi) / (t_lo + R_lo)),
- diagonal d^2 psi / dz^2 = (1/4 pi) (Omega_top - Omega_bottom), each face's solid angle a
  sum of corner terms arctan(u v / (w R))
  (Akoun & Yonnet, IEEE Trans. Magn. 20, 1962 (1984); Engel-Herbert & Hesjedal,
  J. Appl. Phys. 97, 074504 (2005)); trace of Hess(psi) = -1 inside, 0 outside (Poisson),
- third derivatives: d^3 psi / dx dy dz = -(1/4 pi) sum_corners s_x s_y s_z / R and
  d^3 psi / dx^2 dy = -(1/4 pi) sum_{z-edges} s_x s_y u E_z with E_z = integral dz' / R^3 along
  the edge (derived here); the rest follow from symmetry and the vanishing trace.

Numerics (DESIGN.md Conventions): lengths are scaled by the largest edge L; a point within
1e-12 L of the surface is on it: on a face it is evaluated on the outer side (the face term
takes its outer limit), on an edge or corner it is pushed outward by 1e-9 L. The logs use the
cancellation-free forms ln((y^2+z^2)/(R - x)) on the far side of an edge, and the arctan sums are
formed as arguments of complex products (one atan2 per diagonal component, the 2 pi branch
fixed from octant estimates), so every value is finite.
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit, prange

from trapscape.physics.field.placed import add_point_dipole, add_rotated_G, add_rotated_H, body_offset

SURFACE_TOL = 1e-12  # relative to the largest edge: closer than this is "on the surface"
EDGE_PUSH = 1e-9  # relative to the largest edge: how far a point on an edge is pushed out

_TWO_PI = 2.0 * math.pi
_INV_4PI = 1.0 / (4.0 * math.pi)


@njit(cache=True)
def _octant_angle(x, y):
    """The centre of the octant holding arg(x + i y): within pi/8 of the true angle."""
    q = math.pi / 8.0
    c = 3.0 * q if abs(y) > abs(x) else q
    c = math.pi - c if x < 0.0 else c
    return math.copysign(c, y)


@njit(cache=True)
def _cmul(ar, ai, br, bi):
    return ar * br - ai * bi, ar * bi + ai * br


@njit(cache=True)
def _face_pairs(n, a0, a1, b0, b1, R00, R01, R10, R11):
    """The corner products A (s_a s_b = +1) and B (-1) of one face: solid angle = arg A - arg B.

    Each corner adds arg(|n| R + i sign(n) a b) = arctan(a b / (n R)) (Akoun & Yonnet 1984).
    """
    s = 1.0 if n > 0.0 else -1.0
    na = abs(n)
    Ar, Ai = _cmul(na * R00, s * a0 * b0, na * R11, s * a1 * b1)
    Br, Bi = _cmul(na * R01, s * a0 * b1, na * R10, s * a1 * b0)
    return Ar, Ai, Br, Bi


@njit(cache=True)
def _diagonal(n0, n1, a0, a1, b0, b1, R, inplane_inside):
    """4 pi d^2 psi / dn^2 without the inside term: solid angle of the +h face minus the -h one.

    n0, n1: the point's offsets from the faces at -h and +h along the normal; a0, a1, b0, b1: its
    offsets from the in-plane corner coordinates; R: corner distances indexed 4 face + 2 a + b.
    A face whose plane holds the point takes its outer limit: its solid angle is 2 pi sign(x'_i)
    inside the face (else 0), so either face adds +2 pi.
    """
    const = 0.0
    tr, ti = 1.0, 0.0
    centre = 0.0
    if n1 == 0.0:
        const += _TWO_PI if inplane_inside else 0.0
    else:
        Ar, Ai, Br, Bi = _face_pairs(n1, a0, a1, b0, b1, R[4], R[5], R[6], R[7])
        tr, ti = _cmul(tr, ti, Ar, Ai)
        tr, ti = _cmul(tr, ti, Br, -Bi)
        centre += _octant_angle(Ar, Ai) - _octant_angle(Br, Bi)
    if n0 == 0.0:
        const += _TWO_PI if inplane_inside else 0.0  # -(outer limit -2 pi) of the -h face
    else:
        Ar, Ai, Br, Bi = _face_pairs(n0, a0, a1, b0, b1, R[0], R[1], R[2], R[3])
        tr, ti = _cmul(tr, ti, Ar, -Ai)
        tr, ti = _cmul(tr, ti, Br, Bi)
        centre += _octant_angle(Br, Bi) - _octant_angle(Ar, Ai)
    theta = math.atan2(ti, tr)
    # each pair's argument is known to pi/8 from its octant, the sum of four to pi/2 < pi
    k = math.floor((centre - theta) / _TWO_PI + 0.5)
    return theta + _TWO_PI * k + const


@njit(cache=True)
def _edge(e):
    """An edge's log ratio as n / d = (t_hi + R_hi) / (t_lo + R_lo).

    t runs along the edge (t = x_point - x'_corner at the edge's two ends); rho2 is the squared
    distance to the edge's line. On either side of the edge t + R is rewritten as
    rho2 / (R - t) where t < 0 (derived here), so nothing cancels.
    """
    t_lo, t_hi, R_lo, R_hi, rho2 = e
    if t_lo >= 0.0:
        return t_hi + R_hi, t_lo + R_lo
    if t_hi <= 0.0:
        return R_lo - t_lo, R_hi - t_hi
    return (t_hi + R_hi) * (R_lo - t_lo), rho2


@njit(cache=True)
def _edge_E(e, nd):
    """E = integral dt / R^3 along the edge = (t_hi / R_hi - t_lo / R_lo) / rho2 (derived here).

    Off the edge's span the same rewriting gives 1 / (R_lo d) - 1 / (R_hi n) (or its mirror).
    """
    t_lo, t_hi, R_lo, R_hi, rho2 = e
    n, d = nd
    if t_lo >= 0.0:
        a = R_lo * d
        b = R_hi * n
        return (b - a) / (a * b)
    if t_hi <= 0.0:
        a = R_hi * d
        b = R_lo * n
        return (b - a) / (a * b)
    return (t_hi * R_lo - t_lo * R_hi) / (R_hi * R_lo * rho2)


@njit(cache=True)
def _on_surface_fix(x, y, z, hx, hy, hz):
    """Snap a point on a face onto it exactly; push a point on an edge or corner outward."""
    dx, dy, dz = abs(x) - hx, abs(y) - hy, abs(z) - hz
    if dx > SURFACE_TOL or dy > SURFACE_TOL or dz > SURFACE_TOL:
        return x, y, z
    on_x, on_y, on_z = dx >= -SURFACE_TOL, dy >= -SURFACE_TOL, dz >= -SURFACE_TOL
    n_on = int(on_x) + int(on_y) + int(on_z)
    if n_on == 0:
        return x, y, z
    push = EDGE_PUSH / math.sqrt(n_on) if n_on > 1 else 0.0
    if on_x:
        x = math.copysign(hx + push, x)
    if on_y:
        y = math.copysign(hy + push, y)
    if on_z:
        z = math.copysign(hz + push, z)
    return x, y, z


@njit(cache=True)
def _log_ratio(n, d):
    """ln of the product of the 4 parallel edges' ratios, signs s_a s_b (+ for (0,0), (1,1))."""
    return math.log((n[0] * n[3] * d[1] * d[2]) / (d[0] * d[3] * n[1] * n[2]))


@njit(cache=True)
def _edge_gradient(E, ta, tb):
    """sum_{a,b} -s_a s_b t E_ab for t = ta[a] and for t = tb[b] (E indexed 2 a + b)."""
    ga = -(ta[0] * E[0] - ta[0] * E[1] - ta[1] * E[2] + ta[1] * E[3])
    gb = -(tb[0] * E[0] - tb[1] * E[1] - tb[0] * E[2] + tb[1] * E[3])
    return ga, gb


@njit(cache=True)
def _cuboid_point(x, y, z, hx, hy, hz, want_h, want_g):
    """T (6: xx, yy, zz, xy, xz, yz) = 4 pi Hess(psi) and D (10) = 4 pi grad Hess(psi).

    Coordinates scaled by the largest edge. D order: xxx, yyy, zzz, xxy, xyy, xxz, xzz, yyz,
    yzz, xyz. Corner index 4 i + 2 j + k, index 0 at -h and 1 at +h along each axis.
    """
    x, y, z = _on_surface_fix(x, y, z, hx, hy, hz)
    u = (x + hx, x - hx)
    v = (y + hy, y - hy)
    w = (z + hz, z - hz)
    uu = (u[0] * u[0], u[1] * u[1])
    vv = (v[0] * v[0], v[1] * v[1])
    ww = (w[0] * w[0], w[1] * w[1])
    R = (
        math.sqrt(uu[0] + vv[0] + ww[0]), math.sqrt(uu[0] + vv[0] + ww[1]),
        math.sqrt(uu[0] + vv[1] + ww[0]), math.sqrt(uu[0] + vv[1] + ww[1]),
        math.sqrt(uu[1] + vv[0] + ww[0]), math.sqrt(uu[1] + vv[0] + ww[1]),
        math.sqrt(uu[1] + vv[1] + ww[0]), math.sqrt(uu[1] + vv[1] + ww[1]),
    )
    inside = abs(x) < hx and abs(y) < hy and abs(z) < hz

    # edges along z at (i, j), along y at (i, k), along x at (j, k); each (t_lo, t_hi, R_lo,
    # R_hi, rho2), tuples indexed 2 a + b
    ez = ((w[1], w[0], R[1], R[0], uu[0] + vv[0]), (w[1], w[0], R[3], R[2], uu[0] + vv[1]),
          (w[1], w[0], R[5], R[4], uu[1] + vv[0]), (w[1], w[0], R[7], R[6], uu[1] + vv[1]))
    ey = ((v[1], v[0], R[2], R[0], uu[0] + ww[0]), (v[1], v[0], R[3], R[1], uu[0] + ww[1]),
          (v[1], v[0], R[6], R[4], uu[1] + ww[0]), (v[1], v[0], R[7], R[5], uu[1] + ww[1]))
    ex = ((u[1], u[0], R[4], R[0], vv[0] + ww[0]), (u[1], u[0], R[5], R[1], vv[0] + ww[1]),
          (u[1], u[0], R[6], R[2], vv[1] + ww[0]), (u[1], u[0], R[7], R[3], vv[1] + ww[1]))
    z00, z01, z10, z11 = _edge(ez[0]), _edge(ez[1]), _edge(ez[2]), _edge(ez[3])
    y00, y01, y10, y11 = _edge(ey[0]), _edge(ey[1]), _edge(ey[2]), _edge(ey[3])
    x00, x01, x10, x11 = _edge(ex[0]), _edge(ex[1]), _edge(ex[2]), _edge(ex[3])

    T = (0.0, 0.0, 0.0, 0.0, 0.0, 0.0)
    if want_h:
        Ry = (R[0], R[1], R[4], R[5], R[2], R[3], R[6], R[7])  # (face j, corner i, corner k)
        in_x = abs(y) < hy and abs(z) < hz
        in_y = abs(x) < hx and abs(z) < hz
        Txx = _diagonal(u[0], u[1], v[0], v[1], w[0], w[1], R, in_x)
        Tyy = _diagonal(v[0], v[1], u[0], u[1], w[0], w[1], Ry, in_y)
        Tzz = -Txx - Tyy - (4.0 * math.pi if inside else 0.0)
        Txy = _log_ratio((z00[0], z01[0], z10[0], z11[0]), (z00[1], z01[1], z10[1], z11[1]))
        Txz = _log_ratio((y00[0], y01[0], y10[0], y11[0]), (y00[1], y01[1], y10[1], y11[1]))
        Tyz = _log_ratio((x00[0], x01[0], x10[0], x11[0]), (x00[1], x01[1], x10[1], x11[1]))
        T = (Txx, Tyy, Tzz, Txy, Txz, Tyz)

    D = (0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0)
    if want_g:
        Ez = (_edge_E(ez[0], z00), _edge_E(ez[1], z01), _edge_E(ez[2], z10), _edge_E(ez[3], z11))
        Ey = (_edge_E(ey[0], y00), _edge_E(ey[1], y01), _edge_E(ey[2], y10), _edge_E(ey[3], y11))
        Ex = (_edge_E(ex[0], x00), _edge_E(ex[1], x01), _edge_E(ex[2], x10), _edge_E(ex[3], x11))
        xxy, xyy = _edge_gradient(Ez, u, v)
        xxz, xzz = _edge_gradient(Ey, u, w)
        yyz, yzz = _edge_gradient(Ex, v, w)
        # -sum s_x s_y s_z / R, with s = -1 at index 0: the sign is -(-1)^(i+j+k)
        xyz = (1.0 / R[0] - 1.0 / R[1] - 1.0 / R[2] + 1.0 / R[3]
               - 1.0 / R[4] + 1.0 / R[5] + 1.0 / R[6] - 1.0 / R[7])
        D = (-(xyy + xzz), -(xxy + yzz), -(xxz + yyz), xxy, xyy, xxz, xzz, yyz, yzz, xyz)
    return T, D


@njit(cache=True, parallel=True, error_model="numpy")
def _cuboid_kernel(points, size, M, want_h, want_g, H, G):
    L = max(size[0], max(size[1], size[2]))
    hx, hy, hz = 0.5 * size[0] / L, 0.5 * size[1] / L, 0.5 * size[2] / L
    mx, my, mz = M[0], M[1], M[2]
    cg = _INV_4PI / L
    for m in prange(points.shape[0]):
        T, D = _cuboid_point(points[m, 0] / L, points[m, 1] / L, points[m, 2] / L, hx, hy, hz,
                             want_h, want_g)
        if want_h:
            H[m, 0] = _INV_4PI * (T[0] * mx + T[3] * my + T[4] * mz)
            H[m, 1] = _INV_4PI * (T[3] * mx + T[1] * my + T[5] * mz)
            H[m, 2] = _INV_4PI * (T[4] * mx + T[5] * my + T[2] * mz)
        if want_g:
            xxx, yyy, zzz, xxy, xyy, xxz, xzz, yyz, yzz, xyz = D
            gxx = cg * (xxx * mx + xxy * my + xxz * mz)
            gyy = cg * (xyy * mx + yyy * my + yyz * mz)
            gzz = cg * (xzz * mx + yzz * my + zzz * mz)
            gxy = cg * (xxy * mx + xyy * my + xyz * mz)
            gxz = cg * (xxz * mx + xyz * my + xzz * mz)
            gyz = cg * (xyz * mx + yyz * my + yzz * mz)
            G[m, 0, 0] = gxx
            G[m, 1, 1] = gyy
            G[m, 2, 2] = gzz
            G[m, 0, 1] = gxy
            G[m, 1, 0] = gxy
            G[m, 0, 2] = gxz
            G[m, 2, 0] = gxz
            G[m, 1, 2] = gyz
            G[m, 2, 1] = gyz


def _prepare(points, size, magnetization):
    points = np.ascontiguousarray(points, dtype=float).reshape(-1, 3)
    size = np.ascontiguousarray(size, dtype=float).reshape(3)
    M = np.ascontiguousarray(magnetization, dtype=float).reshape(3)
    if not np.all(size > 0.0):
        raise ValueError(f"cuboid edges must be positive, got {size}")
    return points, size, M


def cuboid_H_and_gradient(points: np.ndarray, size, magnetization) -> tuple[np.ndarray, np.ndarray]:
    """H and its gradient of a uniformly magnetised box's charges, in one pass.

    Parameters
    ----------
    points : ndarray, shape (N, 3)
        Body-frame points in m (the box is centred at the origin, edges along body x, y, z).
    size : array_like, shape (3,)
        Edge lengths in m, all positive.
    magnetization : array_like, shape (3,)
        Uniform magnetisation M in A/m, any direction.

    Returns
    -------
    H : ndarray, shape (N, 3)
        A/m; inside the box B = mu0 (H + M); on a face the outer side's value.
    G : ndarray, shape (N, 3, 3)
        dH_i/dx_j in A/m^2, G[n, i, j].

    References
    ----------
    Akoun & Yonnet, IEEE Trans. Magn. 20, 1962 (1984); Engel-Herbert & Hesjedal,
    J. Appl. Phys. 97, 074504 (2005); third derivatives derived here (module docstring).
    """
    points, size, M = _prepare(points, size, magnetization)
    H = np.empty((points.shape[0], 3))
    G = np.empty((points.shape[0], 3, 3))
    _cuboid_kernel(points, size, M, True, True, H, G)
    return H, G


def cuboid_H(points: np.ndarray, size, magnetization) -> np.ndarray:
    """H of a uniformly magnetised box's charges.

    Parameters
    ----------
    points : ndarray, shape (N, 3)
        Body-frame points in m (the box is centred at the origin, edges along body x, y, z).
    size : array_like, shape (3,)
        Edge lengths in m, all positive.
    magnetization : array_like, shape (3,)
        Uniform magnetisation M in A/m, any direction.

    Returns
    -------
    ndarray, shape (N, 3)
        H in A/m; inside the box B = mu0 (H + M); on a face the outer side's value.

    References
    ----------
    Akoun & Yonnet, IEEE Trans. Magn. 20, 1962 (1984); Engel-Herbert & Hesjedal,
    J. Appl. Phys. 97, 074504 (2005); third derivatives derived here (module docstring).
    """
    points, size, M = _prepare(points, size, magnetization)
    H = np.empty((points.shape[0], 3))
    _cuboid_kernel(points, size, M, True, False, H, np.empty((1, 3, 3)))
    return H


def cuboid_H_gradient(points: np.ndarray, size, magnetization) -> np.ndarray:
    """Gradient of the box's H; symmetric and trace-free away from the surface.

    Parameters
    ----------
    points : ndarray, shape (N, 3)
        Body-frame points in m (the box is centred at the origin, edges along body x, y, z).
    size : array_like, shape (3,)
        Edge lengths in m, all positive.
    magnetization : array_like, shape (3,)
        Uniform magnetisation M in A/m, any direction.

    Returns
    -------
    ndarray, shape (N, 3, 3)
        dH_i/dx_j in A/m^2, [n, i, j].

    References
    ----------
    Akoun & Yonnet, IEEE Trans. Magn. 20, 1962 (1984); Engel-Herbert & Hesjedal,
    J. Appl. Phys. 97, 074504 (2005); third derivatives derived here (module docstring).
    """
    points, size, M = _prepare(points, size, magnetization)
    G = np.empty((points.shape[0], 3, 3))
    _cuboid_kernel(points, size, M, False, True, np.empty((1, 3)), G)
    return G


# -- a family of placed boxes in one call (physics/field/families.py) --------------------------

@njit(cache=True, inline="always")
def _cuboid_body_field(bx, by, bz, size, M, want_g, hb, gb):
    """hb (3,) and, with want_g, gb (3, 3): one box's body-frame H and dH/dx at one point,
    the arithmetic of _cuboid_kernel."""
    L = max(size[0], max(size[1], size[2]))
    T, D = _cuboid_point(bx / L, by / L, bz / L, 0.5 * size[0] / L, 0.5 * size[1] / L,
                         0.5 * size[2] / L, True, want_g)
    mx, my, mz = M[0], M[1], M[2]
    hb[0] = _INV_4PI * (T[0] * mx + T[3] * my + T[4] * mz)
    hb[1] = _INV_4PI * (T[3] * mx + T[1] * my + T[5] * mz)
    hb[2] = _INV_4PI * (T[4] * mx + T[5] * my + T[2] * mz)
    if want_g:
        cg = _INV_4PI / L
        xxx, yyy, zzz, xxy, xyy, xxz, xzz, yyz, yzz, xyz = D
        gb[0, 0] = cg * (xxx * mx + xxy * my + xxz * mz)
        gb[1, 1] = cg * (xyy * mx + yyy * my + yyz * mz)
        gb[2, 2] = cg * (xzz * mx + yzz * my + zzz * mz)
        gb[0, 1] = gb[1, 0] = cg * (xxy * mx + xyy * my + xyz * mz)
        gb[0, 2] = gb[2, 0] = cg * (xxz * mx + xyz * my + xzz * mz)
        gb[1, 2] = gb[2, 1] = cg * (xyz * mx + yyz * my + yzz * mz)


@njit(cache=True)
def _cuboids_at(m, points, centers, matrices, sizes, Ms, moments, far, want_g, H, G):
    """Add every box of the family at point m: its point dipole beyond far[k], else its exact
    field, rotated back (accumulated in H[m], G[m] part by part, in the parts' order)."""
    hb = np.empty(3)
    gb = np.empty((3, 3))
    Hm = H[m]
    Gm = G[m] if want_g else G[0]  # without the gradient G is a single scratch slot
    px, py, pz = points[m, 0], points[m, 1], points[m, 2]
    for k in range(centers.shape[0]):
        R = matrices[k]
        dx, dy, dz, bx, by, bz = body_offset(px, py, pz, centers[k], R)
        if math.sqrt(dx * dx + dy * dy + dz * dz) > far[k]:
            add_point_dipole(dx, dy, dz, moments[k], want_g, Hm, Gm)
            continue
        _cuboid_body_field(bx, by, bz, sizes[k], Ms[k], want_g, hb, gb)
        add_rotated_H(R, hb, Hm)
        if want_g:
            add_rotated_G(R, gb, Gm)


@njit(cache=True, nogil=True, error_model="numpy")  # nogil: cells share out over threads
def _cuboids_serial(points, centers, matrices, sizes, Ms, moments, far, want_g, H, G):
    for m in range(points.shape[0]):
        _cuboids_at(m, points, centers, matrices, sizes, Ms, moments, far, want_g, H, G)


@njit(cache=True, parallel=True, error_model="numpy")
def _cuboids_parallel(points, centers, matrices, sizes, Ms, moments, far, want_g, H, G):
    for m in prange(points.shape[0]):
        _cuboids_at(m, points, centers, matrices, sizes, Ms, moments, far, want_g, H, G)


def add_cuboids_H(points, family, gradient, H, G, parallel) -> None:
    """Add the H (and dH/dx) of a family of placed boxes at world points, in place.

    Parameters
    ----------
    points : numpy.ndarray, shape (N, 3)
        World points, m, C-contiguous.
    family : physics.field.families.Family
        The boxes' centres (K, 3) m, body-to-world matrices (K, 3, 3), params (K, 3) edge
        lengths m, body-frame M (K, 3) A/m, world moments (K, 3) A m^2 and far-field radii (K,) m.
    gradient : bool
        Also add dH_i/dx_j into G.
    H : numpy.ndarray, shape (N, 3)
        Accumulator, A/m.
    G : numpy.ndarray, shape (N, 3, 3)
        Accumulator, A/m^2; shape (1, 3, 3), a scratch slot, without gradient.
    parallel : bool
        Share the points out over numba's threads.

    References
    ----------
    Akoun & Yonnet, IEEE Trans. Magn. 20, 1962 (1984); Engel-Herbert & Hesjedal,
    J. Appl. Phys. 97, 074504 (2005); the far field: Jackson, 3rd ed., eq. 5.56.
    """
    kernel = _cuboids_parallel if parallel else _cuboids_serial
    kernel(points, family.centers, family.matrices, family.params, family.magnetizations,
           family.moments, family.far, gradient, H, G)
