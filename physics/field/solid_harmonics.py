"""Real solid harmonics and the fit of a harmonic field's components to them on a sphere: the
local expansions of physics/field/local_cells.py (inside a cell of target points); the
irregular ones are for expansions outside a group of sources.

C_lm(u) = sqrt(4 pi / (2l + 1)) Y_lm(u) (Racah's normalisation) by the recurrences of
T. Helgaker, P. Jorgensen & J. Olsen, Molecular Electronic-Structure Theory (Wiley 2000),
eqs. 6.4.70-6.4.73. At a point s (in units of the sphere's radius) the regular harmonics are
|s|^l C_lm (polynomials, for points inside the sphere) and the irregular ones |s|^-(l+1) C_lm (for
points outside); on the sphere |s| = 1 both are C_lm, so one fit serves both. Each Cartesian
component of H, and of dH/dx, of sources outside (inside) the sphere is harmonic inside (outside)
it and is fitted on its own. Columns: l^2 for m = 0, l^2 + 2m - 1 (cos) and l^2 + 2m (sin) for
m > 0; columns below the lowest degree are zero.
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit

TOP_DEGREE = 24  # the highest degree any expansion uses
CHANNELS = 8  # Hx, Hy, Hz, Gxx, Gxy, Gxz, Gyy, Gyz (G is symmetric and traceless where harmonic)
LEBEDEV_ORDERS = (3, 5, 7, 9, 11, 13, 15, 17, 19, 21, 23, 25, 27, 29, 31, 35, 41, 47, 53, 59, 65)


def _recurrence_tables(top: int):
    """The constant factors of the recurrences up to degree `top`."""
    diagonal = np.zeros(top + 1)
    step_z = np.zeros((top + 1, top + 1))
    step_back = np.zeros((top + 1, top + 1))
    for m in range(1, top + 1):
        diagonal[m] = -math.sqrt((2.0 * m - 1.0) / (2.0 * m))
    for m in range(top + 1):
        for l in range(m, top):
            d = 1.0 / math.sqrt((l + m + 1.0) * (l - m + 1.0))
            step_z[l, m] = (2.0 * l + 1.0) * d
            step_back[l, m] = math.sqrt((l + m) * (l - m)) * d
    return diagonal, step_z, step_back


_DIAGONAL, _STEP_Z, _STEP_BACK = _recurrence_tables(TOP_DEGREE)


@njit(cache=True)
def fill_basis(sx, sy, sz, regular, lowest, degree, cr, ci, row):
    """row[t] = the basis functions at s, up to `degree` (columns as in the module docstring).

    Parameters
    ----------
    sx, sy, sz : float
        The point over the sphere's radius (dimensionless); |s| > 0 when irregular.
    regular : bool
        |s|^l C_lm (inside) or |s|^-(l+1) C_lm (outside).
    lowest : int
        Columns of lower degree are set to zero.
    degree : int
        Highest degree, <= TOP_DEGREE.
    cr, ci : numpy.ndarray, shape (>= degree + 1, >= degree + 1)
        Scratch.
    row : numpy.ndarray, shape (>= (degree + 1)^2,)
        Output.

    References
    ----------
    Helgaker, Jorgensen & Olsen, Molecular Electronic-Structure Theory (2000), eqs. 6.4.70-73.
    """
    if regular:
        x, y, z = sx, sy, sz
        r2 = sx * sx + sy * sy + sz * sz
        inv_r = 1.0
    else:
        r = math.sqrt(sx * sx + sy * sy + sz * sz)
        x, y, z = sx / r, sy / r, sz / r
        r2 = 1.0
        inv_r = 1.0 / r
    cr[0, 0] = 1.0
    ci[0, 0] = 0.0
    for m in range(0, degree + 1):
        if m > 0:  # C_mm from C_(m-1)(m-1)
            f = _DIAGONAL[m]
            a, b = cr[m - 1, m - 1], ci[m - 1, m - 1]
            cr[m, m] = f * (x * a - y * b)
            ci[m, m] = f * (x * b + y * a)
        if m < degree:  # C_(m+1)m
            c1 = _STEP_Z[m, m] * z
            cr[m + 1, m] = c1 * cr[m, m]
            ci[m + 1, m] = c1 * ci[m, m]
        for l in range(m + 1, degree):  # C_(l+1)m from C_lm and C_(l-1)m
            c1 = _STEP_Z[l, m] * z
            c2 = _STEP_BACK[l, m] * r2
            cr[l + 1, m] = c1 * cr[l, m] - c2 * cr[l - 1, m]
            ci[l + 1, m] = c1 * ci[l, m] - c2 * ci[l - 1, m]
    scale = inv_r
    for l in range(0, degree + 1):
        base = l * l
        if l < lowest:
            for t in range(base, base + 2 * l + 1):
                row[t] = 0.0
        else:
            row[base] = cr[l, 0] * scale
            for m in range(1, l + 1):
                row[base + 2 * m - 1] = cr[l, m] * scale
                row[base + 2 * m] = ci[l, m] * scale
        scale *= inv_r


@njit(cache=True)
def add_expansion(sx, sy, sz, regular, lowest, degree, coef, want_g, Hm, Gm, cr, ci, row):
    """Add an expansion (coef (CHANNELS, >= (degree + 1)^2)) at s into Hm (3,) and Gm (3, 3).

    Parameters
    ----------
    sx, sy, sz : float
        The point over the sphere's radius.
    regular, lowest, degree : bool, int, int
        As fill_basis.
    coef : numpy.ndarray, shape (CHANNELS, T)
        A/m for H, A/m^2 for G.
    want_g : bool
        Also add dH/dx (G traceless: Gzz = -Gxx - Gyy).
    Hm, Gm : numpy.ndarray, shapes (3,), (3, 3)
        Accumulators.
    cr, ci, row : numpy.ndarray
        Scratch for fill_basis.
    """
    fill_basis(sx, sy, sz, regular, lowest, degree, cr, ci, row)
    size = (degree + 1) * (degree + 1)
    # The channels' sums side by side, each in the order of t: the same numbers as one channel
    # after another, but eight independent chains instead of one (a sum waits on its last add).
    a0 = a1 = a2 = a3 = a4 = a5 = a6 = a7 = 0.0
    if want_g:
        for t in range(lowest * lowest, size):
            r = row[t]
            a0 += coef[0, t] * r
            a1 += coef[1, t] * r
            a2 += coef[2, t] * r
            a3 += coef[3, t] * r
            a4 += coef[4, t] * r
            a5 += coef[5, t] * r
            a6 += coef[6, t] * r
            a7 += coef[7, t] * r
    else:
        for t in range(lowest * lowest, size):
            r = row[t]
            a0 += coef[0, t] * r
            a1 += coef[1, t] * r
            a2 += coef[2, t] * r
    Hm[0] += a0
    Hm[1] += a1
    Hm[2] += a2
    if want_g:
        Gm[0, 0] += a3
        Gm[0, 1] += a4
        Gm[1, 0] += a4
        Gm[0, 2] += a5
        Gm[2, 0] += a5
        Gm[1, 1] += a6
        Gm[1, 2] += a7
        Gm[2, 1] += a7
        Gm[2, 2] -= a3 + a6


@njit(cache=True)
def _basis_rows(points, regular, lowest, degree, A):
    n = degree + 1
    cr = np.zeros((n, n))
    ci = np.zeros((n, n))
    for q in range(points.shape[0]):
        fill_basis(points[q, 0], points[q, 1], points[q, 2], regular, lowest, degree, cr, ci, A[q])


def basis_matrix(points, degree: int, regular: bool = False, lowest: int = 0) -> np.ndarray:
    """The basis functions at points.

    Parameters
    ----------
    points : numpy.ndarray, shape (Q, 3)
        Over the sphere's radius (dimensionless).
    degree : int
        Highest degree p.
    regular : bool
        Regular (inside) or irregular (outside) harmonics.
    lowest : int
        Columns below this degree are zero.

    Returns
    -------
    numpy.ndarray, shape (Q, (p + 1)^2)

    References
    ----------
    Helgaker, Jorgensen & Olsen, Molecular Electronic-Structure Theory (2000), section 6.4.
    """
    A = np.zeros((len(points), (degree + 1) ** 2))
    _basis_rows(np.ascontiguousarray(points, dtype=float), regular, lowest, degree, A)
    return A


def channels(H, G) -> np.ndarray:
    """H and its gradient as the CHANNELS columns.

    Parameters
    ----------
    H : numpy.ndarray, shape (N, 3)
        A/m.
    G : numpy.ndarray, shape (N, 3, 3)
        dH_i/dx_j, A/m^2.

    Returns
    -------
    numpy.ndarray, shape (N, CHANNELS)
        Hx, Hy, Hz, Gxx, Gxy, Gxz, Gyy, Gyz.
    """
    return np.column_stack([H, G[:, 0, 0], G[:, 0, 1], G[:, 0, 2], G[:, 1, 1], G[:, 1, 2]])


def lebedev_directions(min_order: int):
    """The smallest Lebedev set of order >= min_order.

    Parameters
    ----------
    min_order : int
        Polynomial order the set must integrate exactly.

    Returns
    -------
    directions : numpy.ndarray, shape (Q, 3)
        Unit vectors.
    weights : numpy.ndarray, shape (Q,)
        Summing to 4 pi.

    References
    ----------
    Lebedev & Laikov, Doklady Mathematics 59, 477 (1999) (scipy.integrate.lebedev_rule).
    """
    from scipy.integrate import lebedev_rule  # here: scipy.integrate costs every start 0.5 s

    order = next(o for o in LEBEDEV_ORDERS if o >= min_order)
    directions, weights = lebedev_rule(order)
    return directions.T.copy(), weights


class SphereFit:
    """Samples on the unit sphere and, per degree, the matrix that takes the samples of a
    function there to its coefficients; check directions and their basis to measure the error.

    Parameters
    ----------
    degrees : tuple of int
        The degrees offered, at most TOP_DEGREE.
    lowest : int
        The lowest degree fitted.

    References
    ----------
    Lebedev & Laikov, Doklady Mathematics 59, 477 (1999): the points of order >= 2p + 1
    integrate the products of two harmonics of degree <= p exactly, so the weighted least squares
    fit is the projection for a function of degree <= p.
    """

    def __init__(self, degrees, lowest: int):
        top = max(degrees)
        self.degrees = tuple(degrees)
        self.lowest = lowest
        self.directions, weights = lebedev_directions(2 * top + 1)
        check, _ = lebedev_directions(2 * top + 3)  # the next finer set
        a, b = 0.6154797086703874, 0.4636476090008061  # off the sets' symmetry planes
        Rz = np.array([[math.cos(b), -math.sin(b), 0], [math.sin(b), math.cos(b), 0], [0, 0, 1]])
        Rx = np.array([[1, 0, 0], [0, math.cos(a), -math.sin(a)], [0, math.sin(a), math.cos(a)]])
        self.check = check @ (Rx @ Rz).T
        self.projectors, self.check_bases = {}, {}
        for p in self.degrees:
            A = basis_matrix(self.directions, p, lowest=lowest)
            used = np.arange(lowest**2, (p + 1) ** 2)
            Aw = A[:, used] * weights[:, None]
            P = np.zeros(((p + 1) ** 2, len(self.directions)))
            P[used] = np.linalg.solve(A[:, used].T @ Aw, Aw.T)
            self.projectors[p] = P
            self.check_bases[p] = basis_matrix(self.check, p, lowest=lowest)

    def first_within(self, values, wanted, scales, tolerance):
        """The smallest degree whose fit of `values` misses `wanted` by at most the tolerance.

        Parameters
        ----------
        values : numpy.ndarray, shape (Q, CHANNELS)
            At center + radius * directions.
        wanted : numpy.ndarray, shape (Q', CHANNELS)
            At center + radius * check.
        scales : numpy.ndarray, shape (CHANNELS,)
            Each channel's error is measured over its scale.
        tolerance : float

        Returns
        -------
        degree : int
            0 when no degree meets the tolerance.
        coefficients : numpy.ndarray, shape (CHANNELS, (TOP_DEGREE + 1)^2)
        error : float
            The largest error over its scale at the check points (inf with degree 0).
        """
        size = (TOP_DEGREE + 1) ** 2
        for p in self.degrees:
            coef = (self.projectors[p] @ values).T
            error = float(np.max(np.abs(self.check_bases[p] @ coef.T - wanted) / scales))
            if error <= tolerance:
                full = np.zeros((CHANNELS, size))
                full[:, :coef.shape[1]] = coef
                return p, full, error
        return 0, np.zeros((CHANNELS, size)), math.inf
