"""The exact cuboid field (physics.field.cuboid) against handbook formulas, quadrature and identities."""
import numpy as np
import pytest

from trapscape.physics.field.cuboid import EDGE_PUSH, cuboid_H, cuboid_H_and_gradient, cuboid_H_gradient

SIZE = np.array([0.010, 0.020, 0.005])  # m
HALF = SIZE / 2
M = np.array([3.0e5, -2.0e5, 7.0e5])  # A/m, a general direction
RNG = np.random.default_rng(20240601)


def gauss_legendre(n, a, b, panels):
    """Composite Gauss-Legendre nodes and weights on [a, b]."""
    x, w = np.polynomial.legendre.leggauss(n)
    edges = np.linspace(a, b, panels + 1)
    nodes = [0.5 * (hi - lo) * x + 0.5 * (hi + lo) for lo, hi in zip(edges[:-1], edges[1:])]
    weights = [0.5 * (hi - lo) * w for lo, hi in zip(edges[:-1], edges[1:])]
    return np.concatenate(nodes), np.concatenate(weights)


def quadrature_H(p, size, magnetization, order=24, panels=8):
    """H = (1/4 pi) sum_faces sigma integral (p - r') / |p - r'|^3 dS', sigma = M . n, by
    tensor Gauss-Legendre on each charged face (textbook magnetostatics: Jackson 5.9)."""
    h = np.asarray(size) / 2
    H = np.zeros(3)
    for axis in range(3):
        o1, o2 = [i for i in range(3) if i != axis]
        x1, w1 = gauss_legendre(order, -h[o1], h[o1], panels)
        x2, w2 = gauss_legendre(order, -h[o2], h[o2], panels)
        A, B = np.meshgrid(x1, x2, indexing="ij")
        weights = np.outer(w1, w2)
        for sign in (-1.0, 1.0):
            q = np.zeros(A.shape + (3,))
            q[..., o1], q[..., o2], q[..., axis] = A, B, sign * h[axis]
            d = p - q
            kernel = d / np.linalg.norm(d, axis=-1, keepdims=True) ** 3
            H += sign * magnetization[axis] * np.einsum("ij,ijk->k", weights, kernel) / (4 * np.pi)
    return H


def distance_to_surface(p, half):
    q = np.abs(p) - half
    outside = np.linalg.norm(np.maximum(q, 0.0), axis=-1)
    return np.where(np.all(q < 0, axis=-1), -q.max(axis=-1), outside)


def test_on_axis_field_matches_handbook_block_formula():
    # B_z on the axis of a block magnetised along z, z measured from its top face:
    # B = (Br/pi) [atan(ab / (2z sqrt(4z^2+a^2+b^2))) - atan(ab / (2(z+c) sqrt(4(z+c)^2+a^2+b^2)))]
    # (E. P. Furlani, Permanent Magnet and Electromechanical Devices, Academic Press 2001);
    # outside the magnet B = mu0 H and Br = mu0 M, so H_z / M = the bracket / pi.
    a, b, c = SIZE
    z = np.array([1e-4, 1e-3, 3e-3, 1e-2, 5e-2])
    points = np.stack([np.zeros_like(z), np.zeros_like(z), c / 2 + z], axis=1)
    Hz = cuboid_H(points, SIZE, [0.0, 0.0, 1.0])[:, 2]

    def term(s):
        return np.arctan(a * b / (2 * s * np.sqrt(4 * s**2 + a**2 + b**2)))

    expected = (term(z) - term(z + c)) / np.pi
    np.testing.assert_allclose(Hz, expected, rtol=1e-13)


def test_off_axis_field_matches_quadrature_of_surface_charge():
    # independent numerical quadrature of the charge-sheet integral (Jackson 5.9), points at
    # least 20 % of the smallest edge away from every face, inside and outside
    points = RNG.uniform(-1.8 * HALF.max(), 1.8 * HALF.max(), size=(400, 3))
    points = points[np.abs(distance_to_surface(points, HALF)) > 0.2 * SIZE.min()][:12]
    assert len(points) == 12
    H = cuboid_H(points, SIZE, M)
    for p, h in zip(points, H):
        expected = quadrature_H(p, SIZE, M)
        assert np.linalg.norm(h - expected) <= 1e-9 * np.linalg.norm(expected)


def test_centre_of_a_cube_has_demagnetising_factor_one_third():
    # N_xx + N_yy + N_zz = 1 and cubic symmetry: H = -M/3 at a cube's centre (from memory;
    # the same as the sphere, Jackson 5.10)
    H = cuboid_H(np.zeros((1, 3)), [0.01, 0.01, 0.01], M)
    np.testing.assert_allclose(H[0], -M / 3, rtol=1e-13, atol=1e-9 * np.abs(M).max())


def test_far_field_tends_to_the_dipole_of_M_times_V():
    # far away the part is a point dipole m = M V (Jackson 5.6); a centro-symmetric body has no
    # quadrupole term, so the relative error falls as (L / r)^2 (derived here)
    m = M * np.prod(SIZE)
    direction = np.array([0.3, -0.5, 0.81])
    direction /= np.linalg.norm(direction)
    errors = []
    for r in (20 * SIZE.max(), 40 * SIZE.max()):
        p = r * direction
        dipole = (3 * p * (m @ p) / r**5 - m / r**3) / (4 * np.pi)
        H = cuboid_H(p[None], SIZE, M)[0]
        errors.append(np.linalg.norm(H - dipole) / np.linalg.norm(dipole))
    assert errors[0] < 1e-2
    assert 3.0 < errors[0] / errors[1] < 5.0


def test_permuting_the_axes_permutes_the_field():
    # the z-diagonal term is formed from the trace identity, the x and y ones directly: a
    # permutation of axes must give the same numbers (symmetry of the problem)
    points = RNG.uniform(-0.015, 0.015, size=(50, 3))
    perm = [2, 0, 1]
    H = cuboid_H(points, SIZE, M)
    H_perm = cuboid_H(points[:, perm], SIZE[perm], M[perm])
    np.testing.assert_allclose(H_perm, H[:, perm], rtol=0, atol=1e-12 * np.abs(M).max())


def test_gradient_matches_central_differences_of_the_field():
    points = RNG.uniform(-0.015, 0.015, size=(60, 3))
    points = points[np.abs(distance_to_surface(points, HALF)) > 0.05 * SIZE.min()]
    G = cuboid_H_gradient(points, SIZE, M)
    step = 1e-6 * SIZE.max()
    for j in range(3):
        dp = np.zeros(3)
        dp[j] = step
        fd = (cuboid_H(points + dp, SIZE, M) - cuboid_H(points - dp, SIZE, M)) / (2 * step)
        scale = np.abs(G).max(axis=(1, 2))[:, None]
        assert np.all(np.abs(fd - G[:, :, j]) <= 1e-6 * scale)


def test_field_is_divergence_and_curl_free_by_finite_differences():
    # outside the magnet div H = 0 and curl H = 0; inside a uniform M also div H = -div M = 0
    # and H = -grad(phi) (magnetostatics, Jackson 5.9); checked on H itself, not on the gradient
    points = RNG.uniform(-0.015, 0.015, size=(60, 3))
    points = points[np.abs(distance_to_surface(points, HALF)) > 0.05 * SIZE.min()]
    step = 1e-6 * SIZE.max()
    J = np.empty((len(points), 3, 3))
    for j in range(3):
        dp = np.zeros(3)
        dp[j] = step
        J[:, :, j] = (cuboid_H(points + dp, SIZE, M) - cuboid_H(points - dp, SIZE, M)) / (2 * step)
    scale = np.abs(J).max(axis=(1, 2))
    assert np.all(np.abs(np.trace(J, axis1=1, axis2=2)) <= 1e-6 * scale)
    assert np.all(np.abs(J - J.transpose(0, 2, 1)).max(axis=(1, 2)) <= 1e-6 * scale)


def test_analytic_gradient_is_trace_free():
    points = RNG.uniform(-0.015, 0.015, size=(200, 3))
    G = cuboid_H_gradient(points, SIZE, M)
    scale = np.abs(G).max(axis=(1, 2))
    assert np.all(np.abs(np.trace(G, axis1=1, axis2=2)) <= 1e-10 * scale)


def test_combined_call_equals_the_separate_ones():
    points = RNG.uniform(-0.015, 0.015, size=(30, 3))
    H, G = cuboid_H_and_gradient(points, SIZE, M)
    np.testing.assert_array_equal(H, cuboid_H(points, SIZE, M))
    np.testing.assert_array_equal(G, cuboid_H_gradient(points, SIZE, M))


def face_points():
    """A point on each of the six faces, away from the edges, with its outward normal."""
    out = []
    for axis in range(3):
        for sign in (-1.0, 1.0):
            p = 0.3 * HALF * np.array([1.0, -1.0, 0.5])
            p[axis] = sign * HALF[axis]
            n = np.zeros(3)
            n[axis] = sign
            out.append((p, n))
    return out


@pytest.mark.parametrize("p, n", face_points())
def test_point_on_a_face_takes_the_outer_side_value(p, n):
    L = SIZE.max()
    # points within 1e-12 L count as on the face, so the inside one sits a little deeper
    H_on, H_out, H_in = cuboid_H(np.array([p, p + 1e-12 * L * n, p - 3e-12 * L * n]), SIZE, M)
    assert np.linalg.norm(H_on - H_out) <= 1e-9 * np.linalg.norm(M)  # DESIGN.md Conventions
    # across a charge sheet H_n jumps by sigma = M . n and H_t is continuous (Jackson 5.9)
    np.testing.assert_allclose(H_out - H_in, (M @ n) * n, atol=1e-9 * np.linalg.norm(M))


def edge_and_corner_points():
    points = []
    for sx in (-1, 1):
        for sy in (-1, 1):
            for sz in (-1, 1):
                s = np.array([sx, sy, sz], dtype=float)
                points.append(s * HALF)  # corner
                for axis in range(3):
                    p = s * HALF
                    p[axis] *= 0.4  # on an edge
                    points.append(p)
                points.append(s * HALF * np.array([1, 1, 3]))  # on an edge's line, outside
                points.append(s * HALF * np.array([1, 2, 0.5]))  # in a face's plane, outside
    return np.array(points)


def test_edges_and_corners_give_finite_values_near_the_pushed_point():
    points = edge_and_corner_points()
    H, G = cuboid_H_and_gradient(points, SIZE, M)
    assert np.isfinite(H).all() and np.isfinite(G).all()
    # a point on an edge or corner is the point pushed outward by 1e-9 L (DESIGN.md Conventions)
    on_edge = np.sum(np.isclose(np.abs(points), HALF, rtol=0, atol=1e-15), axis=1) >= 2
    on_edge &= np.all(np.abs(points) <= HALF * (1 + 1e-15), axis=1)
    outward = np.where(np.isclose(np.abs(points), HALF, rtol=0, atol=1e-15), np.sign(points), 0.0)
    outward /= np.linalg.norm(outward, axis=1, keepdims=True)
    pushed = points + EDGE_PUSH * SIZE.max() * outward
    H_pushed = cuboid_H(pushed[on_edge], SIZE, M)
    assert np.all(np.abs(H[on_edge] - H_pushed) <= 1e-6 * np.linalg.norm(M))


def test_points_on_edge_lines_and_face_planes_outside_are_continuous():
    # outside the box the field is smooth: a point exactly on an edge's line or a face's plane
    # must agree with its neighbours (no branch or log trouble there)
    points = edge_and_corner_points()
    outside = np.any(np.abs(points) > HALF * (1 + 1e-12), axis=1)
    p = points[outside]
    shift = 1e-10 * SIZE.max() * np.array([1.0, 1.0, 1.0])
    H0 = cuboid_H(p, SIZE, M)
    H1 = cuboid_H(p + shift, SIZE, M)
    assert np.all(np.abs(H0 - H1) <= 1e-7 * np.linalg.norm(M))


def test_near_surface_points_at_many_scales_are_finite_and_consistent():
    # approach a face, an edge and a corner from outside and inside: finite throughout, and the
    # divergence (trace of the analytic gradient) stays zero
    base = [np.array([0.2, 0.1, 1.0]) * HALF, np.array([1.0, 1.0, 0.3]) * HALF, HALF.copy()]
    offsets = 10.0 ** -np.arange(3, 16)
    points = []
    for p in base:
        n = np.where(np.isclose(np.abs(p), HALF), np.sign(p), 0.0)
        n /= np.linalg.norm(n)
        for d in offsets:
            points += [p + d * SIZE.max() * n, p - d * SIZE.max() * n]
    H, G = cuboid_H_and_gradient(np.array(points), SIZE, M)
    assert np.isfinite(H).all() and np.isfinite(G).all()
    trace = np.abs(np.trace(G, axis1=1, axis2=2))
    assert np.all(trace <= 1e-8 * np.abs(G).max(axis=(1, 2)))
