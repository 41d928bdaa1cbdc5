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
    """(count, 3) nearly uniform points on a sphere (golden-angle spiral), turned by `turn` rad
    about z so that two sets of the same size do not coincide."""
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
    """Dipoles (positions (K, 3), moments (K, 3)) reproducing exact_H(points) outside the sphere
    of CHECK_RADIUS * circumradius about centre, and the largest relative error found on a
    second set of points of that sphere."""
    sources = centre + fibonacci_sphere(count, SOURCE_RADIUS * circumradius)
    checks = centre + fibonacci_sphere(CHECKS_PER_SOURCE * count, CHECK_RADIUS * circumradius)
    solution = np.linalg.lstsq(_unit_responses(checks, sources), exact_H(checks).ravel(),
                               rcond=1e-12)[0]
    moments = solution.reshape(count, 3)
    probes = centre + fibonacci_sphere(2 * count, CHECK_RADIUS * circumradius, turn=0.5)
    truth = exact_H(probes)
    error = np.linalg.norm(dipole_H(probes, sources, moments, method="direct") - truth, axis=1)
    return sources, moments, float(error.max() / np.linalg.norm(truth, axis=1).max())
