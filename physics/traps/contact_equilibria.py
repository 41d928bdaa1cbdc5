"""Contact equilibria: the probe resting pressed against a magnet or plate (clearance = d/2),
found from the grid's lowest cells next to a surface by bisection (line) or by descent along the
surface and Newton's method on it (plane, free), kept when pressed and stable along the surface."""
from __future__ import annotations

from trapscape.physics.traps.candidates import contact_starts
from trapscape.physics.traps.classify import LocalHessian, Sample, make_equilibrium, rests
from trapscape.physics.traps.contact import (contact_state, line_contacts, surface_descent,
                                             surface_newton)
from trapscape.physics.traps.families import unique_points
from trapscape.physics.traps.report import Contact
from trapscape.physics.traps.symmetry import orbit_of


def contact_equilibria(problem, grid, symmetry=None) -> list:
    """The point model's contact equilibria where the probe rests (classify.rests).

    Parameters
    ----------
    problem : TrapProblem
    grid : ScanGrid
    symmetry : Symmetry or None
        The scene's: a continuous one makes contacts flat along its circles (contact_state).

    Returns
    -------
    list of Equilibrium
        Each with its Contact; free_directions counts the directions along the surface.
    """
    model, geometry, basis = problem.point_model, problem.geometry, problem.basis
    orbit = orbit_of(symmetry, geometry.spacing)
    starts = contact_starts(grid, problem.tolerances.max_contact_starts)
    if len(starts) == 0:
        return []
    if grid.kind == "line":
        points = line_contacts(grid, geometry, starts)
    else:
        points = surface_descent(model, geometry, grid.points[starts], basis)
        points = surface_newton(model, geometry, unique_points(points, 2e-2 * geometry.spacing),
                                basis, orbit=orbit)
    points = points[geometry.clearance(points) >= geometry.radius * (1 - 1e-6)]
    points = unique_points(points, 2e-2 * geometry.spacing)
    if len(points) == 0:
        return []
    normals, pressed, tangents, K_t, F, U = contact_state(model, geometry, points, basis, orbit)
    B = model.applied_field(points)[0]
    names = geometry.surface_name(points)
    found = []
    for i in range(len(points)):
        if pressed[i] <= 0.0:
            continue  # pulled away from the surface: not resting on it
        contact = Contact(surface=names[i], normal_force_N=float(pressed[i]), normal=normals[i])
        eq = make_equilibrium(problem, Sample(points[i], U[i], F[i], B[i]),
                              LocalHessian(tangents[i], K_t[i]), contact=contact)
        if rests(eq, problem.tolerances.marginal_ratio):
            found.append(eq)
    return found


def starts_were_capped(problem, grid) -> bool:
    """Whether contact_starts hit its limit (cells beyond it were not followed).

    Parameters
    ----------
    problem : TrapProblem
    grid : ScanGrid

    Returns
    -------
    bool
    """
    limit = problem.tolerances.max_contact_starts
    return len(contact_starts(grid, limit)) >= limit
