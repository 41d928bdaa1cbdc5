"""Uniformly magnetised solid cylinder and ring (hollow cylinder): exact H and its gradient.

Body frame: axis = body z, part centred at the origin. Points (N, 3) in m, magnetisation (3,) in
A/m (any direction), H in A/m; inside the material B = mu0 (H + M).

Method (one formulation for every direction of M):
H_i = d_i d_j psi M_j with psi(r) = (1/4 pi) int_V dV' / |r - r'|, the Newtonian potential of the
body (the magnetic scalar potential is -M . grad psi; Jackson, Classical Electrodynamics, 3rd ed.,
section 5.9). psi is axisymmetric, so its Hessian needs only four functions of (rho, z):
    A  = psi_zz,  Bf = psi_rho_z        (axial magnetisation: Derby & Olbert 2010, below)
    g  = psi_rho / rho                  (transverse magnetisation, derived here below)
    q  = psi_rho_rho - g = -1_in - A - 2 g   (Poisson: laplacian psi = -1 inside, 0 outside)
and the Hessian is  g P + q e e^T + Bf (e z^T + z e^T) + A z z^T,  with e the radial unit vector,
z the axis and P = diag(1, 1, 0).
The transverse part (M across the axis) is the field of the lateral charge sigma = M cos(phi'):
the same physical model as A. Caciagli, R. J. Baars, A. P. Philipse and B. W. M. Kuipers, J. Magn.
Magn. Mater. 456, 423 (2018); its closed form here is derived independently (below), in
Bulirsch's cel rather than in K, E, Pi.

Axial part (N. Derby and S. Olbert, Am. J. Phys. 78, 229 (2010), eqs. for the ideal solenoid,
B0 = mu0 M / pi, radius R, half-height L):
    zeta_pm = z +- L,  alpha = R / sqrt(zeta^2 + (rho + R)^2),  beta = zeta / sqrt(...),
    gamma = (R - rho) / (R + rho),  kc = sqrt((zeta^2 + (R - rho)^2) / (zeta^2 + (R + rho)^2))
    B_rho = B0 [alpha_+ cel(kc_+, 1, 1, -1) - alpha_- cel(kc_-, 1, 1, -1)]
    B_z   = B0 R / (R + rho) [beta_+ cel(kc_+, gamma^2, 1, gamma) - beta_- cel(kc_-, gamma^2, 1, gamma)]
so psi_rho_z = B_rho / (mu0 M) and psi_zz = B_z / (mu0 M) - 1_in. On the lateral surface
(gamma = 0) gamma cel(kc, gamma^2, 0, 1) -> sign(gamma) pi / (2 kc): the jump of B_z, taken on the
outer side.

Transverse part (derived here): grad psi = -(1/4 pi) surface integral of n'/|r - r'|, so psi_rho
comes from the lateral wall only; integrating 1/|r - r'| over z' in closed form (asinh) and then
by parts in phi', with phi' = pi - 2 t,
    g = -(4 R^2 / pi) sum_pm (+-) zeta_pm K2_pm / ((rho + R)^2 sqrt(zeta_pm^2 + (rho + R)^2)),
    K2 = int_0^{pi/2} sin^2 t cos^2 t / ((1 - n sin^2 t) sqrt(1 - k^2 sin^2 t)) dt
       = [cel(kc, gamma^2, 1, 0) - cel(kc, 1, 1, 0)] / n,   n = 4 rho R / (rho + R)^2 = 1 - gamma^2.

Gradient (analytic, derived here): d_k H_i = d_i d_j d_k psi M_j. The third derivatives of an
axisymmetric psi with laplacian constant in each region need four functions:
    psi_zzz, psi_rho_zz  = the field of the two rim loops: grad(solid angle of a disc) = -4 pi x
        (H of a unit current loop), h_z, h_rho in cel form from the Biot-Savart loop field
        (W. R. Smythe, Static and Dynamic Electricity, 3rd ed., 1968, section 7.10):
        h_z   = R / (pi S^3) [(R - rho) / kc^2 cel(kc, 1, 1, 0) + (R + rho) cel(kc, 1, 0, 1)]
        h_rho = R zeta / (pi S^3 kc^2) cel(kc, 1, 1, -kc^2),  S^2 = zeta^2 + (R + rho)^2
    g_z = Bf / rho and g_rho = q / rho;
near the axis (rho < 0.005 R) g, g_z and g_rho come from the axis series of psi
(psi = sum_m (-1)^m (rho^2/4)^m / (m!)^2 psi0^(2m)(z) - rho^2 / 4 1_in, derived here; psi0' is the
on-axis potential of the two charged faces, -(1/2)[sqrt(zeta^2+R^2) - |zeta|]_{zeta_+}^{zeta_-}).

A ring is the outer solid cylinder minus the inner one with the same M (superposition of the two
charge distributions; the inner wall's charge is the negative of a solid cylinder's).

Surfaces: a point on a face (within 1e-12 of the part size) is evaluated on its outer side; a point
on a rim is pushed outward (away from the material, along the rim's bisector) by 1e-9 of the part
size, the part size being max(outer diameter, height). Never NaN or inf.
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit, prange

from trapscape.physics.field.placed import add_point_dipole, add_rotated_G, add_rotated_H, body_offset

from trapscape.physics.field.ellipint import cel_basis, cel_basis_pair

SNAP_TO_FACE = 1e-12     # of the part size: closer than this counts as on the face
RIM_PUSH = 1e-9          # of the part size: how far a rim point is moved outward
AXIS_SERIES = 5e-3       # of the cylinder radius: below this, g, g_z, g_rho from the axis series
_PI = math.pi


@njit(cache=True, nogil=True, inline="always")
def _sqrt_derivatives(zeta, R):
    """d^j/dzeta^j sqrt(zeta^2 + R^2) for j = 1..6 (derived here)."""
    R2 = R * R
    f2 = zeta * zeta + R2
    f = math.sqrt(f2)
    f3 = f2 * f
    f5 = f3 * f2
    f7 = f5 * f2
    f9 = f7 * f2
    f11 = f9 * f2
    z2 = zeta * zeta
    d1 = zeta / f
    d2 = R2 / f3
    d3 = -3.0 * R2 * zeta / f5
    d4 = R2 * (12.0 * z2 - 3.0 * R2) / f7
    d5 = 15.0 * R2 * zeta * (3.0 * R2 - 4.0 * z2) / f9
    d6 = 45.0 * R2 * (R2 * R2 - 12.0 * R2 * z2 + 8.0 * z2 * z2) / f11
    return d1, d2, d3, d4, d5, d6


@njit(cache=True, nogil=True)
def _axis_series(rho, z, R, L):
    """(g, g_z, g_rho) from the axis expansion of psi, valid for rho << R (derived here)."""
    t1, t2, t3, t4, t5, t6 = _sqrt_derivatives(z - L, R)   # top face, zeta_-
    b1, b2, b3, b4, b5, b6 = _sqrt_derivatives(z + L, R)   # bottom face, zeta_+
    psi4 = -0.5 * (t3 - b3)
    psi5 = -0.5 * (t4 - b4)
    psi6 = -0.5 * (t5 - b5)
    psi7 = -0.5 * (t6 - b6)
    r2 = rho * rho
    g = 0.25 * (t1 - b1) + r2 / 16.0 * psi4 - r2 * r2 / 384.0 * psi6
    g_z = 0.25 * (t2 - b2) + r2 / 16.0 * psi5 - r2 * r2 / 384.0 * psi7
    g_rho = rho / 8.0 * psi4 - rho * r2 / 96.0 * psi6
    return g, g_z, g_rho


@njit(cache=True, nogil=True)
def _cylinder_scalars(rho, z, R, L, side, gradient):
    """The axisymmetric functions of one solid cylinder (radius R, half-height L) at (rho, z).

    side = +1 takes the outer limit on the lateral wall rho = R, -1 the inner one (used for the
    inner cylinder of a ring, whose outside is its bore). Returns
    (inside, A, Bf, g, A_rho, A_z, g_rho, g_z); the last four are 0 unless gradient.
    """
    on_wall_inside = side < 0
    inside = 0.0
    if abs(z) < L and (rho < R or (rho == R and on_wall_inside)):
        inside = 1.0
    s = R + rho
    d = R - rho
    gamma = d / s
    p = gamma * gamma
    n = 4.0 * rho * R / (s * s)
    near_axis = rho < AXIS_SERIES * R
    jump = -float(side) if gamma == 0.0 else math.copysign(1.0, gamma)
    A = 0.0
    Bf = 0.0
    g = 0.0
    A_rho = 0.0
    A_z = 0.0
    for face in range(2):
        w = 1.0 if face == 0 else -1.0          # bottom face (zeta_+) minus top face (zeta_-)
        zeta = z + L if face == 0 else z - L
        S2 = s * s + zeta * zeta
        D2 = d * d + zeta * zeta
        kc2 = D2 / S2
        kc = math.sqrt(kc2)
        S = math.sqrt(S2)
        if p > 0.0:
            c10, c01, p10, p01 = cel_basis_pair(kc, p)
            F = p10 + gamma * p01
        else:                                   # lateral wall: the limit of gamma cel(kc, g^2, 0, 1)
            c10, c01 = cel_basis(kc, 1.0)
            p10 = c10 + c01                     # K(k)
            F = p10 + jump * 0.5 * _PI / kc
        Bf += w * (R / S) * (c10 - c01)
        A += w * (zeta / S) * F
        if not near_axis:
            g += w * zeta * ((p10 - c10) / n) / (s * s * S)
        if gradient:
            scale = R / (_PI * S2 * S)
            A_z += w * scale * ((d / kc2) * c10 + s * c01)
            A_rho += w * scale * zeta * (c10 - kc2 * c01) / kc2
    A = A * R / (_PI * s) - inside
    Bf = Bf / _PI
    g_rho = 0.0
    g_z = 0.0
    if near_axis:
        g, g_z, g_rho = _axis_series(rho, z, R, L)
    else:
        g = g * (-4.0 * R * R / _PI)
        if gradient:
            g_z = Bf / rho
            g_rho = (-inside - A - 2.0 * g) / rho
    return inside, A, Bf, g, A_rho, A_z, g_rho, g_z


@njit(cache=True, nogil=True)
def _adjust_to_surfaces(rho, az, R, L, size, outward):
    """Snap a point on a face of this cylinder onto it and push a rim point off the rim.

    outward = +1 for a rim whose material lies at smaller radius (cylinder, ring's outer rim),
    -1 for a ring's inner rim (material at larger radius).
    """
    snap = SNAP_TO_FACE * size
    if abs(rho - R) <= snap:
        rho = R
    if abs(az - L) <= snap:
        az = L
    if rho == R and az == L:
        push = RIM_PUSH * size / math.sqrt(2.0)
        rho = R + outward * push
        az = L + push
    return rho, az


@njit(cache=True, nogil=True)
def _ring_point(x, y, z0, Ro, Ri, L, M, gradient, H, G):
    """H (and its gradient) at one body-frame point of a ring (Ri = 0: a solid cylinder)."""
    size = max(2.0 * Ro, 2.0 * L)
    rho = math.sqrt(x * x + y * y)
    az = abs(z0)
    rho, az = _adjust_to_surfaces(rho, az, Ro, L, size, 1.0)
    if Ri > 0.0:
        rho, az = _adjust_to_surfaces(rho, az, Ri, L, size, -1.0)
    z = az if z0 >= 0.0 else -az
    inside, A, Bf, g, A_rho, A_z, g_rho, g_z = _cylinder_scalars(rho, z, Ro, L, 1, gradient)
    if Ri > 0.0:
        i2, A2, Bf2, g2, Ar2, Az2, gr2, gz2 = _cylinder_scalars(rho, z, Ri, L, -1, gradient)
        inside -= i2
        A -= A2
        Bf -= Bf2
        g -= g2
        A_rho -= Ar2
        A_z -= Az2
        g_rho -= gr2
        g_z -= gz2
    q = -inside - A - 2.0 * g
    r_xy = math.sqrt(x * x + y * y)
    if r_xy > 0.0:
        ex = x / r_xy
        ey = y / r_xy
    else:                      # on the axis every coefficient of e vanishes; any direction will do
        ex = 1.0
        ey = 0.0
    Mx = M[0]
    My = M[1]
    Mz = M[2]
    eM = ex * Mx + ey * My
    # Hessian of psi times M (module docstring)
    H[0] = g * Mx + q * ex * eM + Bf * ex * Mz
    H[1] = g * My + q * ey * eM + Bf * ey * Mz
    H[2] = Bf * eM + A * Mz
    if not gradient:
        return
    c1 = -A_rho - 4.0 * g_rho
    c2 = -A_z - 2.0 * g_z
    e = (ex, ey, 0.0)
    Mp = (Mx, My, 0.0)
    zh = (0.0, 0.0, 1.0)
    for i in range(3):
        Pi_ = 1.0 if i < 2 else 0.0
        for k in range(3):
            Pik = Pi_ if i == k else 0.0
            G[i, k] = (
                g_rho * (e[k] * Mp[i] + eM * Pik + e[i] * Mp[k])
                + c1 * e[i] * e[k] * eM
                + g_z * (zh[k] * Mp[i] + Mz * Pik + zh[i] * Mp[k])
                + c2 * (zh[k] * e[i] * eM + zh[i] * e[k] * eM + Mz * e[i] * e[k])
                + A_rho * (e[k] * zh[i] * Mz + e[i] * zh[k] * Mz + eM * zh[i] * zh[k])
                + A_z * zh[i] * zh[k] * Mz
            )


@njit(parallel=True, cache=True)
def _ring_kernel(points, Ro, Ri, L, M, gradient, H, G):
    stride = 1 if gradient else 0       # without the gradient G is a single scratch slot
    for n in prange(points.shape[0]):
        _ring_point(points[n, 0], points[n, 1], points[n, 2], Ro, Ri, L, M, gradient, H[n],
                    G[n * stride])


def _evaluate(points, outer_diameter, inner_diameter, height, magnetization, gradient):
    points = np.ascontiguousarray(np.asarray(points, dtype=np.float64).reshape(-1, 3))
    M = np.ascontiguousarray(np.asarray(magnetization, dtype=np.float64).reshape(3))
    _check_dims(outer_diameter, inner_diameter, height)
    H = np.empty((points.shape[0], 3))
    G = np.empty((points.shape[0] if gradient else 1, 3, 3))
    _ring_kernel(points, 0.5 * float(outer_diameter), 0.5 * float(inner_diameter), 0.5 * float(height),
                 M, gradient, H, G)
    return H, G


def _check_dims(outer_diameter, inner_diameter, height):
    if not (outer_diameter > 0.0 and height > 0.0 and 0.0 <= inner_diameter < outer_diameter):
        raise ValueError(
            f"cylinder/ring dimensions must satisfy 0 <= inner_diameter < outer_diameter and "
            f"height > 0 (got outer {outer_diameter}, inner {inner_diameter}, height {height})")


def cylinder_H(points: np.ndarray, diameter: float, height: float, magnetization: np.ndarray) -> np.ndarray:
    """H of a uniformly magnetised solid cylinder (exact closed form).

    Parameters
    ----------
    points : ndarray, shape (N, 3)
        Body-frame points in m (axis = body z, centred at the origin).
    diameter : float
        m, positive.
    height : float
        m, positive.
    magnetization : ndarray, shape (3,)
        Uniform magnetisation M in A/m, any direction (axial and transverse parts).

    Returns
    -------
    ndarray, shape (N, 3)
        H in A/m; inside B = mu0 (H + M); on a face the outer side's value.

    References
    ----------
    Derby & Olbert, Am. J. Phys. 78, 229 (2010) with Bulirsch's cel (axial part); the transverse
    part derived here from the side-wall charges of Caciagli et al., J. Magn. Magn. Mater. 456,
    423 (2018).
    """
    return _evaluate(points, diameter, 0.0, height, magnetization, False)[0]


def cylinder_H_gradient(points: np.ndarray, diameter: float, height: float,
                        magnetization: np.ndarray) -> np.ndarray:
    """Gradient of a solid cylinder's H.

    Parameters
    ----------
    points : ndarray, shape (N, 3)
        Body-frame points in m (axis = body z, centred at the origin).
    diameter : float
        m, positive.
    height : float
        m, positive.
    magnetization : ndarray, shape (3,)
        Uniform magnetisation M in A/m, any direction (axial and transverse parts).

    Returns
    -------
    ndarray, shape (N, 3, 3)
        dH_i/dx_j in A/m^2, [n, i, j]; analytic, no differencing.

    References
    ----------
    Derby & Olbert, Am. J. Phys. 78, 229 (2010) with Bulirsch's cel (axial part); the transverse
    part derived here from the side-wall charges of Caciagli et al., J. Magn. Magn. Mater. 456,
    423 (2018).
    """
    return _evaluate(points, diameter, 0.0, height, magnetization, True)[1]


def cylinder_H_and_gradient(points: np.ndarray, diameter: float, height: float,
                            magnetization: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """H and its gradient of a solid cylinder in one pass.

    Parameters
    ----------
    points : ndarray, shape (N, 3)
        Body-frame points in m (axis = body z, centred at the origin).
    diameter : float
        m, positive.
    height : float
        m, positive.
    magnetization : ndarray, shape (3,)
        Uniform magnetisation M in A/m, any direction (axial and transverse parts).

    Returns
    -------
    H : ndarray, shape (N, 3)
        A/m.
    G : ndarray, shape (N, 3, 3)
        dH_i/dx_j in A/m^2, from the same pass (cheaper than two calls).

    References
    ----------
    Derby & Olbert, Am. J. Phys. 78, 229 (2010) with Bulirsch's cel (axial part); the transverse
    part derived here from the side-wall charges of Caciagli et al., J. Magn. Magn. Mater. 456,
    423 (2018).
    """
    return _evaluate(points, diameter, 0.0, height, magnetization, True)


def ring_H(points: np.ndarray, outer_diameter: float, inner_diameter: float, height: float,
           magnetization: np.ndarray) -> np.ndarray:
    """H of a uniformly magnetised ring (outer cylinder minus inner cylinder).

    Parameters
    ----------
    points : ndarray, shape (N, 3)
        Body-frame points in m (axis = body z, centred at the origin).
    outer_diameter, inner_diameter : float
        m, with 0 <= inner_diameter < outer_diameter.
    height : float
        m, positive.
    magnetization : ndarray, shape (3,)
        Uniform magnetisation M in A/m, any direction (axial and transverse parts).

    Returns
    -------
    ndarray, shape (N, 3)
        H in A/m; inside B = mu0 (H + M); on a face the outer side's value.

    References
    ----------
    Derby & Olbert, Am. J. Phys. 78, 229 (2010) with Bulirsch's cel (axial part); the transverse
    part derived here from the side-wall charges of Caciagli et al., J. Magn. Magn. Mater. 456,
    423 (2018).
    """
    return _evaluate(points, outer_diameter, inner_diameter, height, magnetization, False)[0]


def ring_H_gradient(points: np.ndarray, outer_diameter: float, inner_diameter: float, height: float,
                    magnetization: np.ndarray) -> np.ndarray:
    """Gradient of a ring's H.

    Parameters
    ----------
    points : ndarray, shape (N, 3)
        Body-frame points in m (axis = body z, centred at the origin).
    outer_diameter, inner_diameter : float
        m, with 0 <= inner_diameter < outer_diameter.
    height : float
        m, positive.
    magnetization : ndarray, shape (3,)
        Uniform magnetisation M in A/m, any direction (axial and transverse parts).

    Returns
    -------
    ndarray, shape (N, 3, 3)
        dH_i/dx_j in A/m^2, [n, i, j]; analytic, no differencing.

    References
    ----------
    Derby & Olbert, Am. J. Phys. 78, 229 (2010) with Bulirsch's cel (axial part); the transverse
    part derived here from the side-wall charges of Caciagli et al., J. Magn. Magn. Mater. 456,
    423 (2018).
    """
    return _evaluate(points, outer_diameter, inner_diameter, height, magnetization, True)[1]


def ring_H_and_gradient(points: np.ndarray, outer_diameter: float, inner_diameter: float, height: float,
                        magnetization: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """H and its gradient of a ring in one pass.

    Parameters
    ----------
    points : ndarray, shape (N, 3)
        Body-frame points in m (axis = body z, centred at the origin).
    outer_diameter, inner_diameter : float
        m, with 0 <= inner_diameter < outer_diameter.
    height : float
        m, positive.
    magnetization : ndarray, shape (3,)
        Uniform magnetisation M in A/m, any direction (axial and transverse parts).

    Returns
    -------
    H : ndarray, shape (N, 3)
        A/m.
    G : ndarray, shape (N, 3, 3)
        dH_i/dx_j in A/m^2, from the same pass (cheaper than two calls).

    References
    ----------
    Derby & Olbert, Am. J. Phys. 78, 229 (2010) with Bulirsch's cel (axial part); the transverse
    part derived here from the side-wall charges of Caciagli et al., J. Magn. Magn. Mater. 456,
    423 (2018).
    """
    return _evaluate(points, outer_diameter, inner_diameter, height, magnetization, True)


# -- a family of placed cylinders and rings in one call (physics/field/families.py) ------------

@njit(cache=True, nogil=True)
def _rings_at(m, points, centers, matrices, dims, Ms, moments, far, gradient, H, G):
    """Add every ring (or cylinder, inner radius 0) of the family at point m: its point dipole
    beyond far[k], else its exact field, rotated back. dims[k] = (Ro, Ri, L) half sizes."""
    hb = np.empty(3)
    gb = np.empty((3, 3))
    Gm = G[m] if gradient else G[0]  # without the gradient G is a single scratch slot
    for k in range(centers.shape[0]):
        R = matrices[k]
        dx, dy, dz, bx, by, bz = body_offset(points[m, 0], points[m, 1], points[m, 2],
                                             centers[k], R)
        if math.sqrt(dx * dx + dy * dy + dz * dz) > far[k]:
            add_point_dipole(dx, dy, dz, moments[k], gradient, H[m], Gm)
            continue
        _ring_point(bx, by, bz, dims[k, 0], dims[k, 1], dims[k, 2], Ms[k], gradient, hb, gb)
        add_rotated_H(R, hb, H[m])
        if gradient:
            add_rotated_G(R, gb, Gm)


@njit(cache=True, nogil=True)  # nogil: cells share out over threads (local_cells)
def _rings_serial(points, centers, matrices, dims, Ms, moments, far, gradient, H, G):
    for m in range(points.shape[0]):
        _rings_at(m, points, centers, matrices, dims, Ms, moments, far, gradient, H, G)


@njit(cache=True, parallel=True)
def _rings_parallel(points, centers, matrices, dims, Ms, moments, far, gradient, H, G):
    for m in prange(points.shape[0]):
        _rings_at(m, points, centers, matrices, dims, Ms, moments, far, gradient, H, G)


def add_rings_H(points, family, gradient, H, G, parallel) -> None:
    """Add the H (and dH/dx) of a family of placed cylinders and rings at world points, in place.

    Parameters
    ----------
    points : numpy.ndarray, shape (N, 3)
        World points, m, C-contiguous.
    family : physics.field.families.Family
        Centres (K, 3) m, body-to-world matrices (K, 3, 3), params (K, 3) = (outer radius,
        inner radius (0 for a cylinder), half height) m, body-frame M (K, 3) A/m, world moments
        (K, 3) A m^2 and far-field radii (K,) m.
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
    Derby & Olbert, Am. J. Phys. 78, 229 (2010); Caciagli et al., J. Magn. Magn. Mater. 456,
    423 (2018) (as cylinder_H); the far field: Jackson, 3rd ed., eq. 5.56.
    """
    kernel = _rings_parallel if parallel else _rings_serial
    kernel(points, family.centers, family.matrices, family.params, family.magnetizations,
           family.moments, family.far, gradient, H, G)
