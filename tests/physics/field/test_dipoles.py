"""Dipole sets from solids: exact total moment, field against closed forms, convergence."""
import importlib.util

import numpy as np
import pytest
from scipy import integrate

from trapscape.physics.field.dipole_sum import dipole_H
from trapscape.physics.field.dipoles import ERROR_AT_CELLS, cell_size_for, cells_for_accuracy, discretise
from trapscape.physics.field.sphere import sphere_H

R = 0.005
M = np.array([3e5, -2e5, 1e6])  # A/m, a slanted magnetisation so no component is special
SPHERE_VOLUME = 4.0 / 3.0 * np.pi * R**3


def sphere_inside(p):
    return np.einsum("ij,ij->i", p, p) < R * R


def sphere_sdf(p):
    return np.linalg.norm(p, axis=1) - R


def directions(n, seed=3):
    d = np.random.default_rng(seed).normal(size=(n, 3))
    return d / np.linalg.norm(d, axis=1, keepdims=True)


def sphere_error(positions, moments, points):
    # outside a uniformly magnetised sphere H is that of the point dipole M V at its centre
    # (Jackson, Classical Electrodynamics 3rd ed., section 5.10)
    exact = sphere_H(points, 2 * R, M)
    approx = dipole_H(points, positions, moments, method="direct")
    return np.linalg.norm(approx - exact, axis=1) / np.linalg.norm(exact, axis=1)


def discretised_sphere(cells_per_radius, offset=None, **kwargs):
    h = R / cells_per_radius
    grow = np.zeros((2, 3)) if offset is None else offset * h  # moves the lattice against the body
    return discretise(sphere_inside, -R - grow[0], R + grow[1], h, M, SPHERE_VOLUME,
                      sdf=kwargs.pop("sdf", sphere_sdf), **kwargs), h


def test_total_moment_is_exactly_M_V():
    (positions, moments, weights), _ = discretised_sphere(5)
    np.testing.assert_allclose(weights.sum(), SPHERE_VOLUME, rtol=1e-13)
    np.testing.assert_allclose(moments.sum(axis=0), M * SPHERE_VOLUME, rtol=1e-13)
    # a cube that fills its bounding box: every cell whole, 6^3 of them
    a = 0.004
    cube = discretise(lambda p: np.all(np.abs(p) < a / 2, axis=1), [-a / 2] * 3, [a / 2] * 3,
                      a / 6, M, a**3, sdf=lambda p: np.abs(p).max(axis=1) - a / 2)
    assert len(cube[0]) == 216
    np.testing.assert_allclose(cube[1].sum(axis=0), M * a**3, rtol=1e-13)
    np.testing.assert_allclose(cube[2], a**3 / 216, rtol=1e-13)


def test_without_sdf_the_moment_is_still_exact_and_the_field_close():
    (positions, moments, _), h = discretised_sphere(6, sdf=None)
    np.testing.assert_allclose(moments.sum(axis=0), M * SPHERE_VOLUME, rtol=1e-13)
    # 0/1 sub-sample counting (no sdf) is about 3 times worse than with one (measured here)
    assert sphere_error(positions, moments, directions(200) * (R + 3 * h)).max() < 1e-2


@pytest.mark.parametrize("cells_per_radius", [6, 12])
def test_sphere_field_error_against_distance_in_cells(cells_per_radius):
    """Worst relative error over 200 directions, 1 to 6 cells from the surface. Measured on
    2026-12-01 (4^3 sub-samples with an sdf, max over R/h = 4..24 and three lattice offsets):
    cells   1      1.5    2      3      4      6      8
    error   3e-2   1.1e-2 6.2e-3 2.3e-3 1.1e-3 5e-4   3.6e-4
    (issue 3 expected about 1e-1 at one cell, 3e-3 at two to three, 5e-4 at three to four)."""
    (positions, moments, _), h = discretised_sphere(cells_per_radius, offset=np.full((2, 3), 0.37))
    for cells, bound in ERROR_AT_CELLS[:6]:
        error = sphere_error(positions, moments, directions(200) * (R + cells * h)).max()
        assert error <= bound, (cells, error)
    # the error shrinks with the distance in cells, not only stays under the bounds
    errors = [sphere_error(positions, moments, directions(200) * (R + c * h)).max() for c in (1, 2, 4)]
    assert errors[0] > 2 * errors[1] > 4 * errors[2]


def test_centroids_of_cut_cells_beat_cell_centres():
    (p1, m1, _), h = discretised_sphere(8)
    (p2, m2, _), _ = discretised_sphere(8, boundary_centroids=False)
    points = directions(200) * (R + 1.5 * h)
    assert sphere_error(p1, m1, points).max() < 0.5 * sphere_error(p2, m2, points).max()


def test_convergence_with_cell_size_at_fixed_points():
    """RMS error at 100 points 0.5 R from the surface, mean over 3 lattice offsets, R/h = 6..16.

    Expected rate (derived here): the interior midpoint rule is O(h^4), since the dipole kernel is
    harmonic in the source point and the h^2 term of the midpoint rule on a cube is proportional
    to its Laplacian; one dipole at the centroid of each cut cell leaves its second moment out,
    O(h^3) over the ~1/h^2 cut cells; and the sub-sampled weights (a linear ramp per sub-cell,
    unbiased but with a first-moment error of order (h/s)^2 per unit area) give O(h^2) at a fixed
    number s of sub-samples, which dominates as h -> 0. Observed: local rates 2.9, 2.6, 2.3, 2.1,
    2.1, 2.1 from R/h = 4 to 32 (2026-12-01), so the fitted slope over 6..16 is about 2.4: between
    the O(h^3) start and the O(h^2) limit. With 16^3 sub-samples the rate is about 3 (h^3 term).
    """
    points = directions(100) * 1.5 * R
    offsets = np.random.default_rng(7).uniform(0, 1, (3, 2, 3))
    sizes, errors = [], []
    for n in (6, 8, 12, 16):
        rms = []
        for offset in offsets:
            (positions, moments, _), h = discretised_sphere(n, offset=offset)
            rms.append(np.sqrt(np.mean(sphere_error(positions, moments, points) ** 2)))
        sizes.append(h)
        errors.append(np.mean(rms))
    slope = np.polyfit(np.log(sizes), np.log(errors), 1)[0]
    assert 1.8 <= slope <= 3.0, slope


def test_cell_size_rule_delivers_its_accuracy_on_a_sphere():
    D = 2 * R
    for accuracy in (1e-2, 1e-3):
        h = cell_size_for(accuracy, D)
        np.testing.assert_allclose(h, 0.1 * D / cells_for_accuracy(accuracy))
        positions, moments, _ = discretise(sphere_inside, [-R] * 3, [R] * 3, h, M, SPHERE_VOLUME,
                                           sdf=sphere_sdf)
        # issue 3: the accuracy must hold at 10% of the smallest dimension from the surface
        assert sphere_error(positions, moments, directions(200) * (R + 0.1 * D)).max() <= accuracy
    assert cell_size_for(1e-3, D) < cell_size_for(1e-2, D)


def radial_ring_axial_Hz(z, outer, inner, height, Ms):
    """H_z on the axis of a ring magnetised radially outward with |M| = Ms (derived here):
    phi(z) = (1/4 pi) int M.(r - r')/|r - r'|^3 dV' (Jackson 5.100) on the axis, integrated over
    z' and rho' in closed form: H_z = (Ms/2) [F(z + t/2) - F(z - t/2)],
    F(u) = [asinh(rho/|u|) - rho / sqrt(rho^2 + u^2)] from rho = inner to outer."""
    def F(u):
        term = lambda rho: np.arcsinh(rho / abs(u)) - rho / np.hypot(rho, u)
        return term(outer) - term(inner)
    return 0.5 * Ms * (F(z + height / 2) - F(z - height / 2))


def test_radially_magnetised_ring():
    outer, inner, height = 0.010, 0.006, 0.003
    Ms = 1e6
    volume = np.pi * (outer**2 - inner**2) * height

    def sdf(p):
        rho = np.hypot(p[:, 0], p[:, 1])
        wall = np.maximum(rho - outer, inner - rho)
        return np.maximum(wall, np.abs(p[:, 2]) - height / 2)

    def radial(p):
        d = p.copy()
        d[:, 2] = 0.0
        return Ms * d / np.linalg.norm(d, axis=1, keepdims=True)

    lower = np.array([-outer, -outer, -height / 2])
    positions, moments, weights = discretise(lambda p: sdf(p) < 0, lower, -lower, 0.0004, radial,
                                             volume, sdf=sdf)
    # radial directions cancel over the ring: total moment zero (derived here, by symmetry)
    assert np.linalg.norm(moments.sum(axis=0)) < 1e-12 * np.linalg.norm(moments, axis=1).sum()
    z = np.array([-0.012, -0.006, -0.003, 0.0, 0.0025, 0.006, 0.012])
    axis = np.stack([np.zeros_like(z), np.zeros_like(z), z], axis=1)
    H = dipole_H(axis, positions, moments, method="direct")
    scale = np.abs(H[:, 2]).max()
    # on the axis: no transverse field (axial symmetry) and none at the mid-plane (mirror z -> -z);
    # H_z itself does not vanish off the mid-plane (derived here, see radial_ring_axial_Hz)
    assert np.abs(H[:, :2]).max() < 1e-9 * scale
    assert abs(H[3, 2]) < 1e-9 * scale
    exact = np.array([radial_ring_axial_Hz(v, outer, inner, height, Ms) for v in z])
    # the closed form against a plain quadrature of H_z = -d phi/dz before the z', rho integrals
    z0 = z[5]
    quad = integrate.dblquad(lambda zp, rho: -1.5 * Ms * rho**2 * (z0 - zp)
                             / (rho**2 + (z0 - zp) ** 2) ** 2.5,
                             inner, outer, -height / 2, height / 2, epsabs=0, epsrel=1e-11)[0]
    np.testing.assert_allclose(exact[5], quad, rtol=1e-8)
    # dipoles 1.5 to 10 cells from the inner wall: the error is that of a few cells (ERROR_AT_CELLS)
    np.testing.assert_allclose(H[:, 2], exact, rtol=0, atol=1e-2 * scale)


@pytest.mark.skipif(importlib.util.find_spec("trapscape.physics.field.cuboid") is None,
                    reason="physics/cuboid.py not written yet")
def test_cube_field_against_the_exact_cuboid():
    from trapscape.physics.field.cuboid import cuboid_H

    a = 0.004
    size = np.array([a, a, a])
    h = a / 8
    positions, moments, _ = discretise(lambda p: np.all(np.abs(p) < a / 2, axis=1), -size / 2,
                                       size / 2, h, M, a**3,
                                       sdf=lambda p: np.abs(p).max(axis=1) - a / 2)
    rng = np.random.default_rng(11)
    for cells, bound in ERROR_AT_CELLS[1:6]:
        # off a face, away from its edges: lateral offsets within a/4 of the face centre
        points = rng.uniform(-a / 4, a / 4, (100, 3))
        points[np.arange(100), rng.integers(0, 3, 100)] = rng.choice([-1.0, 1.0], 100) * (a / 2 + cells * h)
        # and anywhere on the surface, edges included: a random surface point moved out along its normal
        q = rng.normal(size=(100, 3))
        q *= (a / 2) / np.abs(q).max(axis=1, keepdims=True)
        normal = np.sign(q) * (np.abs(q) >= a / 2 * (1 - 1e-3))
        q[normal != 0] = np.sign(q[normal != 0]) * a / 2
        points = np.concatenate([points, q + cells * h * normal / np.linalg.norm(normal, axis=1,
                                                                                   keepdims=True)])
        exact = cuboid_H(points, size, M)
        approx = dipole_H(points, positions, moments, method="direct")
        error = np.linalg.norm(approx - exact, axis=1) / np.linalg.norm(exact, axis=1)
        # the exact cuboid field: Akoun & Yonnet 1984 / Engel-Herbert & Hesjedal 2005 (physics/cuboid.py)
        assert error.max() <= bound, (cells, error.max())


def test_bad_arguments():
    with pytest.raises(ValueError, match="no cell"):
        discretise(lambda p: np.zeros(len(p), bool), [-1] * 3, [1] * 3, 0.5, M, 1.0)
    with pytest.raises(ValueError, match="cell size of at least"):
        discretise(sphere_inside, [-R] * 3, [R] * 3, R / 1000, M, SPHERE_VOLUME)
    with pytest.raises(ValueError, match="callable returned shape"):
        discretise(sphere_inside, [-R] * 3, [R] * 3, R / 3, lambda p: M, SPHERE_VOLUME)
    with pytest.raises(ValueError, match="upper > lower"):
        discretise(sphere_inside, [R] * 3, [-R] * 3, R / 3, M, SPHERE_VOLUME)
