"""The exact polyhedron field (physics.field.polyhedron) against the cuboid form, quadrature, identities."""
import numpy as np
import pytest
import trimesh

from trapscape.physics.field.cuboid import cuboid_H
from trapscape.physics.field.polyhedron import polyhedron_H, polyhedron_H_and_gradient, polyhedron_H_gradient
from trapscape.scene.shapes.meshops import mesh_volume, winding_number

M = np.array([2.0e5, -5.0e5, 8.0e5])  # A/m, a general direction
RNG = np.random.default_rng(7)

# an irregular tetrahedron, counter-clockwise seen from outside (m)
TETRA_V = np.array([[0.0, 0.0, 0.0], [0.012, 0.001, -0.002], [0.003, 0.011, 0.001], [0.002, 0.003, 0.009]])
TETRA_F = np.array([[0, 2, 1], [0, 1, 3], [0, 3, 2], [1, 2, 3]])


def irregular_octahedron():
    v = np.array([[0.011, 0.001, 0.0], [-0.009, 0.0, 0.001], [0.001, 0.013, -0.001],
                  [0.0, -0.008, 0.0], [0.002, 0.001, 0.010], [-0.001, 0.0, -0.012]])
    hull = trimesh.convex.convex_hull(v)  # outward-oriented faces
    return np.asarray(hull.vertices), np.asarray(hull.faces)


def l_prism():
    """An L-shaped prism (non-convex): [0,2]x[0,1] plus [0,1]x[1,2] (cm), z in [-0.25, 0.25] cm."""
    s = 0.01
    outline = s * np.array([[0, 0], [2, 0], [2, 1], [1, 1], [1, 2], [0, 2]], dtype=float)
    fan = [(3, 4, 5), (3, 5, 0), (3, 0, 1), (3, 1, 2)]  # from the reflex corner, counter-clockwise
    n = len(outline)
    z = 0.25 * s
    V = np.concatenate([np.c_[outline, np.full(n, -z)], np.c_[outline, np.full(n, z)]])
    F = [(a + n, b + n, c + n) for a, b, c in fan] + [(a, c, b) for a, b, c in fan]
    for i in range(n):
        j = (i + 1) % n
        F += [(i, j, j + n), (i, j + n, i + n)]
    boxes = [(np.array([s, 0.5 * s, 0.0]), np.array([2 * s, s, 2 * z])),
             (np.array([0.5 * s, 1.5 * s, 0.0]), np.array([s, s, 2 * z]))]
    return V, np.array(F), boxes


def gauss_legendre(n, panels):
    x, w = np.polynomial.legendre.leggauss(n)
    edges = np.linspace(0.0, 1.0, panels + 1)
    nodes = np.concatenate([0.5 * (b - a) * x + 0.5 * (a + b) for a, b in zip(edges[:-1], edges[1:])])
    weights = np.concatenate([0.5 * (b - a) * w for a, b in zip(edges[:-1], edges[1:])])
    return nodes, weights


def quadrature_H(p, V, F, magnetization, order=20, panels=4):
    """H = (1/4 pi) sum_faces sigma integral (p - r') / |p - r'|^3 dS' with sigma = M . n
    (Jackson 5.9), each triangle mapped from the unit square, r' = a + u (b - a) + u v (c - b),
    dS = 2 A u du dv (Duffy's map), with composite Gauss-Legendre in u and v."""
    x, w = gauss_legendre(order, panels)
    U, W = np.meshgrid(x, x, indexing="ij")
    weights = np.outer(w, w) * U
    H = np.zeros(3)
    for a, b, c in V[F]:
        cross = np.cross(b - a, c - a)
        sigma = magnetization @ cross / np.linalg.norm(cross)
        r = a + U[..., None] * (b - a) + (U * W)[..., None] * (c - b)
        d = p - r
        kernel = d / np.linalg.norm(d, axis=-1, keepdims=True) ** 3
        H += sigma * np.linalg.norm(cross) * np.einsum("ij,ijk->k", weights, kernel) / (4 * np.pi)
    return H


def far_points(V, count, factor=1.6):
    centre = V.mean(axis=0)
    radius = np.linalg.norm(V - centre, axis=1).max()
    d = RNG.normal(size=(count, 3))
    return centre + factor * radius * d / np.linalg.norm(d, axis=1, keepdims=True)


def test_box_mesh_agrees_with_the_cuboid_form():
    # two independent exact forms: 12 charged triangles (Guptasarma & Singh 1999) against the
    # 8-corner cuboid sums (Akoun & Yonnet 1984)
    size = np.array([0.010, 0.020, 0.005])
    box = trimesh.creation.box(extents=size)
    points = RNG.uniform(-0.015, 0.015, size=(300, 3))
    H_mesh = polyhedron_H(points, box.vertices, box.faces, M)
    H_box = cuboid_H(points, size, M)
    scale = np.maximum(np.linalg.norm(H_box, axis=1), 1e-2 * np.linalg.norm(M))
    assert np.all(np.linalg.norm(H_mesh - H_box, axis=1) <= 1e-9 * scale)


def test_non_convex_l_prism_equals_the_sum_of_its_two_boxes():
    # superposition: the L is the disjoint union of two boxes, the cuboid form gives each
    # (Akoun & Yonnet 1984); the coplanar faces' shared edges must cancel in the mesh form
    V, F, boxes = l_prism()
    points = RNG.uniform(-0.01, 0.03, size=(300, 3)) * np.array([1, 1, 0.3])
    H_mesh = polyhedron_H(points, V, F, M)
    H_sum = sum(cuboid_H(points - centre, size, M) for centre, size in boxes)
    scale = np.maximum(np.linalg.norm(H_sum, axis=1), 1e-2 * np.linalg.norm(M))
    assert np.all(np.linalg.norm(H_mesh - H_sum, axis=1) <= 1e-9 * scale)


@pytest.mark.parametrize("mesh", ["tetrahedron", "octahedron"])
def test_field_matches_quadrature_of_the_surface_charge(mesh):
    V, F = (TETRA_V, TETRA_F) if mesh == "tetrahedron" else irregular_octahedron()
    centroid = V.mean(axis=0)
    # inside: within a third of the centroid's distance to the nearest face plane
    a, b, c = V[F[:, 0]], V[F[:, 1]], V[F[:, 2]]
    n = np.cross(b - a, c - a)
    inradius = np.min(np.abs(np.einsum("fk,fk->f", n, centroid - a)) / np.linalg.norm(n, axis=1))
    d = RNG.normal(size=(2, 3))
    inner = centroid + inradius / 3 * d / np.linalg.norm(d, axis=1, keepdims=True)
    points = np.concatenate([far_points(V, 6), inner])
    H = polyhedron_H(points, V, F, M)
    for p, h in zip(points, H):
        expected = quadrature_H(p, V, F, M)
        assert np.linalg.norm(h - expected) <= 1e-9 * np.linalg.norm(expected)


def inside_convex(points, V, F):
    a, b, c = V[F[:, 0]], V[F[:, 1]], V[F[:, 2]]
    n = np.cross(b - a, c - a)
    return np.all(np.einsum("fk,nfk->nf", n, points[:, None, :] - a[None]) < 0, axis=1)


def test_winding_number_is_one_inside_and_zero_outside():
    V, F = irregular_octahedron()
    points = RNG.uniform(-0.014, 0.014, size=(2000, 3))
    W = winding_number(points, V, F)
    expected = inside_convex(points, V, F).astype(float)  # half-space test of a convex solid
    np.testing.assert_allclose(W, expected, atol=1e-9)
    Vl, Fl, boxes = l_prism()
    points = RNG.uniform(-0.005, 0.025, size=(2000, 3)) * np.array([1, 1, 0.5])
    in_l = np.zeros(len(points), dtype=bool)
    for centre, size in boxes:
        in_l |= np.all(np.abs(points - centre) < size / 2, axis=1)
    np.testing.assert_allclose(winding_number(points, Vl, Fl), in_l.astype(float), atol=1e-9)


def test_volume_of_the_tetrahedron():
    # V = |det(b - a, c - a, d - a)| / 6 (elementary geometry)
    a, b, c, d = TETRA_V
    assert mesh_volume(TETRA_V, TETRA_F) == pytest.approx(abs(np.linalg.det(np.array([b - a, c - a, d - a]))) / 6,
                                                          rel=1e-13)


def test_far_field_tends_to_the_dipole_of_M_times_V():
    # the dipole m = M V at the centroid (Jackson 5.6); about the centroid the next term is the
    # quadrupole of the charge, a relative (L / r)^2 (derived here)
    V, F = TETRA_V, TETRA_F
    volume = mesh_volume(V, F)
    centroid = V.mean(axis=0)  # a tetrahedron's centroid is its vertex mean
    m = M * volume
    direction = np.array([-0.4, 0.7, 0.59])
    direction /= np.linalg.norm(direction)
    errors = []
    for r in (0.3, 0.6):
        x = r * direction
        dipole = (3 * x * (m @ x) / r**5 - m / r**3) / (4 * np.pi)
        H = polyhedron_H((centroid + x)[None], V, F, M)[0]
        errors.append(np.linalg.norm(H - dipole) / np.linalg.norm(dipole))
    assert errors[0] < 1e-2
    assert 3.0 < errors[0] / errors[1] < 5.0


def test_gradient_matches_central_differences_of_the_field():
    V, F = irregular_octahedron()
    points = np.concatenate([far_points(V, 20, 1.2), V.mean(axis=0) + 0.002 * RNG.normal(size=(5, 3))])
    G = polyhedron_H_gradient(points, V, F, M)
    step = 1e-7
    for j in range(3):
        dp = np.zeros(3)
        dp[j] = step
        fd = (polyhedron_H(points + dp, V, F, M) - polyhedron_H(points - dp, V, F, M)) / (2 * step)
        scale = np.abs(G).max(axis=(1, 2))[:, None]
        assert np.all(np.abs(fd - G[:, :, j]) <= 1e-6 * scale)


def test_gradient_is_symmetric_and_trace_free():
    # curl H = 0 (antisymmetric part) and div H = -div M = 0 (trace), inside and outside a
    # uniformly magnetised body (magnetostatics, Jackson 5.9)
    V, F = irregular_octahedron()
    points = RNG.uniform(-0.02, 0.02, size=(300, 3))
    G = polyhedron_H_gradient(points, V, F, M)
    scale = np.abs(G).max(axis=(1, 2))
    assert np.all(np.abs(np.trace(G, axis1=1, axis2=2)) <= 1e-9 * scale)
    assert np.all(np.abs(G - G.transpose(0, 2, 1)).max(axis=(1, 2)) <= 1e-9 * scale)


def test_combined_call_equals_the_separate_ones():
    points = RNG.uniform(-0.01, 0.02, size=(30, 3))
    H, G = polyhedron_H_and_gradient(points, TETRA_V, TETRA_F, M)
    np.testing.assert_allclose(H, polyhedron_H(points, TETRA_V, TETRA_F, M), rtol=0, atol=0)
    np.testing.assert_allclose(G, polyhedron_H_gradient(points, TETRA_V, TETRA_F, M), rtol=0, atol=0)


@pytest.mark.parametrize("face", range(4))
def test_point_on_a_face_takes_the_outer_side_value(face):
    a, b, c = TETRA_V[TETRA_F[face]]
    n = np.cross(b - a, c - a)
    n /= np.linalg.norm(n)
    p = (a + b + c) / 3
    L = np.ptp(TETRA_V, axis=0).max()
    # points within 1e-12 L count as on the face, so the inside one sits a little deeper
    H_on, H_out, H_in = polyhedron_H(np.array([p, p + 1e-12 * L * n, p - 3e-12 * L * n]), TETRA_V, TETRA_F, M)
    assert np.linalg.norm(H_on - H_out) <= 1e-9 * np.linalg.norm(M)  # DESIGN.md Conventions
    # across a charge sheet H_n jumps by sigma = M . n and H_t is continuous (Jackson 5.9)
    np.testing.assert_allclose(H_out - H_in, (M @ n) * n, atol=1e-9 * np.linalg.norm(M))
    assert abs(winding_number(p[None], TETRA_V, TETRA_F)[0]) < 1e-9  # on the surface: outside


def test_vertices_and_edges_give_finite_values_and_count_as_outside():
    V, F = irregular_octahedron()
    points = [V]
    for f in F:
        a, b, c = V[f]
        points.append(np.array([(a + b) / 2, 0.3 * b + 0.7 * c, 0.9 * c + 0.1 * a]))
    points = np.concatenate(points)
    H, G = polyhedron_H_and_gradient(points, V, F, M)
    assert np.isfinite(H).all() and np.isfinite(G).all()
    assert np.all(np.abs(winding_number(points, V, F)) < 1e-6)
    # a point on an edge is evaluated 1e-9 L outward: the field there is of the size of the
    # edge's logarithm, a few M (DESIGN.md Conventions; the divergence is logarithmic)
    assert np.all(np.linalg.norm(H, axis=1) < 10 * np.linalg.norm(M))


def test_open_or_misoriented_meshes_are_refused():
    with pytest.raises(ValueError, match="not closed"):
        polyhedron_H(np.zeros((1, 3)), TETRA_V, TETRA_F[:3], M)
    flipped = TETRA_F.copy()
    flipped[0] = flipped[0][::-1]
    with pytest.raises(ValueError, match="oriented"):
        polyhedron_H(np.zeros((1, 3)), TETRA_V, flipped, M)


def test_tables_are_remembered_by_identity_only_for_frozen_arrays():
    """A read-only mesh (as a scene holds it) is looked up by identity; a writeable one by its
    bytes, so that changing it in place gives new tables."""
    from trapscape.physics.field.polyhedron import mesh_tables

    vertices = np.array([[0, 0, 0], [1, 0, 0], [0, 1, 0], [0, 0, 1]], float) * 1e-3
    faces = np.array([[0, 2, 1], [0, 1, 3], [0, 3, 2], [1, 2, 3]])
    first = mesh_tables(vertices, faces)
    vertices *= 2.0
    assert mesh_tables(vertices, faces).scale == 2.0 * first.scale
    vertices.flags.writeable = False
    faces.flags.writeable = False
    frozen = mesh_tables(vertices, faces)
    assert mesh_tables(vertices, faces) is frozen
    assert mesh_tables(vertices.copy(), faces.copy()) is frozen  # same bytes
