"""Local expansions about cells of points (physics/field/local_cells.py) against the direct sum
part by part (Source.add_closed_form_H, whose closed forms are tested against their published
sources in test_cuboid.py), and the solid harmonics against scipy's spherical harmonics."""
from __future__ import annotations

import math

import numpy as np
from scipy.integrate import lebedev_rule
from scipy.special import sph_harm_y

from trapscape.physics.field import local_cells
from trapscape.physics.field.families import Family, evaluation_steps
from trapscape.physics.field.solid_harmonics import basis_matrix, channels
from trapscape.physics.field.sources import Source

MM = 1e-3
M_N42 = 1.0e6  # A/m, a round figure of the order of sintered NdFeB (common practice)
# The module's claim (its docstring): within 1e-6 of the local field scale of DESIGN.md.
CLAIM = 1e-6


def checkerboard(count, cube=6.0):
    """count x count cubes, north alternating up and down, top faces at z = 0 (mm)."""
    sources = []
    size = np.full(3, cube * MM)
    for i in range(count):
        for j in range(count):
            sign = 1.0 if (i + j) % 2 == 0 else -1.0
            M = np.array([0.0, 0.0, sign * M_N42])
            center = np.array([(i - (count - 1) / 2) * cube, (j - (count - 1) / 2) * cube,
                               -cube / 2]) * MM
            sources.append(Source(name=f"cube{i}_{j}", part=i * count + j, kind="box",
                                  params=(size,), center=center, matrix=np.eye(3),
                                  magnetization=M, size=float(np.linalg.norm(size)),
                                  moment=M * np.prod(size)))
    return sources


def one_family(sources):
    steps = evaluation_steps(sources)
    assert len(steps) == 1 and isinstance(steps[0], Family)
    return steps[0]


def part_by_part(sources, points):
    """H, G and the sums of |H_k| and |G_k| over the parts (for the local field scale)."""
    H, G = np.zeros_like(points), np.zeros((len(points), 3, 3))
    H_abs, G_abs = np.zeros(len(points)), np.zeros(len(points))
    for source in sources:
        h, g = source.closed_form_H(points, True)
        H += h
        G += g
        H_abs += np.linalg.norm(h, axis=1)
        G_abs += np.linalg.norm(g, axis=(1, 2))
    return H, G, H_abs, G_abs


def probe_balls(centres, radius=1.0 * MM, order=41, step=1e-7):
    """A probe's surface samples at each centre and at its Hessian stencil's six shifts."""
    directions = lebedev_rule(order)[0].T * radius
    shifts = np.vstack([np.zeros(3), np.eye(3) * step, -np.eye(3) * step])
    return np.concatenate([c + s + directions for c in centres for s in shifts])


def test_solid_harmonics_are_scipys_spherical_harmonics():
    # C_lm = sqrt(4 pi / (2l + 1)) Y_lm (Racah), times |s|^l inside and |s|^-(l+1) outside:
    # against scipy.special.sph_harm_y, an independent implementation.
    rng = np.random.default_rng(3)
    u = rng.normal(size=(40, 3))
    u /= np.linalg.norm(u, axis=1)[:, None]
    theta, phi = np.arccos(u[:, 2]), np.arctan2(u[:, 1], u[:, 0])
    for regular, r in ((True, 0.6), (False, 1.7)):
        A = basis_matrix(u * r, 20, regular=regular)
        for l in range(21):
            radial = r**l if regular else r ** -(l + 1)
            for m in range(l + 1):
                Y = math.sqrt(4 * math.pi / (2 * l + 1)) * sph_harm_y(l, m, theta, phi) * radial
                ours = A[:, l * l] if m == 0 else A[:, l * l + 2 * m - 1] + 1j * A[:, l * l + 2 * m]
                assert np.allclose(ours, Y, rtol=1e-11, atol=1e-13 * radial), (l, m, regular)


def test_cells_match_the_direct_sum_within_the_claim():
    sources = checkerboard(16)
    family = one_family(sources)
    assert len(family.centers) >= local_cells.MIN_PARTS
    rng = np.random.default_rng(7)
    cloud = rng.uniform([-12 * MM, -12 * MM, 0.2 * MM], [12 * MM, 12 * MM, 8 * MM], (8000, 3))
    balls = probe_balls(rng.uniform([-9 * MM, -9 * MM, 1.2 * MM], [9 * MM, 9 * MM, 3 * MM],
                                    (4, 3)))
    for points in (cloud, balls):
        points = np.ascontiguousarray(points)
        cells, _ = local_cells.plan_cells(points, family.centers, family.radii)
        assert any(c.expand for c in cells)  # the expansions are what is checked
        H, G = np.zeros_like(points), np.zeros((len(points), 3, 3))
        family.add_H(points, True, H, G)
        H0, G0, H_abs, G_abs = part_by_part(sources, points)
        scale_H = np.maximum(np.linalg.norm(H0, axis=1), 0.01 * H_abs)
        scale_G = np.maximum(np.linalg.norm(G0, axis=(1, 2)), 0.01 * G_abs)
        assert np.max(np.linalg.norm(H - H0, axis=1) / scale_H) <= CLAIM
        assert np.max(np.linalg.norm(G - G0, axis=(1, 2)) / scale_G) <= CLAIM
        H_only = np.zeros_like(points)
        family.add_H(points, False, H_only, None)
        assert np.max(np.linalg.norm(H_only - H0, axis=1) / scale_H) <= CLAIM


def far_field_error(family, center, radius, degree, theta, inside):
    """Largest error of the far parts' local expansion of one degree at points, over |H|."""
    near = (np.linalg.norm(family.centers - center, axis=1) - family.radii
            < radius / theta)
    far = local_cells._parts(family, ~near)
    fit = local_cells.sphere_fit()
    values = channels(*local_cells._direct(far, center + radius * fit.directions, True))
    coef = (fit.projectors[degree] @ values).T
    A = basis_matrix((inside - center) / radius, degree, regular=True)
    H_fit = A @ coef[:3].T
    H_true = local_cells._direct(far, inside, False)[0]
    return np.max(np.linalg.norm(H_fit - H_true, axis=1)) / np.max(np.linalg.norm(H_true, axis=1))


def test_local_expansion_converges_with_degree_and_opening():
    # The local expansion's error falls geometrically (as theta^p: Greengard & Rokhlin 1987) as
    # the degree rises and as the far parts move away (a smaller opening theta).
    family = one_family(checkerboard(12))
    center, radius = np.array([1.0, -2.0, 2.0]) * MM, 3.0 * MM
    rng = np.random.default_rng(11)
    inside = rng.normal(size=(400, 3))
    inside = center + radius * inside / np.linalg.norm(inside, axis=1)[:, None] \
        * rng.uniform(0, 1, (400, 1)) ** (1 / 3)
    by_degree = [far_field_error(family, center, radius, p, 1 / 3, inside) for p in (6, 10, 14, 18)]
    assert all(b < 0.2 * a for a, b in zip(by_degree, by_degree[1:])), by_degree
    by_opening = [far_field_error(family, center, radius, 10, t, inside) for t in (0.5, 1 / 3, 0.25)]
    assert all(b < a for a, b in zip(by_opening, by_opening[1:])), by_opening


def test_small_families_and_calls_are_summed_part_by_part():
    # Below MIN_PARTS parts or MIN_POINTS points nothing changes (every sample's board): the
    # numbers are the direct kernel's to the last bit.
    rng = np.random.default_rng(5)
    for count, n in ((4, 5000), (10, 500)):
        family = one_family(checkerboard(count))
        points = rng.uniform(-10 * MM, 10 * MM, (n, 3)) + [0, 0, 12 * MM]
        H1, G1 = np.zeros((n, 3)), np.zeros((n, 3, 3))
        H2, G2 = np.zeros((n, 3)), np.zeros((n, 3, 3))
        family.add_H(points, True, H1, G1)
        family.add_H_direct(points, True, H2, G2)
        assert np.array_equal(H1, H2) and np.array_equal(G1, G2)


def test_a_call_of_one_point_many_times():
    family = one_family(checkerboard(12))
    points = np.zeros((3000, 3)) + [1 * MM, 2 * MM, 5 * MM]
    H1, G1 = np.zeros((3000, 3)), np.zeros((3000, 3, 3))
    H2, G2 = np.zeros((3000, 3)), np.zeros((3000, 3, 3))
    family.add_H(points, True, H1, G1)
    family.add_H_direct(points, True, H2, G2)
    assert np.array_equal(H1, H2) and np.array_equal(G1, G2)


def test_later_calls_reuse_an_expansion_only_inside_its_ball():
    # Newton's steps and the Hessian's stencil call the field at points close to the last call's:
    # their cells fall inside the last expansion's ball (MARGIN wider than its cell) and reuse it,
    # within the same claim; a cell reaching out of every cached ball gets its own expansion.
    sources = checkerboard(16)
    family = one_family(sources)
    centre = np.array([-4.0, 5.0, 1.5]) * MM
    radius = 1.0 * MM
    shift = 0.5 * local_cells.MARGIN * radius
    counts = []
    for offset in (0.0, shift, -shift, 1.2 * local_cells.MARGIN * radius):
        points = np.ascontiguousarray(probe_balls([centre + [offset, 0.0, 0.0]], radius=radius))
        H, G = np.zeros_like(points), np.zeros((len(points), 3, 3))
        family.add_H(points, True, H, G)
        counts.append(len(family.expansions))
        H0, G0, H_abs, G_abs = part_by_part(sources, points)
        scale_H = np.maximum(np.linalg.norm(H0, axis=1), 0.01 * H_abs)
        scale_G = np.maximum(np.linalg.norm(G0, axis=(1, 2)), 0.01 * G_abs)
        assert np.max(np.linalg.norm(H - H0, axis=1) / scale_H) <= CLAIM
        assert np.max(np.linalg.norm(G - G0, axis=(1, 2)) / scale_G) <= CLAIM
    assert counts[0] >= 1 and counts[1] == counts[2] == counts[0] and counts[3] > counts[0]


def test_expansions_fitted_through_a_level_zero_one_keep_the_claim():
    # A probe-sized cell inside a cached expansion's ball gets its own expansion (fewer near
    # parts) fitted through the cached one: its samples are that expansion plus the parts near
    # it but far here. Checked against the direct sum part by part at the probes' samples, and
    # at random points in each such expansion's ball against the exact field of its far parts,
    # both within the module's claim relative to the local field scale.
    sources = checkerboard(16)
    family = one_family(sources)
    rng = np.random.default_rng(3)
    cloud = rng.uniform([-12 * MM, -12 * MM, 0.2 * MM], [12 * MM, 12 * MM, 8 * MM], (8000, 3))
    family.add_H(np.ascontiguousarray(cloud), True, np.zeros((8000, 3)), np.zeros((8000, 3, 3)))
    assert family.expansions and all(e.level == 0 for e in family.expansions)
    points = np.ascontiguousarray(probe_balls(
        rng.uniform([-9 * MM, -9 * MM, 1.2 * MM], [9 * MM, 9 * MM, 3 * MM], (3, 3)), order=77))
    H, G = np.zeros_like(points), np.zeros((len(points), 3, 3))
    family.add_H(points, True, H, G)
    through = [e for e in family.expansions if e.level == 1]
    assert through
    H0, G0, H_abs, G_abs = part_by_part(sources, points)
    scale_H = np.maximum(np.linalg.norm(H0, axis=1), 0.01 * H_abs)
    scale_G = np.maximum(np.linalg.norm(G0, axis=(1, 2)), 0.01 * G_abs)
    assert np.max(np.linalg.norm(H - H0, axis=1) / scale_H) <= CLAIM
    assert np.max(np.linalg.norm(G - G0, axis=(1, 2)) / scale_G) <= CLAIM
    for e in through:
        inside = rng.normal(size=(300, 3))
        inside = e.center + e.radius * inside / np.linalg.norm(inside, axis=1)[:, None] \
            * rng.uniform(0, 1, (300, 1)) ** (1 / 3)
        inside = np.ascontiguousarray(inside)
        far_H, far_G = local_cells._direct(local_cells._parts(family, ~e.near), inside, True)
        h, g = np.zeros_like(inside), np.zeros((len(inside), 3, 3))
        local_cells._expansion_serial(inside, e.center, e.radius, e.degree, e.coefficients,
                                      True, h, g)
        H0, G0, H_abs, G_abs = part_by_part(sources, inside)
        scale_H = np.maximum(np.linalg.norm(H0, axis=1), 0.01 * H_abs)
        scale_G = np.maximum(np.linalg.norm(G0, axis=(1, 2)), 0.01 * G_abs)
        assert np.max(np.linalg.norm(h - far_H, axis=1) / scale_H) <= CLAIM
        assert np.max(np.linalg.norm(g - far_G, axis=(1, 2)) / scale_G) <= CLAIM


def planned_by_recursion(points, centers, radii, cache):
    """plan_cells as first written (one Python call per node of the halving): the reference the
    compiled planner must repeat cell for cell, bit for bit."""
    L = local_cells
    samples, K = L._samples_per_cell(), len(centers)

    def best_held(center, radius, top_level=None):
        if not cache:
            return None
        balls = np.array([e.center for e in cache])
        holds = np.array([e.radius for e in cache]) - np.linalg.norm(balls - center, axis=1) >= radius
        if top_level is not None:
            holds &= np.array([e.level for e in cache]) <= top_level
        chosen = np.flatnonzero(holds)
        counts = np.array([e.near_count for e in cache])
        return int(chosen[np.argmin(counts[chosen])]) if len(chosen) else None

    def plan(index):
        pts, n = points[index], len(index)
        lower, upper = pts.min(axis=0), pts.max(axis=0)
        center = 0.5 * (lower + upper)
        radius = float(np.sqrt(np.max(np.sum((pts - center) ** 2, axis=1))))
        best = (n * K, ("direct", center, radius, None))
        if radius > 0.0:
            hit = best_held(center, radius)
            if hit is not None:
                cost = n * (cache[hit].near_count + L.EXPANSION_COST)
                if cost < best[0]:
                    best = (cost, ("cached", center, radius, hit))
            fit_radius = radius * (1.0 + L.MARGIN)
            n_near = int((np.linalg.norm(centers - center, axis=1) - radii < fit_radius / L.THETA).sum())
            parent = best_held(center, fit_radius, top_level=0)
            if parent is None:
                fit = samples * (K - n_near) / L.REUSE
            else:
                fit = samples * (max(cache[parent].near_count - n_near, 0) + L.EXPANSION_COST) / L.REUSE
            cost = fit + n * (n_near + L.EXPANSION_COST)
            if cost < best[0]:
                best = (cost, ("new", center, radius, None))
        if n >= 2 * L.MIN_CELL_POINTS and best[0] > n * (1.0 + L.EXPANSION_COST):
            axis = int(np.argmax(upper - lower))
            order = np.argsort(pts[:, axis], kind="stable")
            left, right = plan(index[order[:n // 2]]), plan(index[order[n // 2:]])
            if left[1] + right[1] < best[0]:
                return left[0] + right[0], left[1] + right[1]
        return [(index, *best[1])], best[0]

    return plan(np.arange(len(points)))


def test_the_compiled_planner_repeats_the_recursive_one_bit_for_bit():
    family = one_family(checkerboard(16))
    rng = np.random.default_rng(5)
    balls = probe_balls(rng.uniform([-9 * MM, -9 * MM, 1.2 * MM], [9 * MM, 9 * MM, 3 * MM], (30, 3)))
    cloud = rng.uniform([-12 * MM, -12 * MM, 0.2 * MM], [12 * MM, 12 * MM, 8 * MM], (6000, 3))
    family.add_H(np.ascontiguousarray(balls[: len(balls) // 2]), True, np.zeros((len(balls) // 2, 3)),
                 np.zeros((len(balls) // 2, 3, 3)))  # fills the family's cache of expansions
    assert family.expansions, "no cached expansion: the cached branch would go untested"
    kinds = set()
    for points, cache in ((balls, family.expansions), (cloud, family.expansions), (balls, []),
                          (cloud[:1], []), (np.repeat(cloud[:1], 600, axis=0), [])):
        points = np.ascontiguousarray(points)
        cells, cost = local_cells.plan_cells(points, family.centers, family.radii, cache)
        expected, expected_cost = planned_by_recursion(points, family.centers, family.radii, cache)
        assert cost == expected_cost and len(cells) == len(expected)
        for cell, (index, kind, center, radius, hit) in zip(cells, expected):
            kinds.add(kind)
            assert np.array_equal(np.sort(cell.index), np.sort(index))
            assert np.array_equal(cell.center, center) and cell.radius == radius
            assert cell.expand == (kind != "direct")
            assert (cell.use is cache[hit]) if kind == "cached" else cell.use is None
    assert kinds == {"direct", "cached", "new"}
