"""Refinement of free equilibria: Newton's method on the projected force from the grid's
candidates, and, for a magnet probe free to turn, Gauss-Newton on B = 0 from the grid's minima
of |B| (its energy -m|B| has no gradient there)."""
from __future__ import annotations

import numpy as np

from trapscape.physics.traps.candidates import local_minima, sign_change_cells
from trapscape.physics.traps.classify import LocalHessian, Sample, make_equilibrium
from trapscape.physics.traps.contact import flat_along_orbit, pseudo_solve
from trapscape.physics.traps.families import unique_points
from trapscape.scene.units import MU0


def _on_constraint(problem, starts) -> np.ndarray:
    """Starting points projected onto the constraint's line or plane, admissible ones only."""
    if starts is None or len(starts) == 0:
        return np.empty((0, 3))
    starts = np.asarray(starts, float).reshape(-1, 3)
    origin, basis = np.asarray(problem.constraint_point, float), problem.basis
    projected = origin + ((starts - origin) @ basis.T) @ basis
    return projected[problem.geometry.admissible(projected)]


def newton(model, problem, starts, orbit=None) -> tuple:
    """Newton's method on the projected force with a trust radius of one grid step.

    The radius shrinks by 4 when a step leaves the admissible region; one run from each start.
    Points stay admissible. With an orbit, no step is taken along it (flat_along_orbit): on a
    circle of equilibria the model's own error there would otherwise keep every step above the
    convergence test.

    Parameters
    ----------
    model : ProbeModel
        Point or finite-size probe: force (N, 3) in N and hessian (N, k, k) in N/m.
    problem : TrapProblem
        Basis, geometry, grid step and the number of iterations.
    starts : ndarray, shape (M, 3)
        m.
    orbit : callable or None
        points (N, 3) -> unit directions (N, 3) of a continuous symmetry's orbits (zeros where
        there is none; Symmetry.orbit).

    Returns
    -------
    points : ndarray, shape (M, 3)
        m.
    converged : ndarray of bool, shape (M,)
        The last step was below 1e-10 of the grid step.

    References
    ----------
    Nocedal & Wright, Numerical Optimization, 2nd ed., chapter 4.
    """
    basis, geometry = problem.basis, problem.geometry
    x = np.asarray(starts, float).reshape(-1, 3).copy()
    n, h = len(x), geometry.spacing
    radius = np.full(n, h)
    active = np.ones(n, bool)
    converged = np.zeros(n, bool)
    for _ in range(problem.tolerances.newton_iterations):
        idx = np.flatnonzero(active)
        if len(idx) == 0:
            break
        xa = x[idx]
        g = model.force(xa) @ basis.T  # = -grad_q U
        K = flat_hessian(model, xa, basis, orbit)
        step = pseudo_solve(K, g)
        size = np.linalg.norm(step, axis=1)
        step *= np.minimum(1.0, radius[idx] / np.maximum(size, 1e-300))[:, None]
        trial = xa + step @ basis
        ok = geometry.admissible(trial)
        x[idx[ok]] = trial[ok]
        done = ok & (size < 1e-10 * h)
        converged[idx[done]] = True
        active[idx[done]] = False
        radius[idx[~ok]] *= 0.25
        lost = ~ok & (radius[idx] < 1e-6 * h)
        active[idx[lost]] = False
    return x, converged


def flat_hessian(model, points, basis, orbit=None) -> np.ndarray:
    """The model's Hessian in the basis, with no stiffness along the orbit when one is given.

    Parameters
    ----------
    model : ProbeModel
    points : ndarray, shape (N, 3)
        m.
    basis : ndarray, shape (k, 3)
    orbit : callable or None
        As newton's.

    Returns
    -------
    ndarray, shape (N, k, k)
        N/m.
    """
    K = model.hessian(points, basis)
    if orbit is None:
        return K
    return flat_along_orbit(K, np.broadcast_to(basis, (len(points),) + basis.shape), orbit(points))


def field_zeros(problem, starts) -> tuple:
    """Gauss-Newton on B(x) = 0 along the allowed directions.

    Steps limited to one grid step.

    Parameters
    ----------
    problem : TrapProblem
    starts : ndarray, shape (M, 3)
        m.

    Returns
    -------
    points : ndarray, shape (M, 3)
        m.
    is_zero : ndarray of bool, shape (M,)
        |B| at most field_zero_ratio of the local field scale s(x) there.

    References
    ----------
    Nocedal & Wright, Numerical Optimization, 2nd ed., section 10.3.
    """
    model, basis, geometry = problem.point_model, problem.basis, problem.geometry
    x = np.asarray(starts, float).reshape(-1, 3).copy()
    for _ in range(problem.tolerances.newton_iterations):
        B, G = model.applied_field(x)
        J = G @ basis.T  # (n, 3, k): dB/dq
        step = -np.einsum("nki,ni->nk", np.linalg.pinv(J), B)
        size = np.linalg.norm(step, axis=1)
        step *= np.minimum(1.0, geometry.spacing / np.maximum(size, 1e-300))[:, None]
        trial = x + step @ basis
        ok = geometry.admissible(trial)
        x[ok] = trial[ok]
    B = model.applied_field(x)[0]
    scale = local_field_scale(model.field_model, x)
    return x, np.linalg.norm(B, axis=1) <= problem.tolerances.field_zero_ratio * scale


def local_field_scale(field_model, points) -> np.ndarray:
    """s(x) = max(|B|, 0.01 sum_k |B_k|) of DESIGN.md, Conventions, with B_k part k's own field.

    Parameters
    ----------
    field_model : FieldModel
    points : ndarray, shape (N, 3)
        m.

    Returns
    -------
    ndarray, shape (N,)
        T.
    """
    points = np.asarray(points, float).reshape(-1, 3)
    total = MU0 * np.linalg.norm(field_model.applied_H(points), axis=1)
    parts = np.zeros(len(points))
    everything = range(len(field_model.magnets))
    for index in everything:
        others = [i for i in everything if i != index]
        parts += MU0 * np.linalg.norm(field_model.applied_H(points, exclude=others), axis=1)
    return np.maximum(total, 0.01 * parts)


def free_equilibria(problem, grid, starts=None) -> list:
    """The point model's equilibria away from every surface, refined and classified.

    Refined from the grid's sign-change cells (and its field zeros for a magnet probe free to
    turn), and from `starts` where given.

    Parameters
    ----------
    problem : TrapProblem
    grid : ScanGrid
    starts : array_like, shape (M, 3), optional
        More starting points, m (a sweep's equilibria of the previous step: continuation);
        put on the constraint, and those where the probe does not fit dropped.

    Returns
    -------
    list of Equilibrium
        Lexicographic order of position, field zeros last.
    """
    model, basis = problem.point_model, problem.basis
    points, converged = newton(model, problem, np.vstack([sign_change_cells(grid).reshape(-1, 3),
                                                          _on_constraint(problem, starts)]))
    points = unique_points(points[converged], 1e-2 * problem.spacing)
    found = []
    if len(points):
        U, F = model.energy_and_force(points)
        g = np.linalg.norm(F @ basis.T, axis=1)
        K = model.hessian(points, basis)
        top = np.max(np.abs(np.linalg.eigvalsh(K)), axis=1)
        B = model.applied_field(points)[0]
        for i in range(len(points)):
            if g[i] > 1e-4 * top[i] * problem.spacing + 1e-30:
                continue  # Newton stalled on a slope (a kink of the energy): not an equilibrium
            found.append(make_equilibrium(problem, Sample(points[i], U[i], F[i], B[i]),
                                          LocalHessian(basis, K[i])))
    if model.law.cone_at_field_zero:
        found += field_zero_equilibria(problem, grid)
    return found


def balanced_at_field_zero(problem, points) -> np.ndarray:
    """Which field zeros are equilibria: the cone -m|B| can balance the other forces there.

    At B = 0 the energy -m|B| has no gradient; its generalised gradient is the set
    {-m J^T n : |n| <= 1} with J = dB/dq along the allowed directions (Clarke, Optimization and
    Nonsmooth Analysis, 1983, 2.5.1), so the point is an equilibrium when m J^T n = -F_q (F_q
    the weight along the allowed directions) has a solution with |n| <= 1. Where the zeros
    form a curve (J of rank 2, its null vector t along the curve) this needs F_q . t = 0: a
    point of the curve where gravity pulls along it is no equilibrium (the probe, pushed away
    from B = 0 on every side, could not rest there either), only its highest and lowest points
    are; the Gauss-Newton of field_zeros lands anywhere on such a curve.

    Parameters
    ----------
    problem : TrapProblem
    points : ndarray, shape (M, 3)
        Field zeros, m.

    Returns
    -------
    ndarray of bool, shape (M,)
    """
    points = np.asarray(points, float).reshape(-1, 3)
    if len(points) == 0:
        return np.zeros(0, bool)
    law, basis = problem.law, problem.basis
    slope = -float(law.magnetic_energy(np.array([[1.0, 0.0, 0.0]]))[0])  # m: U = -m|B| at 1 T
    weight = law.gravity_force() @ basis.T  # (k,) N
    _, G = problem.point_model.applied_field(points)
    J = G @ basis.T  # (M, 3, k) T/m
    keep = np.zeros(len(points), bool)
    for i in range(len(points)):  # few points: one small least-squares problem each
        A = slope * J[i].T  # (k, 3) N
        n = -np.linalg.pinv(A, rcond=1e-14) @ weight
        residual = np.linalg.norm(A @ n + weight)
        keep[i] = (np.linalg.norm(n) <= 1.0
                   and residual <= 1e-6 * (np.linalg.norm(weight) + 1e-30))
    return keep


def field_zero_equilibria(problem, grid) -> list:
    """A magnet probe's equilibria at B = 0 (unstable by rule), from the grid's minima of |B|.

    Only the zeros where the cone balances the weight (balanced_at_field_zero).

    Parameters
    ----------
    problem : TrapProblem
    grid : ScanGrid

    Returns
    -------
    list of Equilibrium
    """
    size = np.linalg.norm(grid.B_T, axis=1)
    cells = local_minima(size, grid.admissible, grid.shape)
    if len(cells) == 0:
        return []
    points, zero = field_zeros(problem, grid.points[cells])
    points = unique_points(points[zero], 1e-2 * problem.spacing)
    points = points[balanced_at_field_zero(problem, points)]
    if len(points) == 0:
        return []
    U, F = problem.point_model.energy_and_force(points)
    none = LocalHessian(problem.basis, None)
    return [make_equilibrium(problem, Sample(p, u, f, np.zeros(3)), none)
            for p, u, f in zip(points, U, F)]
