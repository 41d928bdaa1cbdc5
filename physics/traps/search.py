"""Where the probe comes to rest: equilibria, their classification, wells and escape figures.

find_traps(field_model, scene) builds the frozen TrapProblem once and runs the stages on it:
scan (the probe's energy on the grid restricted to the constraint, where it fits: clearance >=
d/2), refine (candidate cells where every projected force component changes sign, and for a
magnet probe free to turn the minima of |B|, refined by Newton's method), contact equilibria
(the probe resting on a magnet or plate, followed along the surface from the grid's lowest cells
next to it), families (duplicates and circles of marginal equilibria merged), finite size (a
probe not small against the field's variation re-solved with physics.probe.finite), wells and
escape (priority flood, physics.traps.escape), the notes, and last the families of equilibria
that are one answer (physics.traps.family_grouping, with the scene's symmetry of
physics.traps.symmetry). Deterministic: no random numbers.

The names other modules import from here (the report's dataclasses, classify, CAUTION,
levitation_threshold, scan_grid_geometry, ...) live in the stage modules and are re-exported.
"""
from __future__ import annotations

from trapscape.physics.traps.classify import classify
from trapscape.physics.traps.contact_equilibria import contact_equilibria, starts_were_capped
from trapscape.physics.traps.families import merge_families
from trapscape.physics.traps.family_grouping import trap_families
from trapscape.physics.traps.finite_size import finite_probe_model, with_finite_size
from trapscape.physics.traps.notes import (CAUTION, EARNSHAW_NOTE, NO_LEVITATION_NOTE,
                                           contact_limit_note, earnshaw_note)
from trapscape.physics.probe.kinds.weak import levitation_threshold
from trapscape.physics.traps.problem import (FIELD_ZERO_RATIO, FINITE_PROBE_THRESHOLD,
                                             MARGINAL_RATIO, MAX_CONTACT_STARTS,
                                             NEWTON_ITERATIONS, TrapProblem)
from trapscape.physics.traps.refine import free_equilibria, local_field_scale
from trapscape.physics.traps.report import (Contact, Equilibrium, Escape, FiniteProbe, ScanGrid,
                                            TrapReport, Well)
from trapscape.physics.traps.scan import scan, scan_grid_geometry
from trapscape.physics.traps.symmetry import scene_symmetry
from trapscape.physics.traps.wells import with_escapes

__all__ = [
    "find_traps", "TrapReport", "Equilibrium", "Contact", "Escape", "Well", "ScanGrid",
    "FiniteProbe", "classify", "levitation_threshold", "local_field_scale", "finite_probe_model",
    "scan_grid_geometry", "CAUTION", "EARNSHAW_NOTE", "NO_LEVITATION_NOTE", "MARGINAL_RATIO",
    "FINITE_PROBE_THRESHOLD", "NEWTON_ITERATIONS", "FIELD_ZERO_RATIO", "MAX_CONTACT_STARTS",
]


def find_traps(field_model, scene, progress=None, finite_probe: bool | None = None,
               starts=None) -> TrapReport:
    """Every equilibrium of the scene's probe in its search box, classified.

    With escape figures for the wells (see the module's docstring).

    Parameters
    ----------
    field_model : physics.field.model.FieldModel
        Built from the same scene.
    scene : scene.model.Scene
        SI.
    progress : callable(done, total, stage) or None
        Told how the scan advances, then each later stage by name with done and total None
        (a stage with no count: "equilibria", "finite size", "escapes").
    finite_probe : bool or None
        None: use the probe's finite size when it changes the energy by more than
        FINITE_PROBE_THRESHOLD (relative); True/False force it.
    starts : array_like, shape (M, 3), optional
        Points to refine from besides the grid's candidates, m (continuation in a sweep).

    Returns
    -------
    TrapReport
        Equilibria sorted along the line, else by energy; SI.

    Raises
    ------
    SearchSetupError
        A ValueError: the constraint's line or plane does not cross the search box (one
        sentence naming the scene file and how to fix it; the layer above turns it into a
        SceneError).
    """
    problem = TrapProblem.from_scene(field_model, scene, finite_probe)
    grid = scan(problem, progress)
    _stage(progress, "equilibria")
    symmetry = scene_symmetry(problem)
    equilibria = (free_equilibria(problem, grid, starts)
                  + contact_equilibria(problem, grid, symmetry))
    limit = problem.tolerances.max_contact_starts
    notes = (contact_limit_note(limit),) if starts_were_capped(problem, grid) else ()
    equilibria = merge_families(equilibria, problem.spacing)
    _stage(progress, "finite size")
    equilibria, final_model, finite_summary, flood_grid = with_finite_size(
        problem, grid, equilibria, symmetry)
    _stage(progress, "escapes")
    equilibria = _sorted(problem, with_escapes(problem, grid, equilibria, final_model,
                                               flood_grid))
    equilibria, families = trap_families(equilibria, symmetry, problem.spacing)
    return TrapReport(
        probe_kind=problem.law.kind, constraint_kind=problem.constraint_kind,
        free_directions=problem.free_directions, equilibria=tuple(equilibria), grid=grid,
        finite_probe=finite_summary, earnshaw_note=earnshaw_note(problem, equilibria),
        notes=notes, families=tuple(families), symmetry=symmetry,
        marginal_ratio=problem.tolerances.marginal_ratio)


def _stage(progress, name) -> None:
    """Tell progress that a stage with no count begins (a long run must not look hung)."""
    if progress is not None:
        progress(None, None, name)


ORDER_ENERGY = 1e-7  # relative: a run of energies with steps this small sorts as one (the
# images of a trap, equal but for rounding and the solver's last digits)
ORDER_POSITION = 1e-8  # m: likewise for coordinates (contacts' images agree to about 1e-11 m)


def _sorted(problem, equilibria) -> list:
    """Along the line (DESIGN.md, `traps` JSON), else by energy; ties by x, then y, then z.

    A tie is a run of values whose steps are below ORDER_ENERGY (relative) or ORDER_POSITION:
    the images of one trap come in an order that the last bits do not set.
    """
    if problem.constraint_kind == "line":
        return sorted(equilibria, key=lambda e: (e.coordinate_m, e.energy_J))
    keys = [lambda e: e.energy_J] + [lambda e, a=a: e.position[a] for a in range(3)]
    slack = [lambda u, v: ORDER_ENERGY * max(abs(u), abs(v))] + [lambda u, v: ORDER_POSITION] * 3
    return _in_runs(list(equilibria), keys, slack)


def _in_runs(items, keys, slack) -> list:
    """items sorted by keys[0]; each run of it (steps within slack) sorted by the next keys."""
    if len(items) < 2 or not keys:
        return items
    key, within = keys[0], slack[0]
    items = sorted(items, key=key)
    ordered, run = [], [items[0]]
    for before, item in zip(items, items[1:]):
        if key(item) - key(before) > within(key(item), key(before)):
            ordered += _in_runs(run, keys[1:], slack[1:])
            run = []
        run.append(item)
    return ordered + _in_runs(run, keys[1:], slack[1:])
