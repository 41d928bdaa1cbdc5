"""Radially magnetised ring or arc segment (annular sector): H and its gradient, semi-analytic.

Body frame: axis = body z, part centred at the origin, the sector spanning phi in
[-angle/2, angle/2] about body +x (a full turn for a ring). M = m r_hat with m signed (A/m,
positive for radial-out). Points (N, 3) in m, H in A/m; inside the material B = mu0 (H + M).

Charge model (Coulombian model; J. D. Jackson, Classical Electrodynamics, 3rd ed., 5.9):
sigma = M . n = +m on the outer wall r = b, -m on the inner wall r = a, zero on the top, bottom
and (for an arc) the end faces (their normals are z or phi_hat, both normal to r_hat), and the
volume charge rho = -div M = -m / r. In (r', phi', z') the volume charge r' rho dr' dphi' dz' is
the uniform -m dr' dphi' dz'. This is the model of R. Ravaud, G. Lemarquand, V. Lemarquand and
C. Depollier, "Analytical calculation of the magnetic field created by permanent-magnet rings",
IEEE Trans. Magn. 44(8), 1982 (2008), and of their radially magnetised tiles (Prog.
Electromagn. Res. B 13, 1 (2009)); the integration here is derived here, not their formulas:

With e = (cos phi', sin phi'), e_perp = (-sin phi', cos phi'), p = x . e, q = x . e_perp,
t = r' - p, u = z - z', rho^2 = t^2 + q^2, R^2 = rho^2 + u^2 (derived here):
- z' in closed form: a charged line r' e, z' in [-h/2, h/2], per unit charge and 4 pi, gives
  [L(t, q, u)] from u = z - h/2 to z + h/2 with, in the (e, e_perp, z) basis,
      L = (-t u / (rho^2 R), q u / (rho^2 R), -1 / R);
- r' in closed form for the volume: [V(t, q, u)] from t = a - p to b - p with
      V = (-1/2 ln((R - u) / (R + u)), atan(t u / (q R)), -asinh(t / sqrt(q^2 + u^2)));
- phi' numerically: Gauss-Legendre panels in s with phi' = phi_c +- eps sinh(s), the sinh
  transformation for nearly singular integrals (D. J. Johnston and D. Elliott, Int. J. Numer.
  Meth. Eng. 62, 564 (2005)), centred on the point's own angle (clamped into an arc's span) and
  eps = distance to the nearest charged edge or wall / radius, split there (the integrand jumps
  where q = 0).
The gradient differentiates the same closed forms (dt/dx = -e, dq/dx = e_perp, du/dz = 1);
inside the material it adds -m phi_hat phi_hat^T / r, the derivative of the split that moves
with the point (the volume term's e_perp part jumps by -4 pi there; derived here).

Surfaces: a point within 1e-9 of the part size of a charged wall or a top/bottom face is moved
2e-9 of the part size outward (evaluated on the outer side). Never NaN or inf.
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit, prange

from trapscape.physics.field.engine import serial_twin

# Gauss-Legendre nodes per panel in s = asinh(dphi / eps) and the panels' width: against 24 nodes
# on panels of 0.4, the largest errors at 0.5 % to 50 % of the wall were 2e-8 of |H| and 1e-4 of
# |dH/dx| (measured 2026-12-03 on a 32/24/5 mm ring and a 57 degree arc of it; 8 nodes on 1.5
# gave 3e-10 and 2e-6 for 1.6 times the work)
GAUSS_NODES = 10
PANEL_WIDTH = 3.0
FLOOR = 1e-300

_NODES, _WEIGHTS = np.polynomial.legendre.leggauss(GAUSS_NODES)


@njit(cache=True)
def _line(t, q, u):
    """L and its derivatives (d/dt, d/dq, d/du) of the three components (derived here)."""
    rho2 = max(t * t + q * q, FLOOR)
    R = math.sqrt(rho2 + u * u)
    R3 = R * R * R
    f = 1.0 / (rho2 * R)
    g = 2.0 / (rho2 * rho2 * R) + 1.0 / (rho2 * R3)
    h = 1.0 / (rho2 * R3)
    Le, Lq, Lz = -t * u * f, q * u * f, -1.0 / R
    return (Le, Lq, Lz,
            -u * f + t * t * u * g, t * u * q * g, -t * f + t * u * u * h,
            -q * u * t * g, u * f - q * q * u * g, q / R3,
            t / R3, q / R3, u / R3)


@njit(cache=True)
def _volume(t, q, u):
    """V (the line kernel integrated over t) and its derivatives, as _line (derived here)."""
    rho2 = max(t * t + q * q, FLOOR)
    R = math.sqrt(rho2 + u * u)
    # ln((R - u) / (R + u)) without cancellation: (R - u)(R + u) = rho^2
    if u >= 0.0:
        log_ratio = math.log(rho2 / ((R + u) * (R + u)))
    else:
        log_ratio = math.log((R - u) * (R - u) / rho2)
    Ve = -0.5 * log_ratio
    den = q * R
    if den == 0.0:
        tu = t * u
        Vq = 0.0 if tu == 0.0 else math.copysign(0.5 * math.pi, tu)
    else:
        Vq = math.atan(t * u / den)
    s2 = max(q * q + u * u, FLOOR)
    s = math.sqrt(s2)
    Vz = -math.copysign(math.log((abs(t) + R) / s), t)
    f = 1.0 / (rho2 * R)
    return (Ve, Vq, Vz,
            -t * u * f, -u * q * f, 1.0 / R,
            q * u * f, -t * u * (R * R + q * q) / (R * rho2 * s2), t * q / (R * s2),
            -1.0 / R, t * q / (R * s2), t * u / (R * s2))


@njit(cache=True)
def _integrand(x, y, z, phi, a, b, half, weight, acc, out):
    """Add weight times the charges of the meridian at phi' = phi to out[0:3] (H, body) and
    out[3:12] (dH_i/dx_j, body, row-major), per unit m and 4 pi and dphi'; acc: scratch (12,)."""
    c, s = math.cos(phi), math.sin(phi)
    p = x * c + y * s
    q = -x * s + y * c
    tb, ta = b - p, a - p
    acc[:] = 0.0
    for k in range(2):
        u = z + half if k == 0 else z - half
        sign = 1.0 if k == 0 else -1.0
        outer = _line(tb, q, u)
        vb = _volume(tb, q, u)
        va = _volume(ta, q, u)
        for i in range(12):
            acc[i] += sign * (b * outer[i] - (vb[i] - va[i]))
        if a > 0.0:
            inner = _line(ta, q, u)
            for i in range(12):
                acc[i] -= sign * a * inner[i]
    # acc: components (e, e_perp, z), each with derivatives (d/dt, d/dq, d/du);
    # directional derivatives along (e, e_perp, z) are (-d/dt, d/dq, d/du)
    basis = ((c, s, 0.0), (-s, c, 0.0), (0.0, 0.0, 1.0))
    for comp in range(3):
        value = weight * acc[comp]
        d_along = (-weight * acc[3 + 3 * comp], weight * acc[4 + 3 * comp],
                   weight * acc[5 + 3 * comp])
        for i in range(3):
            out[i] += value * basis[comp][i]
            for j in range(3):
                out[3 + 3 * i + j] += basis[comp][i] * (
                    d_along[0] * basis[0][j] + d_along[1] * basis[1][j] + d_along[2] * basis[2][j])


@njit(cache=True)
def _wrap(angle):
    """angle into [-pi, pi)."""
    return (angle + math.pi) % (2.0 * math.pi) - math.pi


@njit(cache=True)
def _rect_distance(r, z, a, b, half):
    """Distance in the meridian plane from (r, z) to the rectangle [a, b] x [-half, half]'s
    boundary (outside: to the rectangle)."""
    dr = max(a - r, r - b)
    dz = abs(z) - half
    if dr <= 0.0 and dz <= 0.0:
        return -max(dr, dz)
    return math.hypot(max(dr, 0.0), max(dz, 0.0))


@njit(cache=True)
def _side(x, y, z, centre, length, direction, eps, a, b, half, nodes, weights, panel_width,
          scratch, out):
    """Integrate phi' from centre over `length` (> 0) in `direction` (+-1), sinh-mapped."""
    if length <= 0.0:
        return
    s_max = math.asinh(length / eps)
    panels = max(1, int(math.ceil(s_max / panel_width)))
    width = s_max / panels
    for panel in range(panels):
        s0 = panel * width
        for k in range(len(nodes)):
            sv = s0 + 0.5 * width * (nodes[k] + 1.0)
            jac = 0.5 * width * weights[k] * eps * math.cosh(sv)
            phi = centre + direction * eps * math.sinh(sv)
            _integrand(x, y, z, phi, a, b, half, jac, scratch, out)


def _kernel(points, a, b, height, angle, m, nodes, weights, panel_width):
    n = points.shape[0]
    result = np.zeros((n, 12))
    half = 0.5 * height
    full = angle >= 2.0 * math.pi - 1e-12
    size = max(2.0 * b, height)
    tol = 1e-9 * size
    for idx in prange(n):
        x, y, z = points[idx, 0], points[idx, 1], points[idx, 2]
        r = math.hypot(x, y)
        phi = math.atan2(y, x)
        in_span = full or abs(phi) <= 0.5 * angle
        # a point on a charged wall or a top/bottom face: evaluated on its outer side
        if in_span and a - tol <= r <= b + tol and abs(z) <= half + tol:
            if abs(r - b) <= tol or (a > 0.0 and abs(r - a) <= tol) or abs(abs(z) - half) <= tol:
                if abs(r - b) <= tol:
                    r = b + 2.0 * tol
                elif a > 0.0 and abs(r - a) <= tol:
                    r = a - 2.0 * tol
                if abs(abs(z) - half) <= tol:
                    z = math.copysign(half + 2.0 * tol, z) if z != 0.0 else half + 2.0 * tol
                x, y = r * math.cos(phi), r * math.sin(phi)
        if in_span:
            centre = phi
            distance = _rect_distance(r, z, a, b, half)
        else:
            upper = 0.5 * angle
            to_upper = abs(_wrap(phi - upper))
            to_lower = abs(_wrap(phi + upper))
            centre = upper if to_upper <= to_lower else -upper
            p = r * math.cos(phi - centre)
            q = r * math.sin(phi - centre)
            dr = max(a - p, p - b, 0.0)
            dz = max(abs(z) - half, 0.0)
            distance = math.sqrt(q * q + dr * dr + dz * dz)
        radius = max(min(max(r, a), b), 0.01 * b)
        eps = max(distance, tol) / radius
        acc = np.zeros(12)
        scratch = np.zeros(12)
        if full:
            _side(x, y, z, centre, math.pi, 1.0, eps, a, b, half, nodes, weights, panel_width,
                  scratch, acc)
            _side(x, y, z, centre, math.pi, -1.0, eps, a, b, half, nodes, weights, panel_width,
                  scratch, acc)
        else:
            _side(x, y, z, centre, 0.5 * angle - centre, 1.0, eps, a, b, half, nodes, weights, panel_width,
                  scratch, acc)
            _side(x, y, z, centre, centre + 0.5 * angle, -1.0, eps, a, b, half, nodes, weights, panel_width,
                  scratch, acc)
        scale = m / (4.0 * math.pi)
        for i in range(12):
            result[idx, i] = scale * acc[i]
        if in_span and a < r < b and abs(z) < half:
            # inside the material the volume term's e_perp part jumps by -4 pi where the split
            # sits, which moves with the point: d/dx adds (jump) phi_hat (x) grad phi (derived here)
            ex, ey = -math.sin(phi), math.cos(phi)
            result[idx, 3] -= m * ex * ex / r
            result[idx, 4] -= m * ex * ey / r
            result[idx, 6] -= m * ey * ex / r
            result[idx, 7] -= m * ey * ey / r
    return result


# small batches (the trap search's refinements and contact steps) run on one thread: starting the
# parallel region cost more than the work for ten points on a busy machine
_radial_kernel = njit(cache=True, parallel=True)(_kernel)
_radial_kernel_serial = serial_twin(_radial_kernel)
SERIAL_BELOW = 64  # points


def _evaluate(points, outer_diameter, inner_diameter, height, angle, magnetization,
              rule=None):
    pts = np.ascontiguousarray(np.asarray(points, dtype=float).reshape(-1, 3))
    m = float(np.asarray(magnetization, dtype=float).reshape(-1)[0])
    nodes, weights, width = (_NODES, _WEIGHTS, PANEL_WIDTH) if rule is None else rule
    kernel = _radial_kernel_serial if len(pts) < SERIAL_BELOW else _radial_kernel
    out = kernel(pts, 0.5 * float(inner_diameter), 0.5 * float(outer_diameter),
                         float(height), float(angle), m, nodes, weights, float(width))
    return out[:, :3].copy(), out[:, 3:].reshape(-1, 3, 3).copy()


def radial_sector_H_and_gradient(points, outer_diameter, inner_diameter, height, angle,
                                 magnetization, rule=None):
    """H and dH/dx of a radially magnetised ring or arc segment, body frame.

    Parameters
    ----------
    points : numpy.ndarray, shape (N, 3)
        Body-frame points, m.
    outer_diameter, inner_diameter, height : float
        m (the inner diameter may be 0 for an arc: a pie slice).
    angle : float
        The span in radians, centred on body +x; 2 pi for a ring.
    magnetization : array_like, shape (1,)
        The signed radial magnetisation m, A/m (positive: radial-out).
    rule : tuple, optional
        (Gauss-Legendre nodes, weights, panel width in s) instead of the default (a
        convergence check's finer rule).

    Returns
    -------
    H : numpy.ndarray, shape (N, 3)
        A/m.
    G : numpy.ndarray, shape (N, 3, 3)
        dH_i/dx_j, A/m^2.

    References
    ----------
    R. Ravaud et al., IEEE Trans. Magn. 44(8), 1982 (2008) (the charge model); the integration
    is derived here (module docstring), with D. J. Johnston and D. Elliott, Int. J. Numer. Meth.
    Eng. 62, 564 (2005) (the sinh transformation).
    """
    return _evaluate(points, outer_diameter, inner_diameter, height, angle, magnetization, rule)


def radial_sector_H(points, outer_diameter, inner_diameter, height, angle, magnetization):
    """H of a radially magnetised ring or arc segment, body frame.

    Parameters
    ----------
    points : numpy.ndarray, shape (N, 3)
        Body-frame points, m.
    outer_diameter, inner_diameter, height : float
        m.
    angle : float
        The span in radians, centred on body +x; 2 pi for a ring.
    magnetization : array_like, shape (1,)
        The signed radial magnetisation m, A/m (positive: radial-out).

    Returns
    -------
    numpy.ndarray, shape (N, 3)
        A/m.

    References
    ----------
    As radial_sector_H_and_gradient.
    """
    return _evaluate(points, outer_diameter, inner_diameter, height, angle, magnetization)[0]


def radial_sector_H_gradient(points, outer_diameter, inner_diameter, height, angle,
                             magnetization):
    """dH/dx of a radially magnetised ring or arc segment, body frame.

    Parameters
    ----------
    points : numpy.ndarray, shape (N, 3)
        Body-frame points, m.
    outer_diameter, inner_diameter, height : float
        m.
    angle : float
        The span in radians; 2 pi for a ring.
    magnetization : array_like, shape (1,)
        The signed radial magnetisation m, A/m.

    Returns
    -------
    numpy.ndarray, shape (N, 3, 3)
        dH_i/dx_j, A/m^2.

    References
    ----------
    As radial_sector_H_and_gradient.
    """
    return _evaluate(points, outer_diameter, inner_diameter, height, angle, magnetization)[1]
