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

A new expansion whose ball lies inside a cached one fitted to the exact field (level 0) is fitted
through it (level 1): its samples are that expansion plus the parts near it but far here (the
near parts of a ball inside another's are among the other's), a few dozen parts instead of every
far part (the downward pass of the fast multipole method, by fitting instead of translating).
The level-0 expansion's error is harmonic in its ball, so the new fit's check measures only its
own error, and its budget is what TOLERANCE of its scale leaves after the level-0 expansion's
bound (its scale is at least the level-0 one's: more parts, each nearer): the claim above holds
as before. Small cells of single probes, with a few near parts, then pay.

Cells whose work is small run the serial kernels (which release the GIL) over a pool of Python
threads, one per numba thread; large ones run numba's threads over their points. Each cell is
summed alone into its own points, so the numbers do not depend on the threads.
"""
from __future__ import annotations

import math
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, replace

import numba
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
# One expansion at a point, in boxes' closed forms (degree 16: 4.4 us, a box 0.5 us; 2.1 us since
# the channels are summed side by side, but 5 made the 30 x 30 board slower: kept).
EXPANSION_COST = 10.0
MIN_CELL_POINTS = 256  # cells are not halved below this many points
PARALLEL_MIN_POINTS = 20_000  # the expansion's kernel runs on numba's threads above this
PARALLEL_MIN_WORK = 50_000  # point-part pairs of a cell above which it runs numba's threads (as
# families.PARALLEL_MIN_WORK); smaller cells share out over Python threads
MARGIN = 0.25  # an expansion is fitted on a ball this much wider than its cell's, so that the
# points of later calls close by (Newton's steps, the Hessian's stencil) fall inside and reuse it
CACHE_SIZE = 1024  # expansions kept per family, newest first (40 kB each)
REUSE = 4.0  # calls an expansion is expected to serve, for the cost model (a 16 x 16 board's
# `traps`: 465 cells served by 65 expansions; 4 to 16 for the new fits through a level-0 one took
# the same CPU time on the 30 x 30 board's)


@dataclass(frozen=True)
class Cell:
    """Points of one cell: their indices, the ball holding them and the parts near it."""

    index: np.ndarray  # (n,) into the call's points
    center: np.ndarray  # (3,) m
    radius: float  # m
    near: np.ndarray  # (k,) bool over the family's parts
    expand: bool  # False: every part summed one by one here
    use: object = None  # the cached Expansion chosen for it; None with expand: a new one


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
    error: np.ndarray  # (CHANNELS,) its error bound, A/m for H and A/m^2 for dH/dx
    level: int = 0  # 0: fitted to the far parts' exact field; 1: through a level-0 expansion
    near_count: int = 0  # parts summed one by one


def _samples_per_cell() -> int:
    fit = sphere_fit()
    return len(fit.directions) + len(fit.check)


# How a planned cell is summed (the kernel's codes)
DIRECT, CACHED, NEW = 0, 1, 2


def plan_cells(points, centers, radii, cache=()) -> tuple:
    """The cells of points and the cost of each plan, in closed-form evaluations.

    A cell may sum every part at its points, use a cached expansion whose ball holds it (its
    near parts and the expansion at its points), or get a new expansion (its own near parts and
    the expansion at its points, and the far parts at the sphere's samples over REUSE: through a
    level-0 expansion holding its ball when there is one (that expansion and the parts near it
    but far here), else every far part). The cheapest is chosen. A cell of at least
    2 MIN_CELL_POINTS points whose best costs more than (1 + EXPANSION_COST) per point is halved
    along the longest side of its box, and the halves' plans replace it when cheaper.

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
    table = _table(cache)
    order, starts, stops, kinds, hits, balls, cost = _plan(
        np.ascontiguousarray(points, float), np.ascontiguousarray(centers, float),
        np.ascontiguousarray(radii, float), *table, _samples_per_cell())
    K = len(centers)
    cells = []
    for start, stop, kind, hit, ball in zip(starts, stops, kinds, hits, balls):
        center, radius = ball[:3].copy(), float(ball[3])
        index = order[start:stop].copy()
        if kind == DIRECT:
            cells.append(Cell(index, center, radius, np.zeros(K, bool), False))
        elif kind == CACHED:
            cells.append(Cell(index, center, radius, cache[hit].near, True, cache[hit]))
        else:
            cells.append(Cell(index, center, radius, _near(centers, radii, center, radius), True))
    return cells, cost


def _near(centers, radii, center, radius):
    """The parts near a new expansion's ball (MARGIN wider than the cell's): within r / THETA."""
    return np.linalg.norm(centers - center, axis=1) - radii < radius * (1.0 + MARGIN) / THETA


def _table(cache):
    """The cached balls as arrays: centres (E, 3), radii (E,), near parts (E,), levels (E,)."""
    return (np.array([e.center for e in cache], float).reshape(-1, 3),
            np.array([e.radius for e in cache], float),
            np.array([e.near_count for e in cache], np.int64),
            np.array([e.level for e in cache], np.int64))


def _best(table, center, radius, top_level=None):
    """The index of the cached expansion with the fewest near parts (the newest of those) whose
    ball holds the ball (center, radius), of level top_level at most when given; or None."""
    hit = _holding(*table, np.asarray(center, float), float(radius),
                   -1 if top_level is None else int(top_level))
    return None if hit < 0 else int(hit)


@njit(cache=True)
def _norm(a0, a1, a2):
    """sqrt((a0^2 + a1^2) + a2^2): numpy's order in np.linalg.norm(axis=1), bit for bit."""
    return np.sqrt((a0 * a0 + a1 * a1) + a2 * a2)


@njit(cache=True)
def _holding(t_centers, t_radii, t_counts, t_levels, center, radius, top_level):
    """_best's search: -1 when no cached ball holds the ball (top_level -1: any level)."""
    hit = -1
    for e in range(t_radii.shape[0]):
        if top_level >= 0 and t_levels[e] > top_level:
            continue
        gap = _norm(t_centers[e, 0] - center[0], t_centers[e, 1] - center[1],
                    t_centers[e, 2] - center[2])
        if t_radii[e] - gap >= radius and (hit < 0 or t_counts[e] < t_counts[hit]):
            hit = e
    return hit


@njit(cache=True)
def _ball_of(points, order, start, stop):
    """The centre of the points' box and the radius about it holding them all."""
    lower, upper = np.full(3, np.inf), np.full(3, -np.inf)
    for i in range(start, stop):
        for a in range(3):
            lower[a] = min(lower[a], points[order[i], a])
            upper[a] = max(upper[a], points[order[i], a])
    center = 0.5 * (lower + upper)
    reach = 0.0
    for i in range(start, stop):
        p = points[order[i]]
        reach = max(reach, ((p[0] - center[0]) ** 2 + (p[1] - center[1]) ** 2)
                    + (p[2] - center[2]) ** 2)
    return center, np.sqrt(reach), upper - lower


@njit(cache=True)
def _cell_choice(n, center, radius, centers, radii, t_centers, t_radii, t_counts, t_levels,
                 samples):
    """The cheapest way to sum one cell: (cost, DIRECT | CACHED | NEW, cached index)."""
    K = centers.shape[0]
    best, kind, chosen = float(n * K), DIRECT, -1
    if radius > 0.0:  # else one point, many times: nothing to expand about
        hit = _holding(t_centers, t_radii, t_counts, t_levels, center, radius, -1)
        if hit >= 0:
            cost = n * (t_counts[hit] + EXPANSION_COST)
            if cost < best:
                best, kind, chosen = cost, CACHED, hit
        fit_radius = radius * (1.0 + MARGIN)
        n_near = 0
        for k in range(K):
            gap = _norm(centers[k, 0] - center[0], centers[k, 1] - center[1],
                        centers[k, 2] - center[2])
            if gap - radii[k] < fit_radius / THETA:
                n_near += 1
        parent = _holding(t_centers, t_radii, t_counts, t_levels, center, fit_radius, 0)
        if parent < 0:
            fit = samples * (K - n_near) / REUSE
        else:
            fit = samples * (max(t_counts[parent] - n_near, 0) + EXPANSION_COST) / REUSE
        cost = fit + n * (n_near + EXPANSION_COST)
        if cost < best:
            best, kind, chosen = cost, NEW, -1
    return best, kind, chosen


@njit(cache=True)
def _plan(points, centers, radii, t_centers, t_radii, t_counts, t_levels, samples):
    """plan_cells' tree: each node's best choice top-down (halving where allowed), then the
    cheaper of a node and its halves bottom-up. Returns the points' order, the leaves' ranges in
    it, their choices, their balls (centre, radius) and the plan's cost."""
    N = points.shape[0]
    order = np.arange(N)
    cap = 2 * (N // MIN_CELL_POINTS + 1) + 1
    start, stop = np.empty(cap, np.int64), np.empty(cap, np.int64)
    kind, hit, child = np.empty(cap, np.int64), np.empty(cap, np.int64), np.full(cap, -1)
    cost, ball = np.empty(cap), np.empty((cap, 4))
    start[0], stop[0], count, node = 0, N, 1, 0
    while node < count:  # breadth first: children are created after their parent
        n = stop[node] - start[node]
        center, radius, sides = _ball_of(points, order, start[node], stop[node])
        ball[node, :3] = center
        ball[node, 3] = radius
        cost[node], kind[node], hit[node] = _cell_choice(
            n, center, radius, centers, radii, t_centers, t_radii, t_counts, t_levels, samples)
        if n >= 2 * MIN_CELL_POINTS and cost[node] > n * (1.0 + EXPANSION_COST):
            axis = np.argmax(sides)
            segment = order[start[node]:stop[node]].copy()
            order[start[node]:stop[node]] = segment[np.argsort(points[segment, axis],
                                                               kind="mergesort")]
            middle = start[node] + n // 2
            child[node] = count
            start[count], stop[count] = start[node], middle
            start[count + 1], stop[count + 1] = middle, stop[node]
            count += 2
        node += 1
    total, split = cost.copy(), np.zeros(cap, np.bool_)
    for node in range(count - 1, -1, -1):  # children before parents
        if child[node] >= 0:
            halves = total[child[node]] + total[child[node] + 1]
            if halves < cost[node]:
                total[node], split[node] = halves, True
    leaves, stack = [], [0]
    while stack:  # depth first, left before right: the cells in the points' order
        node = stack.pop()
        if split[node]:
            stack.append(child[node] + 1)
            stack.append(child[node])
        else:
            leaves.append(node)
    chosen = np.array(leaves)
    return order, start[chosen], stop[chosen], kind[chosen], hit[chosen], ball[chosen], total[0]


@njit(cache=True)
def _expansion_at(m, points, center, radius, degree, coef, want_g, H, G, cr, ci, row):
    Gm = G[m] if want_g else G[0]
    add_expansion((points[m, 0] - center[0]) / radius, (points[m, 1] - center[1]) / radius,
                  (points[m, 2] - center[2]) / radius, True, 0, degree, coef, want_g, H[m], Gm,
                  cr, ci, row)


@njit(cache=True, nogil=True)  # nogil: cells share out over threads
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


def _far_field(parts, points, through=None):
    """(Q, CHANNELS): H and dH/dx of `parts` summed one by one at points, plus the expansion
    `through` (whose ball holds the points) when given."""
    H, G = _direct(parts, points, True)
    if through is not None:
        _expansion_serial(points, through.center, through.radius, through.degree,
                          through.coefficients, True, H, G)
    return channels(H, G)


def local_expansion(far_parts, center, radius, moments_norm, distances, through=None):
    """The far parts' local expansion about a cell, or None when no degree meets the tolerance.

    With `through` (a level-0 Expansion whose ball holds this one), the far parts' field at the
    sphere's samples is that expansion plus `far_parts`, which are then only the far parts it
    leaves out. Its error is harmonic in its ball, so the new fit is checked against the same
    sums and the check's budget is what the tolerance leaves after `through`'s error bound: the
    bound of the result holds for the exact field of every far part.

    Parameters
    ----------
    far_parts : physics.field.families.Family
        Summed part by part (its `add_H_direct`).
    center : numpy.ndarray, shape (3,)
        m.
    radius : float
        The cell's radius r, m.
    moments_norm : numpy.ndarray, shape (F,)
        |m_k| of every far part (with `through`, those it covers too), A m^2.
    distances : numpy.ndarray, shape (F,)
        Their centres' distances from the cell's centre, m.
    through : Expansion or None
        The far parts outside `far_parts`, as an expansion valid on the sphere.

    Returns
    -------
    tuple (degree, coefficients (CHANNELS, (TOP_DEGREE + 1)^2), error bound (CHANNELS,) in A/m
    and A/m^2) or None

    References
    ----------
    Greengard & Rokhlin, J. Comput. Phys. 73, 325 (1987) (the local expansion).
    """
    fit = sphere_fit()
    values = _far_field(far_parts, center + radius * fit.directions, through)
    wanted = _far_field(far_parts, center + radius * fit.check, through)
    reach = distances + radius
    scale_H = float(np.sum(moments_norm / (4.0 * math.pi * reach**3)))
    scale_G = float(np.sum(moments_norm / (4.0 * math.pi * reach**4)))
    scales = np.array([scale_H] * 3 + [scale_G] * 5)
    inherited = np.zeros(CHANNELS)
    if through is not None:
        inherited = through.error
        budget = TOLERANCE * scales - inherited
        if not np.all(budget > 0.0):
            return None
        scales = budget / TOLERANCE
    degree, coefficients, error = fit.first_within(values, wanted, scales, TOLERANCE)
    return None if degree == 0 else (degree, coefficients, error * scales + inherited)


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
    work = []
    for cell in cells:  # the new expansions first, in order (each may serve the next)
        expansion = None
        if cell.expand:
            expansion = cell.use if cell.use is not None else _new_expansion(family, cell)
        parts = family if expansion is None else expansion.near_parts
        work.append((cell, expansion, parts))
    # Large cells run numba's threads over their points, one after the other; the small ones
    # (serial kernels, which release the GIL) are shared out over as many Python threads. The
    # cells' points are disjoint and each is summed alone, so the numbers do not depend on it.
    large = [w for w in work if len(w[0].index) * len(w[2].centers) >= PARALLEL_MIN_WORK]
    small = [w for w in work if len(w[0].index) * len(w[2].centers) < PARALLEL_MIN_WORK]

    def run(item, parallel=False):
        cell, expansion, parts = item
        pts = np.ascontiguousarray(points[cell.index])
        h = np.zeros((len(pts), 3))
        g = np.zeros((len(pts), 3, 3)) if gradient else np.zeros((1, 3, 3))
        if len(pts) and len(parts.centers):
            parts.kernel(pts, parts, gradient, h, g, parallel)
        if expansion is not None:
            kernel = _expansion_parallel if parallel and len(pts) >= PARALLEL_MIN_POINTS \
                else _expansion_serial
            kernel(pts, expansion.center, expansion.radius, expansion.degree,
                   expansion.coefficients, gradient, h, g)
        H[cell.index] += h
        if gradient:
            G[cell.index] += g

    for item in large:
        run(item, parallel=True)
    threads = numba.get_num_threads()
    if threads > 1 and len(small) > 1:
        with ThreadPoolExecutor(threads, thread_name_prefix="cells") as pool:  # joined here: no
            list(pool.map(run, small))  # thread outlives the call (viewers.cli's quick exit)
    else:
        for item in small:
            run(item)


def _new_expansion(family, cell):
    """An expansion fitted on a ball MARGIN wider than the cell's (and cached): through the
    cached level-0 expansion with the fewest near parts whose ball holds it (level 1), else from
    every far part (level 0); None when no degree meets the tolerance.

    Its error was checked on its own sphere, so it holds anywhere inside its ball (the maximum
    principle), wherever a later cell lies in it.
    """
    cache = family.expansions
    radius = cell.radius * (1.0 + MARGIN)
    distances = np.linalg.norm(family.centers - cell.center, axis=1)
    far = distances - family.radii >= radius / THETA
    moments, reach = np.linalg.norm(family.moments[far], axis=1), distances[far]
    parent = _best(_table(cache), cell.center, radius, top_level=0)
    fitted, level = None, 1
    if parent is not None:  # its near parts hold this cell's (its ball holds this one)
        through = cache[parent]
        fitted = local_expansion(_parts(family, far & through.near), cell.center, radius,
                                 moments, reach, through)
    if fitted is None:
        fitted, level = local_expansion(_parts(family, far), cell.center, radius, moments,
                                        reach), 0
    if fitted is None:
        return None
    expansion = Expansion(cell.center, radius, ~far, _parts(family, ~far), *fitted, level=level,
                          near_count=int(np.count_nonzero(~far)))
    cache.insert(0, expansion)
    del cache[CACHE_SIZE:]
    return expansion
