"""The probe's finite size: which finite model fits the probe, how much it changes the energy at
the point model's equilibria, and the equilibria re-solved with it (physics.probe.finite)."""
from __future__ import annotations

from dataclasses import replace

import numpy as np

from trapscape.physics.traps.classify import LocalHessian, Sample, make_equilibrium
from trapscape.physics.traps.contact import contact_state, surface_newton
from trapscape.physics.traps.families import drop_repeats, is_field_zero
from trapscape.physics.traps.notes import RIGID_MAGNET_NOTE, finite_probe_note
from trapscape.physics.traps.refine import newton
from trapscape.physics.traps.report import Contact, FiniteProbe


def finite_probe_model(field_model, law, equilibria=()):
    """The finite-size model for this probe, or None when the point model is exact.

    A rigid magnet: None (physics.probe.finite). A soft probe saturated somewhere on its surface
    at one of the equilibria: the volume average (the local approximation). Otherwise the exact
    linear sphere.

    Parameters
    ----------
    field_model : FieldModel
    law : ProbeLaw
    equilibria : sequence of Equilibrium
        The point model's, to test saturation on the probe's surface there.

    Returns
    -------
    AveragedProbe, MultipoleProbe or None
    """
    return law.finite_model(field_model, [e.position for e in equilibria])


def finite_correction(problem, finite, equilibria, grid) -> np.ndarray:
    """|U_finite - U_point| / max(|U_point|, U_ref) of the magnetic energy at each equilibrium.

    U_ref, the median |U| over the admissible grid, keeps field zeros (U_point = 0) from reading
    as infinite corrections.

    Parameters
    ----------
    problem : TrapProblem
    finite : ProbeModel or None
    equilibria : sequence of Equilibrium
    grid : ScanGrid

    Returns
    -------
    ndarray, shape (len(equilibria),)
        Dimensionless; zeros when finite is None.
    """
    if finite is None or not equilibria:
        return np.zeros(len(equilibria))
    point_model = problem.point_model
    points = np.array([e.position for e in equilibria])
    U_point = point_model.magnetic_energy_and_force(points)[0]
    U_finite = finite.magnetic_energy_and_force(points)[0]
    on_grid = point_model.law.magnetic_energy(grid.B_T[grid.admissible])
    reference = float(np.median(np.abs(on_grid))) if len(on_grid) else 0.0
    scale = np.maximum(np.abs(U_point), reference)
    return np.divide(np.abs(U_finite - U_point), scale, out=np.zeros_like(scale), where=scale > 0)


def finite_summary(problem, finite, used: bool, largest: float) -> FiniteProbe:
    """The report's FiniteProbe: which model, whether it was used, the largest correction.

    Parameters
    ----------
    problem : TrapProblem
    finite : ProbeModel or None
        None: the point model is exact (a rigid magnet probe).
    used : bool
    largest : float
        Largest relative correction over the equilibria (dimensionless).

    Returns
    -------
    FiniteProbe
    """
    threshold = problem.tolerances.finite_probe_threshold
    if finite is None:
        return FiniteProbe(used=False, model="point probe (exact for a rigid magnet)",
                           threshold=threshold, max_relative_correction=0.0,
                           note=RIGID_MAGNET_NOTE)
    return FiniteProbe(used=used, model=finite.description, threshold=threshold,
                       max_relative_correction=largest,
                       note=finite_probe_note(finite.description, used, largest, threshold))


def resolve_finite(problem, finite, equilibria) -> list:
    """Each equilibrium re-solved with the finite-size model from its point-model position.

    Field zeros are kept as they are. A contact the finite size lifts off its surface (pressed
    no longer) is followed by Newton's method off the surface to a free equilibrium, if one is
    nearby. Batched: the finite model costs a few hundred field points per position.

    Parameters
    ----------
    problem : TrapProblem
    finite : ProbeModel
    equilibria : list of Equilibrium

    Returns
    -------
    list of Equilibrium
        Field zeros, re-solved free ones, re-solved contacts, lifted ones found free; repeats
        within 1e-2 grid steps dropped.
    """
    free = [e for e in equilibria if e.contact is None and not is_field_zero(e)]
    contacts = [e for e in equilibria if e.contact is not None]
    result = [e for e in equilibria if is_field_zero(e)]
    result += resolve_free(problem, finite, free, [e.position for e in free])
    resolved, lifted, starts = resolve_contacts(problem, finite, contacts)
    result += resolved
    notes = [f"lifted off {e.contact.surface} by the probe's finite size (the point model had it "
             "resting there)" for e in lifted]
    result += [r for r in resolve_free(problem, finite, lifted, starts, notes)
               if r.contact is None and "did not converge" not in r.note]
    return drop_repeats(result, 1e-2 * problem.spacing)


def _shifted(new, old):
    """new with old's family size and correction, and how far it moved from old (m)."""
    return replace(new, family_size=old.family_size,
                   finite_probe_correction=old.finite_probe_correction,
                   finite_probe_shift_m=float(np.linalg.norm(new.position - old.position)))


def resolve_free(problem, finite, equilibria, starts, notes=None) -> list:
    """Free equilibria re-solved by Newton's method with the finite model.

    One that does not converge keeps its point-model entry with a note.

    Parameters
    ----------
    problem : TrapProblem
    finite : ProbeModel
    equilibria : list of Equilibrium
        M of them.
    starts : array_like, shape (M, 3)
        m, where Newton starts for each.
    notes : list of str or None
        One per equilibrium, replacing its note.

    Returns
    -------
    list of Equilibrium
        One per input, in order; notes (one per input) replace theirs when given.
    """
    if not equilibria:
        return []
    basis = problem.basis
    x, ok = newton(finite, problem, np.asarray(starts, float).reshape(-1, 3))
    U, F = finite.energy_and_force(x[ok])
    K = finite.hessian(x[ok], basis)
    B = finite.applied_field(x[ok])[0]
    result, j = [], 0
    for i, eq in enumerate(equilibria):
        if not ok[i]:
            result.append(replace(eq, note=(eq.note + "; " if eq.note else "") +
                                  "the finite-size refinement did not converge: point model"))
            continue
        note = notes[i] if notes is not None else eq.note
        new = make_equilibrium(problem, Sample(x[i], U[j], F[j], B[j]),
                               LocalHessian(basis, K[j]), note=note)
        result.append(_shifted(new, eq))
        j += 1
    return result


def resolve_contacts(problem, finite, equilibria) -> tuple:
    """Contacts re-solved along their surface with the finite model.

    Parameters
    ----------
    problem : TrapProblem
    finite : ProbeModel
    equilibria : list of Equilibrium
        The point model's contacts.

    Returns
    -------
    resolved : list of Equilibrium
        Still pressed and stable (or marginal) along the surface.
    lifted : list of Equilibrium
        The point-model contacts the finite size no longer presses.
    starts : list of ndarray, shape (3,)
        m, half a grid step off the surface, where to look for each lifted one free.
    """
    if not equilibria:
        return [], [], []
    geometry, basis = problem.geometry, problem.basis
    x = np.array([e.position for e in equilibria])
    x = surface_newton(finite, geometry, x, basis)  # on a line: fixed by the geometry
    normals, pressed, tangents, K_t, F = contact_state(finite, geometry, x, basis)
    U = finite.energy(x)
    B = finite.applied_field(x)[0]
    names = geometry.surface_name(x)
    resolved, lifted, starts = [], [], []
    for i, eq in enumerate(equilibria):
        if pressed[i] <= 0.0:
            off = normals[i] @ basis.T @ basis
            off /= max(np.linalg.norm(off), 1e-300)
            lifted.append(eq)
            starts.append(x[i] + 0.5 * geometry.spacing * off)
            continue
        contact = Contact(surface=names[i], normal_force_N=float(pressed[i]), normal=normals[i])
        new = make_equilibrium(problem, Sample(x[i], U[i], F[i], B[i]),
                               LocalHessian(tangents[i], K_t[i]), contact=contact, note=eq.note)
        if new.classification in ("stable", "marginal"):
            resolved.append(_shifted(new, eq))
    return resolved, lifted, starts


def with_finite_size(problem, grid, equilibria) -> tuple:
    """The point model's equilibria with their finite-size corrections.

    They are re-solved with the finite model when the largest correction exceeds the threshold
    (or problem.finite_probe forces it).

    Parameters
    ----------
    problem : TrapProblem
    grid : ScanGrid
    equilibria : list of Equilibrium
        The point model's.

    Returns
    -------
    equilibria : list of Equilibrium
    final_model : ProbeModel
        The model the returned equilibria were solved with.
    summary : FiniteProbe
    """
    finite = finite_probe_model(problem.field_model, problem.law, equilibria)
    corrections = finite_correction(problem, finite, equilibria, grid)
    largest = float(corrections.max()) if len(corrections) else 0.0
    threshold = problem.tolerances.finite_probe_threshold
    forced = problem.finite_probe
    use_finite = (largest > threshold) if forced is None else bool(forced)
    use_finite = use_finite and finite is not None and bool(equilibria)
    equilibria = [replace(e, finite_probe_correction=float(c))
                  for e, c in zip(equilibria, corrections)]
    if use_finite:
        equilibria = resolve_finite(problem, finite, equilibria)
    final_model = finite if use_finite else problem.point_model
    return equilibria, final_model, finite_summary(problem, finite, use_finite, largest)
