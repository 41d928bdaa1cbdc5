"""The probe's finite size: which finite model fits the probe, how much it changes the energy at
the point model's equilibria, and the equilibria re-solved with it (physics.probe.finite): the
point model's, and those a finite-model scan near the magnets seeds (physics.traps.finite_scan),
each with its rule fixed where it starts and checked against a coarser rule."""
from __future__ import annotations

from dataclasses import replace

import numpy as np

from trapscape.physics.traps.classify import LocalHessian, Sample, make_equilibrium, rests
from trapscape.physics.traps.contact import contact_state, flat_along_orbit, surface_newton
from trapscape.physics.traps.families import drop_repeats, is_field_zero, unique_points
from trapscape.physics.traps.finite_scan import finite_scan
from trapscape.physics.traps.notes import RIGID_MAGNET_NOTE, finite_probe_note
from trapscape.physics.traps.refine import flat_hessian, newton
from trapscape.physics.traps.report import Contact, FiniteProbe, RuleCheck
from trapscape.physics.traps.symmetry import orbit_of

SEED_ITERATIONS = 12  # Newton's iterations from a scan's seed (a cell from the equilibrium)


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
    U_finite = finite.scan_model().magnetic_energy_and_force(points)[0]
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


def resolve_finite(problem, finite, equilibria, symmetry=None) -> list:
    """Each equilibrium re-solved with the finite-size model from its point-model position.

    Field zeros are kept as they are. A contact the finite size lifts off its surface (pressed
    no longer) is followed by Newton's method off the surface to a free equilibrium, if one is
    nearby. Batched: the finite model costs a few hundred field points per position.

    Parameters
    ----------
    problem : TrapProblem
    finite : ProbeModel
    equilibria : list of Equilibrium
    symmetry : Symmetry or None
        The scene's (resolve_contacts).

    Returns
    -------
    list of Equilibrium
        Field zeros, re-solved free ones, re-solved contacts, lifted ones found free; repeats
        within 1e-2 grid steps dropped.
    """
    free = [e for e in equilibria if e.contact is None and not is_field_zero(e)]
    contacts = [e for e in equilibria if e.contact is not None]
    result = [e for e in equilibria if is_field_zero(e)]
    orbit = orbit_of(symmetry, problem.spacing)
    result += resolve_free(problem, finite, free, [e.position for e in free], orbit=orbit)
    resolved, lifted, starts = resolve_contacts(problem, finite, contacts, symmetry)
    result += resolved
    notes = [f"lifted off {e.contact.surface} by the probe's finite size (the point model had it "
             "resting there)" for e in lifted]
    result += [r for r in resolve_free(problem, finite, lifted, starts, notes, orbit)
               if r.contact is None and "did not converge" not in r.note]
    return drop_repeats(result, 1e-2 * problem.spacing)


def _shifted(new, old):
    """new with old's family size and correction, and how far it moved from old (m)."""
    return replace(new, family_size=old.family_size,
                   finite_probe_correction=old.finite_probe_correction,
                   finite_probe_shift_m=float(np.linalg.norm(new.position - old.position)))


def resolve_free(problem, finite, equilibria, starts, notes=None, orbit=None) -> list:
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
    orbit : callable or None
        A continuous symmetry's orbit directions (Symmetry.orbit): no step and no stiffness
        along them (refine.newton).

    Returns
    -------
    list of Equilibrium
        One per input, in order; notes (one per input) replace theirs when given.
    """
    if not equilibria:
        return []
    basis = problem.basis
    starts = np.asarray(starts, float).reshape(-1, 3)
    x, ok = np.zeros_like(starts), np.zeros(len(starts), bool)
    U, F, B = np.zeros(len(starts)), np.zeros((len(starts), 3)), np.zeros((len(starts), 3))
    K = np.zeros((len(starts), len(basis), len(basis)))
    for model, idx in finite.rule_groups(starts):  # one rule per run of Newton's method
        x[idx], ok[idx], U[idx], F[idx], K[idx], B[idx] = _solved(problem, model, starts[idx],
                                                                  orbit)
    result = []
    for i, eq in enumerate(equilibria):
        if not ok[i]:
            result.append(replace(eq, note=(eq.note + "; " if eq.note else "") +
                                  "the finite-size refinement did not converge: point model"))
            continue
        note = notes[i] if notes is not None else eq.note
        new = make_equilibrium(problem, Sample(x[i], U[i], F[i], B[i]),
                               LocalHessian(basis, K[i]), note=note)
        result.append(_shifted(new, eq))
    return result


def _solved(problem, model, starts, orbit=None) -> tuple:
    """Newton's method with one model from each start; the model's U, F, K and B there.

    A model with a finer rule than its scan rule is first solved with the scan rule (cheap) and
    polished with its own from there: a few of its costly iterations instead of up to 40."""
    starts = np.asarray(starts, float).reshape(-1, 3)
    scan_model = model.scan_model()
    if scan_model is not model:
        rough, first = newton(scan_model, problem, starts, orbit)
        starts = np.where(first[:, None], rough, starts)
    x, ok = newton(model, problem, starts, orbit)
    return _state(problem, model, x, ok, orbit)


def _state(problem, model, x, ok, orbit=None) -> tuple:
    """x, ok and the model's U, F, K, B at the converged points (zeros elsewhere)."""
    n, k = len(x), len(problem.basis)
    U, F, B, K = np.zeros(n), np.zeros((n, 3)), np.zeros((n, 3)), np.zeros((n, k, k))
    if ok.any():
        U[ok], F[ok] = model.energy_and_force(x[ok])
        K[ok] = flat_hessian(model, x[ok], problem.basis, orbit)
        B[ok] = model.applied_field(x[ok])[0]
    return x, ok, U, F, K, B


def seeded_equilibria(problem, finite, scanned, known, orbit=None) -> list:
    """Equilibria of the finite model from the sign-change cells of its scan near the magnets.

    Cells within two grid steps of a known equilibrium are skipped (Newton would find it again).

    Parameters
    ----------
    problem : TrapProblem
    finite : ProbeModel
    scanned : physics.traps.finite_scan.FiniteGrid
    known : list of Equilibrium
        Already re-solved with the finite model.
    orbit : callable or None
        As resolve_free's.

    Returns
    -------
    list of Equilibrium
        Converged and balanced ones only, each noted as found by the finite-size scan.
    """
    seeds = _away_from(scanned.seeds(), known, 2.0 * problem.spacing)
    if len(seeds) == 0:
        return []
    x, ok = newton(finite.scan_model(), replace(problem, tolerances=replace(
        problem.tolerances, newton_iterations=SEED_ITERATIONS)), seeds, orbit)
    seeds = _away_from(unique_points(x[ok], 0.1 * problem.spacing), known, 0.5 * problem.spacing)
    found, basis = [], problem.basis
    for model, idx in finite.rule_groups(seeds):
        x, ok, U, F, K, B = _solved(problem, model, seeds[idx], orbit)
        for i in np.flatnonzero(ok):
            g = np.linalg.norm(F[i] @ basis.T)
            top = np.max(np.abs(np.linalg.eigvalsh(K[i])))
            if g > 1e-4 * top * problem.spacing + 1e-30:
                continue  # stalled on a slope, as in refine.free_equilibria
            found.append(make_equilibrium(
                problem, Sample(x[i], U[i], F[i], B[i]), LocalHessian(basis, K[i]),
                note="found by the finite-size scan (no point-model counterpart)"))
    return found


def _away_from(points, equilibria, distance) -> np.ndarray:
    """The points farther than distance (m) from every equilibrium's position."""
    if len(equilibria) == 0 or len(points) == 0:
        return points
    taken = np.array([e.position for e in equilibria])
    near = np.min(np.linalg.norm(points[:, None] - taken[None], axis=2), axis=1)
    return points[near > distance]


def rule_checks(finite, equilibria, orbit=None) -> list:
    """Each equilibrium with its RuleCheck: energy and stiffnesses by the rule it was solved
    with and by a coarser one (batched by rule).

    Along a continuous symmetry's orbit both Hessians are flat (contact.flat_along_orbit), as the
    stiffnesses reported: zero there by symmetry, whatever either rule gives.

    Parameters
    ----------
    finite : ProbeModel
    equilibria : list of Equilibrium
    orbit : callable or None
        The symmetry's orbit directions (Symmetry.orbit).

    Returns
    -------
    list of Equilibrium
        rule_check set where the finite model has a rule and the stiffnesses are defined.
    """
    result = list(equilibria)
    groups = {}
    for i, eq in enumerate(equilibria):
        model = solving_model(finite, eq)
        defined = eq.stiffness_N_per_m is not None and None not in eq.stiffness_N_per_m
        if model.coarser() is not None and defined and len(eq.directions):
            groups.setdefault((id(model), eq.contact is None, len(eq.directions)),
                              (model, []))[1].append(i)
    for (_, free, _), (model, members) in groups.items():
        coarse = model.coarser()
        x = np.array([equilibria[i].position for i in members])
        D = np.array([equilibria[i].directions for i in members], float)
        flat = (lambda K: K) if orbit is None else (lambda K: flat_along_orbit(K, D, orbit(x)))
        k_coarse = np.diagonal(flat(coarse.hessian(x, D)), axis1=1, axis2=2)
        if free:  # along its eigenvectors, the model's Hessian gives its stiffnesses
            k_fine = np.array([equilibria[i].stiffness_N_per_m for i in members], float)
        else:  # along the surface: compare like with like
            k_fine = np.diagonal(flat(model.hessian(x, D)), axis1=1, axis2=2)
        dU = np.abs(model.energy_without_force(x) - coarse.energy_without_force(x))
        for j, i in enumerate(members):
            result[i] = replace(equilibria[i], rule_check=RuleCheck(
                rule=model.description, check_rule=coarse.description,
                energy_difference_J=float(dU[j]),
                stiffness_difference_N_per_m=tuple(float(v) for v in
                                                   np.abs(k_fine[j] - k_coarse[j]))))
    return result


def solving_model(finite, eq):
    """The model with a fixed rule that an equilibrium is solved with: the one its clearance
    chooses for a free one; the scan rule for a contact (a face's field is smooth where the
    probe touches it, and the clearance alone would choose the finest rule at every contact).

    Parameters
    ----------
    finite : ProbeModel
    eq : Equilibrium

    Returns
    -------
    ProbeModel
    """
    if eq.contact is not None:
        return finite.scan_model()
    return finite.rule_groups(eq.position[None])[0][0]


def resolve_contacts(problem, finite, equilibria, symmetry=None) -> tuple:
    """Contacts re-solved along their surface with the finite model.

    Parameters
    ----------
    problem : TrapProblem
    finite : ProbeModel
    equilibria : list of Equilibrium
        The point model's contacts.
    symmetry : Symmetry or None
        The scene's: with a continuous one, one contact of each of its circles is solved, and
        contacts have no stiffness along the circles (contact.flat_along_orbit).

    Returns
    -------
    resolved : list of Equilibrium
        Still pressed and resting along the surface (classify.rests).
    lifted : list of Equilibrium
        The point-model contacts the finite size no longer presses.
    starts : list of ndarray, shape (3,)
        m, half a grid step off the surface, where to look for each lifted one free.
    """
    if not equilibria:
        return [], [], []
    geometry, basis = problem.geometry, problem.basis
    finite = finite.scan_model()  # solving_model: the scan rule at a contact
    x = np.array([e.position for e in equilibria])
    orbit = orbit_of(symmetry, geometry.spacing)
    x = _solved_on_surface(finite, geometry, x, basis, symmetry, orbit)
    normals, pressed, tangents, K_t, F, U = contact_state(finite, geometry, x, basis, orbit)
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
        if rests(new, problem.tolerances.marginal_ratio):
            resolved.append(_shifted(new, eq))
    return resolved, lifted, starts


def _solved_on_surface(finite, geometry, x, basis, symmetry, orbit):
    """Contacts re-solved along their surface (surface_newton; a line: fixed by the geometry).

    With a continuous symmetry, one contact of each circle is solved, and the others are its
    copies turned about the axis (put back onto a faceted surface): the points of a circle are
    one state.
    """
    if orbit is None:
        return surface_newton(finite, geometry, x, basis)
    owners = symmetry.circle_owners(x, 1e-2 * geometry.spacing)
    first = np.flatnonzero(owners == np.arange(len(x)))
    solved = np.empty_like(x)
    solved[first] = surface_newton(finite, geometry, x[first], basis, orbit=orbit)
    copies = np.flatnonzero(owners != np.arange(len(x)))
    if len(copies):
        turned = symmetry.carried_around(solved[owners[copies]], x[owners[copies]], x[copies])
        solved[copies] = geometry.project_to_surface(turned, basis)
    return solved


def with_finite_size(problem, grid, equilibria, symmetry=None) -> tuple:
    """The point model's equilibria with their finite-size corrections.

    They are re-solved with the finite model when the largest correction exceeds the threshold
    (or problem.finite_probe forces it), joined by those the finite-model scan seeds, and each
    gets its rule's check.

    Parameters
    ----------
    problem : TrapProblem
    grid : ScanGrid
    equilibria : list of Equilibrium
        The point model's.
    symmetry : Symmetry or None
        The scene's (resolve_contacts).

    Returns
    -------
    equilibria : list of Equilibrium
    final_model : ProbeModel
        The model the returned equilibria were solved with.
    summary : FiniteProbe
    flood_grid : ScanGrid
        The energies the escape flood runs on: the finite scan's near the magnets when the
        finite model was used, else the point model's grid.
    """
    finite = finite_probe_model(problem.field_model, problem.law, equilibria)
    corrections = finite_correction(problem, finite, equilibria, grid)
    largest = float(corrections.max()) if len(corrections) else 0.0
    threshold = problem.tolerances.finite_probe_threshold
    forced = problem.finite_probe
    use_finite = (largest > threshold) if forced is None else bool(forced)
    use_finite = use_finite and finite is not None
    equilibria = [replace(e, finite_probe_correction=float(c))
                  for e, c in zip(equilibria, corrections)]
    flood_grid = grid
    if use_finite:
        scanned = finite_scan(problem, grid, finite)
        equilibria = resolve_finite(problem, finite, equilibria, symmetry)
        orbit = orbit_of(symmetry, problem.spacing)
        seeded = seeded_equilibria(problem, finite, scanned, equilibria, orbit)
        equilibria = rule_checks(finite, drop_repeats(equilibria + seeded,
                                                      1e-2 * problem.spacing), orbit)
        flood_grid = scanned.grid
    final_model = finite if use_finite else problem.point_model
    return (equilibria, final_model, finite_summary(problem, finite, use_finite, largest),
            flood_grid)
