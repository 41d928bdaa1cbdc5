"""The prism's field: its tessellation through the exact polyhedron form, checked against the
cuboid closed form (a four-corner prism is a box) and against a surface-charge quadrature done
here for a convex hexagon and a concave L."""
from __future__ import annotations

import math

import numpy as np
import pytest

from scene_factory import make_scene, shape_part, soft_probe
from trapscape.physics.field.cuboid import cuboid_H, cuboid_H_gradient
from trapscape.physics.field.model import FieldModel
from trapscape.physics.field.polyhedron import polyhedron_H, polyhedron_H_gradient
from trapscape.scene.shapes import SHAPES

PRISM = SHAPES["prism"]
M = np.array([3.0e5, -4.0e5, 7.0e5])  # A/m, a general direction
HEIGHT = 0.003
SIDE = 0.004
HEXAGON = [[SIDE * math.cos(k * math.pi / 3), SIDE * math.sin(k * math.pi / 3)] for k in range(6)]
L_SHAPE = [[x * 1e-3, y * 1e-3] for x, y in [(0, 0), (6, 0), (6, 2), (2, 2), (2, 6), (0, 6)]]
# chosen before comparing: both the polyhedron form and the quadrature converge to round-off,
# so 1e-8 of |M| leaves room only for the quadrature's own error, which must be smaller still
TOLERANCE = 1e-8 * np.linalg.norm(M)


def prism_part(outline, height=HEIGHT):
    return shape_part("prism", PRISM.make_dims([outline, height]))


def test_a_four_corner_prism_is_the_cuboid():
    # reference: the cuboid closed form (Akoun & Yonnet, IEEE Trans. Magn. 20, 1962 (1984);
    # Engel-Herbert & Hesjedal, J. Appl. Phys. 97, 074504 (2005)), in physics.field.cuboid
    a, b, c = 0.010, 0.006, 0.004
    part = prism_part([[-a / 2, -b / 2], [a / 2, -b / 2], [a / 2, b / 2], [-a / 2, b / 2]], c)
    V, F = PRISM.tessellation(part)
    rng = np.random.default_rng(5)
    points = np.vstack([rng.uniform(-0.012, 0.012, (300, 3)),  # inside, outside, near faces
                        [[0.0, 0.0, 0.0], [a / 2 + 1e-4, 0.0, 0.0], [0.0, 0.0, 0.01]]])
    np.testing.assert_allclose(polyhedron_H(points, V, F, M), cuboid_H(points, np.array([a, b, c]), M),
                               atol=1e-9 * np.linalg.norm(M))
    far_from_edges = np.min(np.abs(np.abs(points) - [a / 2, b / 2, c / 2]), axis=1) > 2e-4
    np.testing.assert_allclose(polyhedron_H_gradient(points, V, F, M)[far_from_edges],
                               cuboid_H_gradient(points, np.array([a, b, c]), M)[far_from_edges],
                               atol=1e-9 * np.linalg.norm(M) / a)


def test_the_field_model_draws_a_placed_prism_like_the_placed_box():
    # same reference (Akoun & Yonnet 1984), through FieldModel: rotation, position and the
    # closed-form key of each shape
    a, b, c = 0.010, 0.006, 0.004
    turn = np.array([[0.0, -1.0, 0.0], [1.0, 0.0, 0.0], [0.0, 0.0, 1.0]]) @ \
        np.array([[1.0, 0.0, 0.0], [0.0, 0.6, -0.8], [0.0, 0.8, 0.6]])
    outline = [[-a / 2, -b / 2], [a / 2, -b / 2], [a / 2, b / 2], [-a / 2, b / 2]]
    placed = dict(position=(0.01, -0.004, 0.002), rotation=turn, north=(0.3, -0.2, 0.9))
    prism = shape_part("prism", PRISM.make_dims([outline, c]), **placed)
    box = shape_part("box", (a, b, c), **placed)
    points = np.random.default_rng(9).uniform(-0.02, 0.03, (200, 3))
    H_prism = FieldModel.from_scene(make_scene([prism], soft_probe(), (-0.03,) * 3, (0.03,) * 3, 0.005)).H(points)
    H_box = FieldModel.from_scene(make_scene([box], soft_probe(), (-0.03,) * 3, (0.03,) * 3, 0.005)).H(points)
    np.testing.assert_allclose(H_prism, H_box, atol=1e-9 * np.max(np.abs(H_box)))


# -- the surface-charge quadrature --------------------------------------------------------------
# H(x) = (1 / 4 pi) sum over faces of the integral of sigma (x - y) / |x - y|^3 dA, sigma = M . n
# (Jackson, Classical Electrodynamics, 3rd ed., 5.9; Furlani 2001, ch. 3), each face split into
# PANELS x PANELS panels with an n-point Gauss-Legendre rule in each direction.

PANELS = 4


def _charge_field(points, quad_points, weights, sigma):
    r = points[:, None, :] - quad_points[None, :, :]
    d3 = np.linalg.norm(r, axis=2) ** 3
    return np.einsum("nqk,q->nk", r / d3[..., None], weights * sigma) / (4.0 * math.pi)


def _panel_rule(n):
    """Nodes (m,) and weights on [0, 1] of PANELS panels of an n-point Gauss-Legendre rule."""
    x, w = np.polynomial.legendre.leggauss(n)
    nodes = np.concatenate([(k + (x + 1) / 2) / PANELS for k in range(PANELS)])
    return nodes, np.tile(w / 2 / PANELS, PANELS)


def _square(n):
    t, w = _panel_rule(n)
    s, u = np.meshgrid(t, t, indexing="ij")
    return s.ravel(), u.ravel(), np.outer(w, w).ravel()


def _rectangle(origin, e1, e2, n):
    s, u, w = _square(n)
    points = origin + s[:, None] * e1 + u[:, None] * e2
    return points, w * np.linalg.norm(np.cross(e1, e2))


def _triangle(a, b, c, n):
    """Collapsed square y = a + s (b - a) + s u (c - b), dA = |(b - a) x (c - b)| s ds du
    (M. G. Duffy, SIAM J. Numer. Anal. 19, 1260 (1982))."""
    s, u, w = _square(n)
    points = a + s[:, None] * (b - a) + (s * u)[:, None] * (c - b)
    return points, w * s * np.linalg.norm(np.cross(b - a, c - b))


def quadrature_H(points, outline, cap_pieces, height, n):
    """H of the uniformly magnetised prism from its faces' charges. cap_pieces: the cross-section
    as rectangles ("r", origin, e1, e2) or triangles ("t", a, b, c) in the plane (given by the
    test, independent of the code's ear clipping)."""
    corners = np.asarray(outline, float)
    H = np.zeros_like(points)
    for k in range(len(corners)):  # side walls of a counter-clockwise outline
        p, q = corners[k], corners[(k + 1) % len(corners)]
        normal = np.array([q[1] - p[1], p[0] - q[0], 0.0]) / np.linalg.norm(q - p)
        origin = np.array([p[0], p[1], -height / 2])
        nodes, weights = _rectangle(origin, np.array([q[0] - p[0], q[1] - p[1], 0.0]),
                                    np.array([0.0, 0.0, height]), n)
        H += _charge_field(points, nodes, weights, M @ normal)
    for z, sign in ((height / 2, 1.0), (-height / 2, -1.0)):
        for kind, *corner in cap_pieces:
            lifted = [np.array([c[0], c[1], z]) if kind == "t" or i == 0 else np.array([c[0], c[1], 0.0])
                      for i, c in enumerate(corner)]
            nodes, weights = (_triangle(*lifted, n) if kind == "t" else _rectangle(*lifted, n))
            H += _charge_field(points, nodes, weights, sign * M[2])
    return H


def hexagon_pieces():
    return [("t", (0.0, 0.0), HEXAGON[k], HEXAGON[(k + 1) % 6]) for k in range(6)]


def l_pieces():
    mm = 1e-3
    return [("r", (0, 0), (6 * mm, 0), (0, 2 * mm)), ("r", (0, 2 * mm), (2 * mm, 0), (0, 4 * mm))]


CASES = {
    "hexagon": (HEXAGON, hexagon_pieces, np.array([[0.0, 0.0, 0.0], [0.0, 0.0, 0.004],
                                                   [0.006, 0.002, 0.001], [-0.003, 0.005, -0.0035]]),
                np.zeros(3), 0.009),
    "L": (L_SHAPE, l_pieces, np.array([[0.001, 0.001, 0.0], [0.004, 0.004, 0.0],  # the notch
                                       [0.003, 0.003, 0.0027], [0.008, 0.001, -0.001]]),
          np.array([0.003, 0.003, 0.0]), 0.012),
}


@pytest.mark.parametrize("case", sorted(CASES))
def test_prism_field_matches_a_surface_charge_quadrature(case):
    outline, pieces, near, centre, radius = CASES[case]
    directions = np.random.default_rng(2).normal(size=(20, 3))
    shell = centre + radius * directions / np.linalg.norm(directions, axis=1, keepdims=True)
    points = np.vstack([near, shell])
    part = prism_part(outline)
    exact = polyhedron_H(points, *PRISM.tessellation(part), M)
    coarse = quadrature_H(points, outline, pieces(), HEIGHT, 12)
    fine = quadrature_H(points, outline, pieces(), HEIGHT, 24)
    assert np.abs(fine - coarse).max() < TOLERANCE / 10  # the quadrature has converged
    np.testing.assert_allclose(exact, fine, atol=TOLERANCE)
    assert np.abs(fine).max() > 1e3 * TOLERANCE  # a field worth comparing
