"""Refinement on its own: Newton's method on analytic potentials, and the local field scale
(physics/traps/refine.py)."""
import numpy as np
import pytest

from trapscape.physics.field.model import FieldModel
from trapscape.physics.traps.problem import TrapProblem
from trapscape.physics.traps.refine import field_zeros, local_field_scale, newton
from trapscape.scene.units import MU0
from scene_factory import constraint, make_scene, soft_probe, sphere_magnet


class CoshWell:
    """U = sum_i k_i L^2 (cosh((x_i - a_i) / L) - 1): its only stationary point is a, with
    Hessian diag(k) there; anharmonic, so Newton needs several steps (derived here)."""

    def __init__(self, centre, k, L=2e-3):
        self.centre, self.k, self.L = np.asarray(centre, float), np.asarray(k, float), L

    def force(self, x):
        return -self.k * self.L * np.sinh((x - self.centre) / self.L)

    def hessian(self, x, basis):
        diagonal = self.k * np.cosh((x - self.centre) / self.L)  # (n, 3)
        return np.einsum("ai,ni,bi->nab", basis, diagonal, basis)


def problem_of(constraint_):
    scene = make_scene([sphere_magnet("ball", (0.05, 0, 0), 0.005)], soft_probe(1e-3),
                       (-0.01,) * 3, (0.01,) * 3, 1e-3, constraint_)
    return TrapProblem.from_scene(FieldModel.from_scene(scene), scene)


@pytest.mark.parametrize("k", [(1.0, 2.0, 3.0), (1.0, -2.0, 3.0), (-1.0, -2.0, -0.5)])
def test_newton_converges_to_the_stationary_point_of_an_analytic_potential(k):
    # minimum, saddle and maximum alike: Newton finds where the projected force vanishes
    problem = problem_of(constraint("free"))
    centre = np.array([1.3e-3, -0.7e-3, 2.1e-3])
    starts = centre + np.array([[3e-3, 2e-3, -2.5e-3], [-1e-3, 0.4e-3, 0.2e-3]])
    points, converged = newton(CoshWell(centre, k), problem, starts)
    assert converged.all()
    assert points == pytest.approx(np.tile(centre, (2, 1)), abs=1e-12)


def test_newton_moves_only_along_the_constraint():
    # on the line x = 1 mm, y = 0 along z the equilibrium is the point of the line nearest the
    # well's centre in z: z = a_z (the force's z component is independent of x and y)
    problem = problem_of(constraint("line", point=(1e-3, 0, 0), direction=(0, 0, 1)))
    centre = np.array([-2e-3, 1e-3, 1.5e-3])
    points, converged = newton(CoshWell(centre, (1.0, 1.0, 4.0)), problem,
                               np.array([[1e-3, 0.0, -4e-3]]))
    assert converged.all()
    assert points[0] == pytest.approx([1e-3, 0.0, 1.5e-3], abs=1e-12)


def test_newton_stays_admissible_and_reports_no_convergence():
    # the stationary point is in the magnet, beyond the box: Newton stops at the box's face
    problem = problem_of(constraint("free"))
    centre = np.array([0.05, 0.0, 0.0])
    start = np.array([[0.009, 0.0, 0.0]])
    points, converged = newton(CoshWell(centre, (1.0, 1.0, 1.0), L=1.0), problem, start)
    assert not converged.any()
    assert problem.geometry.admissible(points).all()


def dipole_B(points, position, moment):
    """B of a point dipole (Jackson, Classical Electrodynamics, 3rd ed., eq. 5.56), exactly the
    field outside a uniformly magnetised sphere (Jackson 5.10)."""
    r = points - position
    d = np.linalg.norm(r, axis=1, keepdims=True)
    n = r / d
    return MU0 / (4 * np.pi) * (3 * n * (n @ moment)[:, None] - moment) / d**3


def test_local_field_scale_where_the_parts_cancel():
    # DESIGN.md, Conventions: s = max(|B|, 0.01 sum_k |B_k|); at the middle of an opposed pair B
    # vanishes and s is 1% of the parts' fields
    R, D, Br = 0.01, 0.004, 1.3
    magnets = [sphere_magnet("east", (R, 0, 0), D, north=(0, 0, 1), remanence=Br),
               sphere_magnet("west", (-R, 0, 0), D, north=(0, 0, -1), remanence=Br)]
    scene = make_scene(magnets, soft_probe(0.5e-3), (-0.003,) * 3, (0.003,) * 3, 0.5e-3,
                       constraint("line"))
    model = FieldModel.from_scene(scene)
    m = Br / MU0 * np.pi * D**3 / 6
    points = np.array([[0.0, 0.0, 0.0], [0.0, 0.0, 0.002], [0.003, 0.0, 0.0]])
    east = dipole_B(points, np.array([R, 0, 0]), np.array([0, 0, m]))
    west = dipole_B(points, np.array([-R, 0, 0]), np.array([0, 0, -m]))
    expected = np.maximum(np.linalg.norm(east + west, axis=1),
                          0.01 * (np.linalg.norm(east, axis=1) + np.linalg.norm(west, axis=1)))
    assert local_field_scale(model, points) == pytest.approx(expected, rel=1e-9)
    assert local_field_scale(model, points)[0] == pytest.approx(
        0.01 * 2 * MU0 * m / (4 * np.pi * R**3), rel=1e-9)
    # and Gauss-Newton finds that zero from a grid step away, along the line
    problem = TrapProblem.from_scene(model, scene)
    x, is_zero = field_zeros(problem, np.array([[0.0, 0.0, 0.4e-3]]))
    assert is_zero.all() and x[0] == pytest.approx([0, 0, 0], abs=1e-12)
