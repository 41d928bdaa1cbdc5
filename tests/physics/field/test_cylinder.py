"""Uniformly magnetised cylinder and ring: closed forms against independent references."""
import numpy as np
import pytest
from scipy.integrate import quad
from scipy.special import elliprf, elliprj, ellipe, ellipk

from trapscape.scene.units import MU0
from trapscape.physics.field.cylinder import (
    AXIS_SERIES, RIM_PUSH, cylinder_H, cylinder_H_and_gradient, cylinder_H_gradient, ring_H,
    ring_H_and_gradient, ring_H_gradient,
)
from trapscape.physics.field.ellipint import cel, cel_basis, cel_basis_pair

R, L = 0.010, 0.007              # radius, half-height (m): a 20 x 14 mm cylinder
RI = 0.004                       # inner radius of the ring
M0 = 1.0e6                       # A/m, about N42
DIRECTIONS = [np.array([0.0, 0.0, 1.0]), np.array([1.0, 0.0, 0.0]), np.array([0.0, 1.0, 0.0]),
              np.array([0.3, -0.5, 0.81])]


# ---------------------------------------------------------------- reference quadratures
def _gauss_panels(a, b, panels, order):
    x, w = np.polynomial.legendre.leggauss(order)
    edges = np.linspace(a, b, panels + 1)
    half = 0.5 * np.diff(edges)
    mid = 0.5 * (edges[1:] + edges[:-1])
    return (mid[:, None] + half[:, None] * x).ravel(), (half[:, None] * w).ravel()


def _charge_field(points, sources, charges):
    """H of point charges (A m, i.e. sigma dA): (1/4 pi) sum q (r - r') / |r - r'|^3 (Coulomb)."""
    d = points[:, None, :] - sources[None, :, :]
    r3 = np.einsum("nkj,nkj->nk", d, d) ** 1.5
    return np.einsum("nk,nkj->nj", charges[None, :] / r3, d) / (4.0 * np.pi)


def face_charge_H(points, radius, half_height, Mz, panels=24, order=16, nphi=720):
    """End discs sigma = +-Mz: Gauss-Legendre panels in rho', trapezoid (spectral) in phi'."""
    rr, wr = _gauss_panels(0.0, radius, panels, order)
    phi = 2.0 * np.pi * np.arange(nphi) / nphi
    P, F = np.meshgrid(rr, phi, indexing="ij")
    weight = (wr[:, None] * P * (2.0 * np.pi / nphi)).ravel()
    H = np.zeros_like(points)
    for z_face, sign in ((half_height, 1.0), (-half_height, -1.0)):
        src = np.stack([(P * np.cos(F)).ravel(), (P * np.sin(F)).ravel(),
                        np.full(P.size, z_face)], axis=-1)
        H += _charge_field(points, src, sign * Mz * weight)
    return H


def lateral_charge_H(points, radius, half_height, Mx, My, panels=24, order=16, nphi=720):
    """Lateral wall sigma = M . n = Mx cos phi' + My sin phi': panels in z', trapezoid in phi'."""
    zz, wz = _gauss_panels(-half_height, half_height, panels, order)
    phi = 2.0 * np.pi * np.arange(nphi) / nphi
    Z, F = np.meshgrid(zz, phi, indexing="ij")
    sigma = Mx * np.cos(F) + My * np.sin(F)
    weight = (wz[:, None] * radius * (2.0 * np.pi / nphi) * sigma).ravel()
    src = np.stack([(radius * np.cos(F)).ravel(), (radius * np.sin(F)).ravel(), Z.ravel()], axis=-1)
    return _charge_field(points, src, weight)


def surface_charge_H(points, radius, half_height, M, **kw):
    return (face_charge_H(points, radius, half_height, M[2], **kw)
            + lateral_charge_H(points, radius, half_height, M[0], M[1], **kw))


def _distance_to_surface(points, radius, half_height):
    rho = np.hypot(points[:, 0], points[:, 1])
    az = np.abs(points[:, 2])
    to_wall = np.where(az <= half_height, np.abs(rho - radius),
                       np.hypot(np.maximum(rho - radius, 0.0), az - half_height))
    to_face = np.where(rho <= radius, np.abs(az - half_height),
                       np.hypot(rho - radius, az - half_height))
    return np.minimum(to_wall, to_face)


def _sample_points(rng, radius, half_height, count, clearance):
    """Points inside and around the part (a quarter of them inside), at least `clearance` from
    every surface."""
    box = np.array([1.8 * radius, 1.8 * radius, half_height + 0.8 * radius])
    pts = rng.uniform(-1.0, 1.0, (40 * count, 3)) * box
    pts = pts[_distance_to_surface(pts, radius, half_height) > clearance]
    inside = _inside(pts, radius, half_height)
    n_in = min(count // 4, inside.sum())
    return np.concatenate([pts[inside][:n_in], pts[~inside][:count - n_in]])


def _inside(points, radius, half_height):
    return (np.hypot(points[:, 0], points[:, 1]) < radius) & (np.abs(points[:, 2]) < half_height)


# ---------------------------------------------------------------- elliptic integral
def test_cel_matches_carlson_forms():
    # cel(kc,p,a,b) = a R_F(0,kc^2,1) + (b - p a)/3 R_J(0,kc^2,1,p)  (DLMF 19.25.2 with the
    # decomposition a cos^2 + b sin^2 = a (cos^2 + p sin^2) + (b - p a) sin^2; scipy's Carlson forms)
    rng = np.random.default_rng(11)
    worst = 0.0
    for _ in range(300):
        kc, p = 10 ** rng.uniform(-6, 0.5), 10 ** rng.uniform(-10, 2)
        a, b = rng.normal(size=2)
        rf, rj = elliprf(0.0, kc * kc, 1.0), elliprj(0.0, kc * kc, 1.0, p)
        ref = a * rf + (b - p * a) / 3.0 * rj
        c10, c01 = cel_basis(kc, p)
        pair = cel_basis_pair(kc, p)
        for value in (cel(kc, p, a, b), a * c10 + b * c01, a * pair[2] + b * pair[3]):
            worst = max(worst, abs(value - ref) / (abs(a * rf) + abs((b - p * a) * rj / 3.0)))
    assert worst < 1e-13
    # K and E (Abramowitz & Stegun 17.3; scipy's ellipk/ellipe take m = k^2)
    assert cel(0.6, 1.0, 1.0, 1.0) == pytest.approx(ellipk(1 - 0.36), rel=1e-15)
    assert cel(0.6, 1.0, 1.0, 0.36) == pytest.approx(ellipe(1 - 0.36), rel=1e-15)


# ---------------------------------------------------------------- on the axis
def test_on_axis_field_matches_furlani():
    # Furlani, Permanent Magnet and Electromechanical Devices (Academic Press 2001), on-axis field
    # of an axially magnetised cylinder, z measured outward from the near face, length Lf:
    # Bz = (Br/2) [(z + Lf)/sqrt((z + Lf)^2 + R^2) - z/sqrt(z^2 + R^2)]
    Br = MU0 * M0
    Lf = 2 * L
    z = np.array([1e-4, 1e-3, 0.004, 0.012, 0.05])
    pts = np.stack([np.zeros_like(z), np.zeros_like(z), L + z], axis=-1)
    Bz = MU0 * cylinder_H(pts, 2 * R, 2 * L, [0, 0, M0])[:, 2]
    furlani = Br / 2 * ((z + Lf) / np.sqrt((z + Lf) ** 2 + R**2) - z / np.sqrt(z**2 + R**2))
    np.testing.assert_allclose(Bz, furlani, rtol=1e-13)
    # the centred form of the same result (shifting z; B is continuous along the axis), inside too
    zc = np.linspace(-3 * L, 3 * L, 14)      # avoids the faces (a face point takes the outer side)
    pts = np.stack([np.zeros_like(zc), np.zeros_like(zc), zc], axis=-1)
    inside = np.abs(zc) < L
    B = MU0 * (cylinder_H(pts, 2 * R, 2 * L, [0, 0, M0])[:, 2] + M0 * inside)
    centred = Br / 2 * ((zc + L) / np.sqrt((zc + L) ** 2 + R**2) - (zc - L) / np.sqrt((zc - L) ** 2 + R**2))
    np.testing.assert_allclose(B, centred, rtol=1e-13, atol=1e-15 * Br)


def test_on_axis_transverse_field():
    # Direct integration of the lateral charge M cos(phi') on the axis (derived here; the on-axis
    # limit Caciagli et al., J. Magn. Magn. Mater. 456, 423 (2018) validate against):
    # Hx = -(M/4) [(L - z)/sqrt(R^2 + (L - z)^2) + (L + z)/sqrt(R^2 + (L + z)^2)], Hy = Hz = 0
    z = np.linspace(-3 * L, 3 * L, 11)
    pts = np.stack([np.zeros_like(z), np.zeros_like(z), z], axis=-1)
    H = cylinder_H(pts, 2 * R, 2 * L, [M0, 0, 0])
    ref = -M0 / 4 * ((L - z) / np.sqrt(R**2 + (L - z) ** 2) + (L + z) / np.sqrt(R**2 + (L + z) ** 2))
    np.testing.assert_allclose(H[:, 0], ref, rtol=1e-13)
    assert np.abs(H[:, 1:]).max() < 1e-12 * M0


def test_long_rod_and_thin_disc_limits():
    # Demagnetising factors of the infinite cylinder (0 along, 1/2 across) and the thin disc
    # (1 along): Osborn, Phys. Rev. 67, 351 (1945); the limits Caciagli et al. 2018 check.
    centre = np.zeros((1, 3))
    rod = dict(diameter=2e-3, height=0.2)
    assert cylinder_H(centre, magnetization=[M0, 0, 0], **rod)[0, 0] == pytest.approx(-M0 / 2, rel=1e-4)
    assert abs(cylinder_H(centre, magnetization=[0, 0, M0], **rod)[0, 2]) < 1e-4 * M0
    disc = dict(diameter=0.2, height=2e-4)
    assert cylinder_H(centre, magnetization=[0, 0, M0], **disc)[0, 2] == pytest.approx(-M0, rel=1e-3)
    assert abs(cylinder_H(centre, magnetization=[M0, 0, 0], **disc)[0, 0]) < 1e-3 * M0


# ---------------------------------------------------------------- off the axis
@pytest.mark.parametrize("radius,half_height", [(R, L), (R, 0.001)])
def test_axial_cylinder_matches_face_charge_quadrature(radius, half_height):
    # Derby & Olbert, Am. J. Phys. 78, 229 (2010) (the closed form under test) against tensor
    # Gauss-Legendre x trapezoid quadrature of the charged end discs sigma = +-M
    rng = np.random.default_rng(1)
    pts = _sample_points(rng, radius, half_height, 16, 0.5 * min(radius, half_height))
    assert 4 <= _inside(pts, radius, half_height).sum() < len(pts)
    H = cylinder_H(pts, 2 * radius, 2 * half_height, [0, 0, M0])
    ref = face_charge_H(pts, radius, half_height, M0)
    finer = face_charge_H(pts, radius, half_height, M0, panels=32, nphi=960)
    assert np.abs(finer - ref).max() < 1e-10 * M0          # the reference has converged
    assert np.abs(H - ref).max() < 1e-9 * M0


@pytest.mark.parametrize("radius,half_height", [(R, L), (R, 0.001), (0.002, 0.015)])
def test_diametral_cylinder_matches_lateral_charge_quadrature(radius, half_height):
    # Caciagli, Baars, Philipse & Kuipers, J. Magn. Magn. Mater. 456, 423 (2018): the field of
    # the lateral charge sigma = M cos(phi') (here against quadrature of that charge)
    rng = np.random.default_rng(2)
    pts = _sample_points(rng, radius, half_height, 16, 0.5 * min(radius, half_height))
    assert 4 <= _inside(pts, radius, half_height).sum() < len(pts)
    for M in ([M0, 0, 0], [0, M0, 0]):
        H = cylinder_H(pts, 2 * radius, 2 * half_height, M)
        ref = lateral_charge_H(pts, radius, half_height, M[0], M[1])
        finer = lateral_charge_H(pts, radius, half_height, M[0], M[1], panels=32, nphi=960)
        assert np.abs(finer - ref).max() < 1e-10 * M0
        assert np.abs(H - ref).max() < 1e-9 * M0


def test_oblique_magnetisation_is_the_sum_of_both_charges():
    # superposition of the face and lateral charge models (Caciagli et al. 2018, section 2)
    rng = np.random.default_rng(3)
    pts = _sample_points(rng, R, L, 16, 0.25 * R)
    M = M0 * DIRECTIONS[3]
    assert np.abs(cylinder_H(pts, 2 * R, 2 * L, M) - surface_charge_H(pts, R, L, M)).max() < 1e-9 * M0


def _loop_field(rho, zeta, radius):
    """(h_rho, h_z) of a unit-current circular loop in A/m per A (Smythe, Static and Dynamic
    Electricity, 3rd ed. 1968, section 7.10; scipy's K, E with m = k^2)."""
    s2 = (radius + rho) ** 2 + zeta**2
    d2 = (radius - rho) ** 2 + zeta**2
    m = 4 * radius * rho / s2
    K, E = ellipk(m), ellipe(m)
    hz = (K + (radius**2 - rho**2 - zeta**2) / d2 * E) / (2 * np.pi * np.sqrt(s2))
    if rho == 0:
        return 0.0, hz
    hr = zeta / rho * (-K + (radius**2 + rho**2 + zeta**2) / d2 * E) / (2 * np.pi * np.sqrt(s2))
    return hr, hz


def _axial_by_current_sheet(rho, z, radius, half_height, breaks):
    """H of an axially magnetised cylinder from its equivalent current sheet K = M: the loop field
    integrated over the height by adaptive quadrature (Jackson 3rd ed. 5.8-5.9), minus M inside."""
    kw = dict(points=breaks, limit=400, epsabs=1e-13 / radius, epsrel=1e-13)
    hr = quad(lambda zp: _loop_field(rho, z - zp, radius)[0], -half_height, half_height, **kw)[0]
    hz = quad(lambda zp: _loop_field(rho, z - zp, radius)[1], -half_height, half_height, **kw)[0]
    inside = rho < radius and abs(z) < half_height
    return M0 * hr, M0 * (hz - inside)


def _transverse_by_line_charges(x, y, z, radius, half_height):
    """H of the lateral charge M cos(phi') as finite uniformly charged lines along z (closed form
    per line, Griffiths, Introduction to Electrodynamics, problem 2.3) summed by adaptive
    quadrature over phi'."""
    def line(phi, comp):
        sx, sy = x - radius * np.cos(phi), y - radius * np.sin(phi)
        s = np.hypot(sx, sy)
        up, um = z + half_height, z - half_height
        ru, rm = np.hypot(s, up), np.hypot(s, um)
        lam = M0 * np.cos(phi) * radius / (4 * np.pi)
        radial = lam / s * (up / ru - um / rm)
        return [radial * sx / s, radial * sy / s, lam * (1 / rm - 1 / ru)][comp]
    near = np.arctan2(y, x)
    return np.array([quad(line, near - np.pi, near + np.pi, args=(c,), points=[near], limit=400,
                          epsabs=1e-13 * M0, epsrel=1e-13)[0] for c in range(3)])


@pytest.mark.parametrize("rho,z", [
    (R * (1 + 1e-3), 0.3 * L), (R * (1 - 1e-3), -0.5 * L), (R * (1 + 1e-5), 0.9 * L),
    (0.4 * R, L * (1 + 1e-4)), (0.7 * R, -L * (1 - 1e-4)), (R * (1 + 2e-3), L * (1 + 2e-3)),
    (R * (1 - 1e-3), L * (1 + 1e-3)), (0.0, L * (1 + 1e-6)),
])
def test_close_to_surfaces_against_adaptive_quadrature(rho, z):
    # Axial: Derby & Olbert 2010 against the current-sheet integral (adaptive, breaks at the point);
    # transverse: Caciagli et al. 2018 (lateral charge) against adaptive line-charge summation.
    phi = 0.6
    x, y = rho * np.cos(phi), rho * np.sin(phi)
    pt = np.array([[x, y, z]])
    breaks = [z] if abs(z) < L else None
    hr, hz = _axial_by_current_sheet(rho, z, R, L, breaks)
    H = cylinder_H(pt, 2 * R, 2 * L, [0, 0, M0])[0]
    np.testing.assert_allclose(H, [hr * np.cos(phi), hr * np.sin(phi), hz], rtol=0, atol=1e-9 * M0)
    H = cylinder_H(pt, 2 * R, 2 * L, [M0, 0, 0])[0]
    np.testing.assert_allclose(H, _transverse_by_line_charges(x, y, z, R, L), rtol=0, atol=1e-9 * M0)


# ---------------------------------------------------------------- far field, superposition, symmetry
def test_far_field_is_the_dipole_of_M_V():
    # point dipole m = M V (Jackson 3rd ed. 5.56); a centred cylinder has no quadrupole, so the
    # error falls as (size / r)^2 (octupole)
    rng = np.random.default_rng(4)
    dirs = rng.normal(size=(40, 3))
    dirs /= np.linalg.norm(dirs, axis=1)[:, None]
    volume = np.pi * R**2 * 2 * L
    errors = []
    for r in (0.5, 1.0):
        pts = r * dirs
        for M in DIRECTIONS:
            m = M0 * M * volume
            dip = (3 * (pts @ m)[:, None] * pts / r**2 - m) / (4 * np.pi * r**3)
            errors.append(np.abs(cylinder_H(pts, 2 * R, 2 * L, M0 * M) - dip).max() / np.abs(dip).max())
    near, far = np.max(errors[:4]), np.max(errors[4:])
    assert near < (2 * R / 0.5) ** 2
    assert far == pytest.approx(near / 4, rel=0.1)


def test_ring_is_outer_minus_inner_cylinder():
    # superposition of charges: ring = solid(R) - solid(RI) with the same M (module docstring)
    rng = np.random.default_rng(5)
    pts = rng.uniform(-0.02, 0.02, (60, 3))
    for M in DIRECTIONS:
        H, G = ring_H_and_gradient(pts, 2 * R, 2 * RI, 2 * L, M0 * M)
        Ho, Go = cylinder_H_and_gradient(pts, 2 * R, 2 * L, M0 * M)
        Hi, Gi = cylinder_H_and_gradient(pts, 2 * RI, 2 * L, M0 * M)
        np.testing.assert_allclose(H, Ho - Hi, rtol=0, atol=1e-12 * M0)
        np.testing.assert_allclose(G, Go - Gi, rtol=0, atol=1e-12 * M0 / R)
        np.testing.assert_array_equal(ring_H(pts, 2 * R, 2 * RI, 2 * L, M0 * M), H)
        np.testing.assert_array_equal(ring_H_gradient(pts, 2 * R, 2 * RI, 2 * L, M0 * M), G)


def _rot_z(angle):
    c, s = np.cos(angle), np.sin(angle)
    return np.array([[c, -s, 0], [s, c, 0], [0, 0, 1]])


def test_axial_ring_field_is_axisymmetric():
    # symmetry of the charge distribution (common practice)
    rng = np.random.default_rng(6)
    pts = rng.uniform(-0.02, 0.02, (50, 3))
    Q = _rot_z(0.83)
    H = ring_H(pts, 2 * R, 2 * RI, 2 * L, [0, 0, M0])
    np.testing.assert_allclose(ring_H(pts @ Q.T, 2 * R, 2 * RI, 2 * L, [0, 0, M0]), H @ Q.T,
                               rtol=0, atol=1e-12 * M0)


def test_rotating_a_diametral_cylinder_by_90_degrees():
    # H of M along y at Q p equals Q H(M along x at p), Q = 90 degrees about z (rotation covariance)
    rng = np.random.default_rng(7)
    pts = rng.uniform(-0.02, 0.02, (50, 3))
    Q = _rot_z(np.pi / 2)
    for func, dims in ((cylinder_H, (2 * R, 2 * L)), (ring_H, (2 * R, 2 * RI, 2 * L))):
        Hx = func(pts, *dims, [M0, 0, 0])
        np.testing.assert_allclose(func(pts @ Q.T, *dims, [0, M0, 0]), Hx @ Q.T, rtol=0, atol=1e-12 * M0)
    # and any angle, for the gradient too
    Q = _rot_z(-1.1)
    M = M0 * DIRECTIONS[3]
    H, G = cylinder_H_and_gradient(pts, 2 * R, 2 * L, M)
    H2, G2 = cylinder_H_and_gradient(pts @ Q.T, 2 * R, 2 * L, Q @ M)
    np.testing.assert_allclose(H2, H @ Q.T, rtol=0, atol=1e-12 * M0)
    np.testing.assert_allclose(G2, Q @ G @ Q.T, rtol=0, atol=1e-11 * M0 / R)


# ---------------------------------------------------------------- gradient, div, curl
def _jacobian_fd(func, pts, h):
    """Fourth-order central differences of H (common practice)."""
    J = np.zeros((len(pts), 3, 3))
    for j in range(3):
        e = np.zeros(3)
        e[j] = h
        J[:, :, j] = (8 * (func(pts + e) - func(pts - e)) - (func(pts + 2 * e) - func(pts - 2 * e))) / (12 * h)
    return J


@pytest.mark.parametrize("shape", ["cylinder", "ring"])
def test_gradient_matches_finite_differences(shape):
    rng = np.random.default_rng(8)
    pts = _sample_points(rng, R, L, 40, 0.1 * R)
    if shape == "ring":
        pts = pts[_distance_to_surface(pts, RI, L) > 0.1 * R]
        dims = (2 * R, 2 * RI, 2 * L)
        field, gradient = ring_H, ring_H_gradient
    else:
        # plus points on and near the axis, across the switch to the axis series
        axis = np.array([[0, 0, 0.002], [1e-9, 0, -0.012], [AXIS_SERIES * R * 0.999, 0, 0.01],
                         [0, AXIS_SERIES * R * 1.001, -0.004], [3e-4, 2e-4, 0.0]])
        pts = np.concatenate([pts, axis])
        dims = (2 * R, 2 * L)
        field, gradient = cylinder_H, cylinder_H_gradient
    for M in DIRECTIONS:
        G = gradient(pts, *dims, M0 * M)
        J = _jacobian_fd(lambda p: field(p, *dims, M0 * M), pts, 3e-4 * R)
        assert np.abs(G - J).max() < 1e-9 * M0 / R


def test_div_and_curl_of_H_vanish():
    # div H = -div M = 0 off the surfaces (uniform M) and curl H = 0 (no currents): Maxwell,
    # checked on finite differences of H itself (not the analytic gradient)
    rng = np.random.default_rng(9)
    pts = _sample_points(rng, R, L, 40, 0.1 * R)
    for func, dims in ((cylinder_H, (2 * R, 2 * L)), (ring_H, (2 * R, 2 * RI, 2 * L))):
        for M in DIRECTIONS:
            J = _jacobian_fd(lambda p: func(p, *dims, M0 * M), pts, 3e-4 * R)
            assert np.abs(np.trace(J, axis1=1, axis2=2)).max() < 1e-9 * M0 / R
            assert np.abs(J - J.transpose(0, 2, 1)).max() < 1e-9 * M0 / R


# ---------------------------------------------------------------- surfaces, rims, axis
def _all_values(points):
    out = []
    for M in DIRECTIONS:
        out += list(cylinder_H_and_gradient(points, 2 * R, 2 * L, M0 * M))
        out += list(ring_H_and_gradient(points, 2 * R, 2 * RI, 2 * L, M0 * M))
    return out


def test_points_on_faces_rims_and_axis_are_finite():
    c, s = np.cos(0.4), np.sin(0.4)
    pts = np.array([
        [0, 0, 0], [0, 0, L], [0, 0, -L], [0.3 * R, 0, L], [0, -0.6 * R, -L],     # axis, faces
        [R, 0, 0], [R * c, R * s, 0.5 * L], [0, R, -L * 0.99],                     # outer wall
        [R, 0, L], [R * c, -R * s, -L], [0, R, L],                                 # outer rims
        [RI, 0, 0], [RI * c, RI * s, 0.3 * L], [RI, 0, L], [0, -RI, -L],           # inner wall, rims
        [0, 0, 10 * L], [1e-300, 0, 0], [R * (1 + 1e-16), 0, L * (1 - 1e-16)],
    ])
    assert all(np.isfinite(v).all() for v in _all_values(pts))


def test_face_and_wall_points_take_the_outer_side():
    # DESIGN.md Conventions: a point on a face is evaluated on its outer side
    c, s = np.cos(0.4), np.sin(0.4)
    on = np.array([[0.3 * R, 0.1 * R, L], [0, -0.6 * R, -L], [R * c, R * s, 0.5 * L], [0, R, -0.2 * L]])
    outward = np.array([[0, 0, 1], [0, 0, -1], [c, s, 0], [0, 1, 0]])
    off = on + 1e-10 * R * outward
    for M in DIRECTIONS:
        a, b = cylinder_H(on, 2 * R, 2 * L, M0 * M), cylinder_H(off, 2 * R, 2 * L, M0 * M)
        assert np.abs(a - b).max() < 1e-8 * M0
    # a ring's inner wall: its outer side is the bore
    on = np.array([[RI * c, RI * s, 0.3 * L], [0, -RI, -0.5 * L]])
    off = on - 1e-10 * R * np.array([[c, s, 0], [0, -1, 0]])
    for M in DIRECTIONS:
        a, b = ring_H(on, 2 * R, 2 * RI, 2 * L, M0 * M), ring_H(off, 2 * R, 2 * RI, 2 * L, M0 * M)
        assert np.abs(a - b).max() < 1e-8 * M0


def test_jump_across_faces_and_walls_is_the_surface_charge():
    # boundary conditions at a magnetised surface: H_out - H_in = (M . n) n, the tangential part of
    # H continuous (Jackson, Classical Electrodynamics 3rd ed., sections 5.9 and 5.10)
    c, s = np.cos(0.6), np.sin(0.6)
    on = np.array([[R * c, R * s, 0.1 * L], [0, -R, -0.7 * L], [0.4 * R, 0.2 * R, L], [-0.3 * R, 0, -L]])
    normal = np.array([[c, s, 0], [0, -1, 0], [0, 0, 1], [0, 0, -1]])
    delta = 1e-9 * R
    for M in DIRECTIONS:
        Mv = M0 * M
        jump = cylinder_H(on + delta * normal, 2 * R, 2 * L, Mv) - cylinder_H(on - delta * normal, 2 * R, 2 * L, Mv)
        np.testing.assert_allclose(jump, (normal @ Mv)[:, None] * normal, rtol=0, atol=1e-7 * M0)
    # a ring's bore wall: the material lies outside its radius, so n points to the axis
    on = np.array([[RI * c, RI * s, 0.2 * L], [0, RI, -0.5 * L]])
    normal = -on * [1, 1, 0] / RI
    for M in DIRECTIONS:
        Mv = M0 * M
        jump = (ring_H(on + delta * normal, 2 * R, 2 * RI, 2 * L, Mv)
                - ring_H(on - delta * normal, 2 * R, 2 * RI, 2 * L, Mv))
        np.testing.assert_allclose(jump, (normal @ Mv)[:, None] * normal, rtol=0, atol=1e-7 * M0)


def test_rim_points_are_pushed_outward():
    # DESIGN.md Conventions: a point on an edge is pushed outward by 1e-9 of the part size
    push = RIM_PUSH * 2 * R / np.sqrt(2)
    rim = np.array([[R, 0, L], [0, -R, -L]])
    pushed = np.array([[R + push, 0, L + push], [0, -R - push, -L - push]])
    for M in DIRECTIONS:
        for a, b in zip(cylinder_H_and_gradient(rim, 2 * R, 2 * L, M0 * M),
                        cylinder_H_and_gradient(pushed, 2 * R, 2 * L, M0 * M)):
            np.testing.assert_allclose(a, b, rtol=1e-12)
    inner_rim = np.array([[RI, 0, L], [0, RI, -L]])
    pushed = np.array([[RI - push, 0, L + push], [0, RI - push, -L - push]])
    for M in DIRECTIONS:
        for a, b in zip(ring_H_and_gradient(inner_rim, 2 * R, 2 * RI, 2 * L, M0 * M),
                        ring_H_and_gradient(pushed, 2 * R, 2 * RI, 2 * L, M0 * M)):
            np.testing.assert_allclose(a, b, rtol=1e-12)


def test_field_is_continuous_onto_the_axis():
    # H and its gradient are smooth through the axis (the axis series joins the closed form)
    z = np.array([-2.0, -0.99, -0.5, 0.0, 0.7, 1.0, 1.3]) * L
    on_axis = np.stack([np.zeros_like(z), np.zeros_like(z), z], axis=-1)
    for offset in (1e-9 * R, 0.99 * AXIS_SERIES * R, 1.01 * AXIS_SERIES * R):
        near = on_axis + [offset * 0.6, offset * 0.8, 0]
        for M in DIRECTIONS:
            H0, G0 = cylinder_H_and_gradient(on_axis, 2 * R, 2 * L, M0 * M)
            H1, G1 = cylinder_H_and_gradient(near, 2 * R, 2 * L, M0 * M)
            assert np.abs(H1 - H0).max() < 2 * offset / R * M0      # |grad H| < M / R here
            assert np.abs(G1 - G0).max() < 20 * offset / R * M0 / R


def test_bad_dimensions_are_rejected():
    with pytest.raises(ValueError):
        ring_H(np.zeros((1, 3)), 0.01, 0.02, 0.01, [0, 0, 1])
    with pytest.raises(ValueError):
        cylinder_H(np.zeros((1, 3)), 0.01, 0.0, [0, 0, 1])


def test_no_points():
    assert cylinder_H(np.zeros((0, 3)), 0.01, 0.01, [0, 0, 1]).shape == (0, 3)
    assert ring_H_gradient(np.zeros((0, 3)), 0.02, 0.01, 0.01, [0, 0, 1]).shape == (0, 3, 3)
