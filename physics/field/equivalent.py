"""Equivalent sources: the exact exterior field of a part as a small set of dipoles.

Dipoles on a sphere inside the part's circumsphere are fitted by least squares to the exact
field on a larger check sphere (the method of fundamental solutions: G. Fairweather and
A. Karageorghis, Adv. Comput. Math. 9, 69 (1998)). Both fields are harmonic outside the check
sphere and vanish at infinity, so by the maximum principle their difference anywhere outside is
at most its largest value on that sphere, which the fit measures on points it was not fitted to.
"""
from __future__ import annotations

import numpy as np

from trapscape.physics.field.dipole_sum import dipole_H

SOURCE_COUNT = 200
SOURCE_RADIUS = 0.6  # of the circumradius: where the equivalent dipoles sit
CHECK_RADIUS = 1.5  # of the circumradius: the fit holds outside this sphere
CHECKS_PER_SOURCE = 4


def fibonacci_sphere(count: int, radius: float, turn: float = 0.0) -> np.ndarray:
    """Nearly uniform points on a sphere about the origin (golden-angle spiral).

    Parameters
    ----------
    count : int
        Number of points.
    radius : float
        Sphere radius, m.
    turn : float
        Rotation about z, rad, so that two sets of the same size do not coincide.

    Returns
    -------
    numpy.ndarray, shape (count, 3)
        Points, m.
    """
    i = np.arange(count) + 0.5
    polar = np.arccos(1.0 - 2.0 * i / count)
    azimuth = np.pi * (1.0 + 5.0**0.5) * i + turn
    return radius * np.column_stack([np.cos(azimuth) * np.sin(polar),
                                     np.sin(azimuth) * np.sin(polar), np.cos(polar)])


def _unit_responses(checks, sources) -> np.ndarray:
    """(3 N, 3 K): H components at the checks from unit dipoles along x, y, z at each source,
    the dipole tensor (3 r r^T / r^5 - I / r^3) / (4 pi) (Jackson, Classical Electrodynamics
    5.56)."""
    r = checks[:, None, :] - sources[None, :, :]
    d2 = np.einsum("nki,nki->nk", r, r)
    tensor = 3.0 * r[..., :, None] * r[..., None, :] / d2[..., None, None] ** 2.5
    tensor -= np.eye(3) / d2[..., None, None] ** 1.5
    return (tensor / (4.0 * np.pi)).transpose(0, 2, 1, 3).reshape(3 * len(checks), 3 * len(sources))


def fit_equivalent_dipoles(exact_H, centre, circumradius, count=SOURCE_COUNT):
    """Dipoles reproducing exact_H outside a sphere about ``centre``, and the error found.

    The dipoles sit on a sphere of SOURCE_RADIUS * circumradius and are fitted by least squares
    to exact_H on the check sphere of CHECK_RADIUS * circumradius; the error is measured on a
    second, turned set of points of that sphere.

    Parameters
    ----------
    exact_H : callable
        Points (P, 3) in m -> H (P, 3) in A/m, the exact field (in the frame of ``centre``).
    centre : array_like, shape (3,)
        Centre of the spheres, m.
    circumradius : float
        The part's circumradius about ``centre``, m.
    count : int
        Number of equivalent dipoles K.

    Returns
    -------
    positions : numpy.ndarray, shape (K, 3)
        m.
    moments : numpy.ndarray, shape (K, 3)
        A m^2.
    error : float
        Largest |H_dipoles - H| on the second set over the largest |H| there (dimensionless);
        by the maximum principle it bounds the error everywhere outside the check sphere.

    References
    ----------
    G. Fairweather and A. Karageorghis, Adv. Comput. Math. 9, 69 (1998) (method of fundamental
    solutions); J. D. Jackson, Classical Electrodynamics, 3rd ed., eq. 5.56 (the dipole field).
    """
    sources = centre + fibonacci_sphere(count, SOURCE_RADIUS * circumradius)
    checks = centre + fibonacci_sphere(CHECKS_PER_SOURCE * count, CHECK_RADIUS * circumradius)
    solution = np.linalg.lstsq(_unit_responses(checks, sources), exact_H(checks).ravel(),
                               rcond=1e-12)[0]
    moments = solution.reshape(count, 3)
    probes = centre + fibonacci_sphere(2 * count, CHECK_RADIUS * circumradius, turn=0.5)
    truth = exact_H(probes)
    error = np.linalg.norm(dipole_H(probes, sources, moments, method="direct") - truth, axis=1)
    return sources, moments, float(error.max() / np.linalg.norm(truth, axis=1).max())
