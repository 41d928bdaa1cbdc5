"""Bulirsch's generalised complete elliptic integral, numba-compiled.

    cel(kc, p, a, b) = int_0^{pi/2} (a cos^2 t + b sin^2 t)
                       / ((cos^2 t + p sin^2 t) sqrt(cos^2 t + kc^2 sin^2 t)) dt

R. Bulirsch, "Numerical calculation of elliptic integrals and elliptic functions. III",
Numer. Math. 13, 305-315 (1969) (the algorithm `cel`; parts I/II: Numer. Math. 7, 78 (1965)),
in the form printed by N. Derby and S. Olbert, Am. J. Phys. 78, 229 (2010), appendix.
Special cases: K(k) = cel(kc, 1, 1, 1), E(k) = cel(kc, 1, 1, kc^2), Pi(n, k) = cel(kc, 1 - n, 1, 1),
with kc = sqrt(1 - k^2).

cel is linear in (a, b) for fixed (kc, p), so `cel_basis` returns the pair
cel(kc, p, 1, 0), cel(kc, p, 0, 1) from one iteration; every combination is then a dot product.
Computing the two separately (rather than one combined call) also keeps the p -> 0 limit
accurate: cel(kc, p, 0, 1) grows like 1/sqrt(p) and would swamp the O(1) part of a mixed call.
"""
from __future__ import annotations

import math

from numba import njit

# The iteration converges quadratically: stopping at a relative step of 1e-8 leaves ~1e-16.
_STEP_TOLERANCE = 1e-8
_HALF_PI = 0.5 * math.pi


@njit(cache=True, nogil=True)
def cel(kc, p, a, b):
    """Bulirsch's generalised complete elliptic integral cel(kc, p, a, b).

    Parameters
    ----------
    kc : float
        Complementary modulus, nonzero (its sign is ignored).
    p : float
        Any sign (p < 0 takes the Cauchy principal value branch of the algorithm).
    a, b : float
        The weights of cos^2 t and sin^2 t in the numerator.

    Returns
    -------
    float
        The integral (dimensionless when a and b are).

    References
    ----------
    R. Bulirsch, Numer. Math. 13, 305 (1969) (the algorithm cel), in the form printed by
    N. Derby and S. Olbert, Am. J. Phys. 78, 229 (2010), appendix.
    """
    k = abs(kc)
    em = 1.0
    if p > 0.0:
        pp = math.sqrt(p)
        bb = b / pp
        aa = a
    else:
        f = kc * kc
        q = 1.0 - f
        g = 1.0 - p
        f = f - p
        q = q * (b - a * p)
        pp = math.sqrt(f / g)
        aa = (a - b) / g
        bb = -q / (g * g * pp) + aa * pp
    f = aa
    aa = aa + bb / pp
    g = k / pp
    bb = 2.0 * (bb + f * g)
    pp = g + pp
    g = em
    em = k + em
    kk = k
    while abs(g - k) > g * _STEP_TOLERANCE:
        k = 2.0 * math.sqrt(kk)
        kk = k * em
        f = aa
        aa = aa + bb / pp
        g = kk / pp
        bb = 2.0 * (bb + f * g)
        pp = g + pp
        g = em
        em = k + em
    return _HALF_PI * (bb + aa * em) / (em * (em + pp))


@njit(cache=True, nogil=True)
def cel_basis(kc, p):
    """(cel(kc, p, 1, 0), cel(kc, p, 0, 1)) for kc != 0 and p > 0, from one shared iteration.

    Parameters
    ----------
    kc : float
        Complementary modulus, nonzero.
    p : float
        p > 0.

    Returns
    -------
    tuple of two floats
        cel(kc, p, 1, 0) and cel(kc, p, 0, 1); cel(kc, p, a, b) is their combination with
        weights a and b.

    References
    ----------
    R. Bulirsch, Numer. Math. 13, 305 (1969); N. Derby and S. Olbert, Am. J. Phys. 78, 229
    (2010), appendix; the two-column form derived here (cel is linear in a and b).
    """
    k = abs(kc)
    em = 1.0
    pp = math.sqrt(p)
    # column 1: (a, b) = (1, 0); column 2: (a, b) = (0, 1), b scaled by 1/sqrt(p) as in cel
    a1 = 1.0
    b1 = 0.0
    a2 = 0.0
    b2 = 1.0 / pp
    f1 = a1
    f2 = a2
    a1 = a1 + b1 / pp
    a2 = a2 + b2 / pp
    g = k / pp
    b1 = 2.0 * (b1 + f1 * g)
    b2 = 2.0 * (b2 + f2 * g)
    pp = g + pp
    g = em
    em = k + em
    kk = k
    while abs(g - k) > g * _STEP_TOLERANCE:
        k = 2.0 * math.sqrt(kk)
        kk = k * em
        f1 = a1
        f2 = a2
        a1 = a1 + b1 / pp
        a2 = a2 + b2 / pp
        g = kk / pp
        b1 = 2.0 * (b1 + f1 * g)
        b2 = 2.0 * (b2 + f2 * g)
        pp = g + pp
        g = em
        em = k + em
    scale = _HALF_PI / (em * (em + pp))
    return (b1 + a1 * em) * scale, (b2 + a2 * em) * scale


@njit(cache=True, nogil=True)
def cel_basis_pair(kc, p):
    """cel_basis(kc, 1) and cel_basis(kc, p) together (p > 0), sharing the AGM sequence of kc.

    Parameters
    ----------
    kc : float
        Complementary modulus, nonzero.
    p : float
        p > 0.

    Returns
    -------
    tuple of four floats
        (cel(kc,1,1,0), cel(kc,1,0,1), cel(kc,p,1,0), cel(kc,p,0,1)).

    References
    ----------
    R. Bulirsch, Numer. Math. 13, 305 (1969); N. Derby and S. Olbert, Am. J. Phys. 78, 229
    (2010), appendix.
    """
    k = abs(kc)
    em = 1.0
    # chain 1: p = 1; chain 2: p = p. Columns as in cel_basis.
    q1 = 1.0
    q2 = math.sqrt(p)
    a11 = 1.0
    b11 = 0.0
    a12 = 0.0
    b12 = 1.0
    a21 = 1.0
    b21 = 0.0
    a22 = 0.0
    b22 = 1.0 / q2
    kk = k
    first = True
    g = 0.0
    while first or abs(g - k) > g * _STEP_TOLERANCE:
        if not first:
            k = 2.0 * math.sqrt(kk)
            kk = k * em
        first = False
        i1 = 1.0 / q1
        i2 = 1.0 / q2
        g1 = kk * i1
        g2 = kk * i2
        f = a11
        a11 = a11 + b11 * i1
        b11 = 2.0 * (b11 + f * g1)
        f = a12
        a12 = a12 + b12 * i1
        b12 = 2.0 * (b12 + f * g1)
        f = a21
        a21 = a21 + b21 * i2
        b21 = 2.0 * (b21 + f * g2)
        f = a22
        a22 = a22 + b22 * i2
        b22 = 2.0 * (b22 + f * g2)
        q1 = g1 + q1
        q2 = g2 + q2
        g = em
        em = k + em
    s1 = _HALF_PI / (em * (em + q1))
    s2 = _HALF_PI / (em * (em + q2))
    return (b11 + a11 * em) * s1, (b12 + a12 * em) * s1, (b21 + a21 * em) * s2, (b22 + a22 * em) * s2
