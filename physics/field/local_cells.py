"""The field of a large family of parts at many points, gathered per cell of points: the parts near
a cell summed one by one at its points, the far ones once into a local expansion about the cell
(regular solid harmonics, physics/field/solid_harmonics.py) that every point of the cell then
evaluates. A board of 900 parts costs about (near parts + an expansion) per point and (far parts)
per sample of each cell's sphere, instead of 900 per point.

The far field inside a cell's ball (radius r, every point of the cell in it) comes from parts
outside the ball of radius r / THETA, so each Cartesian component of its H and dH/dx is harmonic
in the ball and its expansion converges there as THETA^p (the local expansion of the fast
multipole method; L. Greengard & V. Rokhlin, J. Comput. Phys. 73, 325 (1987)). The coefficients are
projected from the far parts' exact field at Lebedev points of the sphere r, and the error is
measured at the points of a finer, turned Lebedev set: the error is harmonic in the ball, so its
largest value in the ball is on the sphere (the maximum principle). The smallest degree of
DEGREES whose measured error is below TOLERANCE of the far parts' field scale on the sphere
(sum_k |m_k| / (4 pi (d_k + r)^3) for H, over (d_k + r) once more for dH/dx, d_k the distance of
part k from the centre: lower bounds of sum_k |H_k| for parts seen as dipoles) is used; a cell
where none is, or where the expansion would not save work, is summed part by part. The error at
any point is then below TOLERANCE / 0.01 = 1e-6 of the local field scale of DESIGN.md,
max(|B|, 0.01 sum_k |B_k|) (derived here).

Cells are chosen by halving the points along the longest side of their box while a cost model
(in closed-form evaluations of one part at one point) says the halves are cheaper. Each
expansion is fitted on a ball MARGIN wider than its cell's and kept on the family: a later call's
cell inside that ball (the trap search's Newton steps and Hessian stencils come back to nearly
the same points many times) uses it without summing the far parts again; the bound above holds
anywhere in the ball, so a reused expansion is as accurate as a new one.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
from numba import njit, prange

from trapscape.physics.field.solid_harmonics import (CHANNELS, TOP_DEGREE, SphereFit,
                                                    add_expansion, channels)

MIN_PARTS = 100  # families below this many parts are summed part by part (every sample's board;
# an 8 x 8 board by cells took 0.9 x the CPU time of part by part's: not worth it)
MIN_POINTS = 2_000  # calls with fewer points are summed part by part
THETA = 1.0 / 3.0  # the far parts lie outside r / THETA of a cell of radius r
DEGREES = (6, 8, 10, 12, 14, 16, 18, 20)  # the local expansion's degrees tried, smallest first
TOLERANCE = 1e-8  # of the far parts' field scale on the cell's sphere (see the docstring)
EXPANSION_COST = 10.0  # one expansion at a point, in boxes' closed forms (degree 16: 4.4 us, a box 0.5 us)
MIN_CELL_POINTS = 256  # cells are not halved below this many points
PARALLEL_MIN_POINTS = 20_000  # the expansion's kernel runs on numba's threads above this
MARGIN = 0.25  # an expansion is fitted on a ball this much wider than its cell's, so that the
# points of later calls close by (Newton's steps, the Hessian's stencil) fall inside and reuse it
CACHE_SIZE = 256  # expansions kept per family, newest first
REUSE = 4.0  # calls an expansion is expected to serve, for the cost model (a 16 x 16 board's
# `traps`: 465 cells served by 65 expansions)


@dataclass(frozen=True)
class Cell:
    """Points of one cell: their indices, the ball holding them and the parts near it."""

    index: np.ndarray  # (n,) into the call's points
    center: np.ndarray  # (3,) m
    radius: float  # m
    near: np.ndarray  # (k,) bool over the family's parts
    expand: bool  # False: every part summed one by one here


_FIT = []


def sphere_fit() -> SphereFit:
    """The one SphereFit of the local expansions (built on first use)."""
    if not _FIT:
        _FIT.append(SphereFit(DEGREES, 0))
    return _FIT[0]


@dataclass(frozen=True, eq=False)
class Expansion:
    """The local expansion of the parts outside `near`, valid in the ball (center, radius)."""

    center: np.ndarray  # (3,) m
    radius: float  # m
    near: np.ndarray  # (K,) bool over the family's parts: those summed one by one
    near_parts: object  # physics.field.families.Family: those parts
    degree: int
    coefficients: np.ndarray  # (CHANNELS, (TOP_DEGREE + 1)^2)


def _samples_per_cell() -> int:
    fit = sphere_fit()
    return len(fit.directions) + len(fit.check)


def _ball(points):
    lower, upper = points.min(axis=0), points.max(axis=0)
    center = 0.5 * (lower + upper)
    return center, float(np.sqrt(np.max(np.sum((points - center) ** 2, axis=1))))


def plan_cells(points, centers, radii, cache=()) -> tuple:
    """The cells of points and the cost of each plan, in closed-form evaluations.

    A cell inside a cached expansion's ball costs its near parts and the expansion at its
    points; any other its far parts at the sphere's samples over REUSE as well.

    Parameters
    ----------
    points : numpy.ndarray, shape (N, 3)
        m.
    centers : numpy.ndarray, shape (K, 3)
        The parts' centres, m.
    radii : numpy.ndarray, shape (K,)
        Their circumradii, m.
    cache : sequence of Expansion
        The family's expansions so far.

    Returns
    -------
    cells : list of Cell
    cost : float
        The plan's estimated cost; N K for the direct sum.
    """
    samples = _samples_per_cell()
    K = len(centers)

    def plan(index):
        pts = points[index]
        center, radius = _ball(pts)
        hit = _cached(cache, center, radius)
        if hit is None:
            near = (np.linalg.norm(centers - center, axis=1) - radii
                    < radius * (1.0 + MARGIN) / THETA)
            n_near, fit = int(near.sum()), samples * (K - int(near.sum())) / REUSE
        else:
            near, n_near, fit = hit.near, int(hit.near.sum()), 0.0
        direct = len(index) * K
        expanded = fit + len(index) * (n_near + EXPANSION_COST)
        if radius <= 0.0:  # one point, many times: nothing to expand about
            expanded = math.inf
        best = [Cell(index, center, radius, near, expanded < direct)], min(direct, expanded)
        if len(index) >= 2 * MIN_CELL_POINTS and best[1] > len(index) * (1.0 + EXPANSION_COST):
            axis = int(np.argmax(pts.max(axis=0) - pts.min(axis=0)))
            order = np.argsort(pts[:, axis], kind="stable")
            half = len(index) // 2
            left, right = plan(index[order[:half]]), plan(index[order[half:]])
            if left[1] + right[1] < best[1]:
                return left[0] + right[0], left[1] + right[1]
        return best

    return plan(np.arange(len(points)))


@njit(cache=True)
def _expansion_at(m, points, center, radius, degree, coef, want_g, H, G, cr, ci, row):
    Gm = G[m] if want_g else G[0]
    add_expansion((points[m, 0] - center[0]) / radius, (points[m, 1] - center[1]) / radius,
                  (points[m, 2] - center[2]) / radius, True, 0, degree, coef, want_g, H[m], Gm,
                  cr, ci, row)


@njit(cache=True)
def _expansion_serial(points, center, radius, degree, coef, want_g, H, G):
    n = TOP_DEGREE + 1
    cr, ci, row = np.empty((n, n)), np.empty((n, n)), np.empty(n * n)
    for m in range(points.shape[0]):
        _expansion_at(m, points, center, radius, degree, coef, want_g, H, G, cr, ci, row)


@njit(cache=True, parallel=True)
def _expansion_parallel(points, center, radius, degree, coef, want_g, H, G):
    n = TOP_DEGREE + 1
    for m in prange(points.shape[0]):
        cr, ci, row = np.empty((n, n)), np.empty((n, n)), np.empty(n * n)
        _expansion_at(m, points, center, radius, degree, coef, want_g, H, G, cr, ci, row)


def _parts(family, mask):
    return replace(family, **{name: np.ascontiguousarray(getattr(family, name)[mask])
                              for name in ("centers", "matrices", "params", "magnetizations",
                                           "moments", "far", "radii")})


def _direct(family, points, gradient):
    H = np.zeros((len(points), 3))
    G = np.zeros((len(points), 3, 3)) if gradient else None
    family.add_H_direct(np.ascontiguousarray(points), gradient, H, G)
    return H, G


def local_expansion(far_parts, center, radius, moments_norm, distances):
    """The far parts' local expansion about a cell, or None when no degree meets the tolerance.

    Parameters
    ----------
    far_parts : physics.field.families.Family
        Summed part by part (its `add_H_direct`).
    center : numpy.ndarray, shape (3,)
        m.
    radius : float
        The cell's radius r, m.
    moments_norm : numpy.ndarray, shape (F,)
        |m_k| of the far parts, A m^2.
    distances : numpy.ndarray, shape (F,)
        Their centres' distances from the cell's centre, m.

    Returns
    -------
    tuple (degree, coefficients (CHANNELS, (TOP_DEGREE + 1)^2), error over the scale) or None

    References
    ----------
    Greengard & Rokhlin, J. Comput. Phys. 73, 325 (1987) (the local expansion).
    """
    fit = sphere_fit()
    values = channels(*_direct(far_parts, center + radius * fit.directions, True))
    wanted = channels(*_direct(far_parts, center + radius * fit.check, True))
    reach = distances + radius
    scale_H = float(np.sum(moments_norm / (4.0 * math.pi * reach**3)))
    scale_G = float(np.sum(moments_norm / (4.0 * math.pi * reach**4)))
    scales = np.array([scale_H] * 3 + [scale_G] * 5)
    degree, coefficients, error = fit.first_within(values, wanted, scales, TOLERANCE)
    return None if degree == 0 else (degree, coefficients, error)


def add_H_by_cells(family, points, gradient, H, G) -> None:
    """Add a large family's H (and dH/dx) at many points, cell by cell, in place.

    Parameters
    ----------
    family : physics.field.families.Family
        Its parts summed one by one by its `add_H_direct`.
    points : numpy.ndarray, shape (N, 3)
        World points, m, C-contiguous.
    gradient : bool
    H : numpy.ndarray, shape (N, 3)
        A/m, accumulated.
    G : numpy.ndarray, shape (N, 3, 3) or None
        A/m^2, accumulated with gradient.

    References
    ----------
    Greengard & Rokhlin, J. Comput. Phys. 73, 325 (1987).
    """
    cells, _ = plan_cells(points, family.centers, family.radii, family.expansions)
    for cell in cells:
        pts = np.ascontiguousarray(points[cell.index])
        expansion = _expansion_for(family, cell) if cell.expand else None
        h, g = _direct(family if expansion is None else expansion.near_parts, pts, gradient)
        if expansion is not None:
            kernel = _expansion_parallel if len(pts) >= PARALLEL_MIN_POINTS else _expansion_serial
            kernel(pts, expansion.center, expansion.radius, expansion.degree,
                   expansion.coefficients, gradient, h, g if gradient else np.zeros((1, 3, 3)))
        H[cell.index] += h
        if gradient:
            G[cell.index] += g


def _expansion_for(family, cell):
    """A cached expansion whose ball holds the cell's, else one fitted on a ball MARGIN wider
    (and cached), else None (no degree met the tolerance).

    The cached expansion's error was checked on its own sphere, so it holds anywhere inside
    its ball (the maximum principle), wherever the cell lies in it.
    """
    cache = family.expansions
    hit = _cached(cache, cell.center, cell.radius)
    if hit is not None:
        return hit
    radius = cell.radius * (1.0 + MARGIN)
    distances = np.linalg.norm(family.centers - cell.center, axis=1)
    far = distances - family.radii >= radius / THETA
    fitted = local_expansion(_parts(family, far), cell.center, radius,
                             np.linalg.norm(family.moments[far], axis=1), distances[far])
    if fitted is None:
        return None
    expansion = Expansion(cell.center, radius, ~far, _parts(family, ~far), fitted[0], fitted[1])
    cache.insert(0, expansion)
    del cache[CACHE_SIZE:]
    return expansion


def _cached(cache, center, radius):
    """The first expansion of the cache whose ball holds the ball (center, radius), or None."""
    if not cache:
        return None
    reach = np.array([e.radius for e in cache]) - np.linalg.norm(
        np.array([e.center for e in cache]) - center, axis=1)
    first = int(np.argmax(reach >= radius))
    return cache[first] if reach[first] >= radius else None
