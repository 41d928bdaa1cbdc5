"""The JSON results of `check`, `traps` and `hold` (DESIGN.md, Command line): lengths in the
scene's unit, everything else SI, stamped with the length unit, the tool's version and the
scene's hash, and made JSON-safe (numpy to Python, NaN and inf to null)."""
from __future__ import annotations

import math

import numpy as np

from trapscape.physics.analysis.trap_words import (describe_family, headline_sentence,
                                                   margin_warnings, symmetry_words)
from trapscape.scene.measures import mass, moment_world, scene_bounding_box, volume

HOLD_NOTES = (
    "The plate is a perfect magnetic mirror (each magnet pulled by its image): this overstates "
    "the pull where the plate saturates or is thin, and for rough, painted or non-flat steel.",
    "Slip = friction x pull is the usual estimate (common practice).",
    "Peel torque: pull x distance from the centre of pull to the nearest footprint edge, at the "
    "onset of tipping.",
)
SEVERAL_PLATES_NOTE = (
    "Several plates: each magnet has one image in each plate (first order); the gap and the pull "
    "refer to the plate named here.")
HOLD_CAUTIONS = (
    "Magnets snap onto steel: keep fingers and skin out of the gap (pinching).",
    "Sintered magnets are brittle and chip or shatter when they strike steel or each other; "
    "wear eye protection.",
    "Keep strong magnets away from implanted medical devices (pacemakers, defibrillators) and "
    "out of children's reach (swallowed magnets are dangerous).",
    "These figures are estimates: verify them against the supplier's data, test the real "
    "assembly, and follow the local codes for lifting and holding loads.",
)


def tool_version() -> str:
    """The tool's version for the JSON stamp.

    Returns
    -------
    str
        The installed trapscape version, or "unknown" when run from a bare checkout.
    """
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version("trapscape")
    except PackageNotFoundError:
        return "unknown"


def stamp(scene, payload: dict) -> dict:
    """The payload headed by what every JSON output carries.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene
        The scene the payload was computed from.
    payload : dict
        A result of `check_json`, `traps_json` or `hold_json`.

    Returns
    -------
    dict
        ``length_unit``, ``trapscape_version``, ``scene`` (its path) and ``scene_sha256``,
        then the payload's keys.
    """
    head = {"length_unit": scene.units, "trapscape_version": tool_version(),
            "scene": scene.path, "scene_sha256": scene.digest}
    return {**head, **payload}


def json_ready(value):
    """A copy of `value` that json.dump takes with allow_nan=False.

    Parameters
    ----------
    value : object
        Nested dicts, lists and tuples of numbers, strings, numpy scalars and arrays.

    Returns
    -------
    object
        The same structure of plain Python values; NaN and infinities become None.
    """
    if isinstance(value, dict):
        return {str(k): json_ready(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [json_ready(v) for v in value]
    if isinstance(value, np.ndarray):
        return json_ready(value.tolist())
    if isinstance(value, (np.floating, float)):
        value = float(value)
        return value if math.isfinite(value) else None
    if isinstance(value, np.integer):
        return int(value)
    if isinstance(value, np.bool_):
        return bool(value)
    return value


# -- check ------------------------------------------------------------------------------------

def check_json(scene) -> dict:
    """The payload of `check` (before stamping): parts, totals, boxes, probe.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene
        A loaded scene.

    Returns
    -------
    dict
        Per part its name, shape, grade, volume_m3, mass_kg, moment_Am2, remanence_T,
        north_world and position (scene unit); total_moment_Am2, bounding_box, search_box,
        probe, constraint, steel_plates, params, and null safety and shipping (which
        physics.analysis.run.Analysis.check_result fills from physics.analysis.safety).
    """
    parts = []
    moments = [_tidy(moment_world(m), 1e-12) for m in scene.magnets]
    for magnet, moment in zip(scene.magnets, moments):
        north = magnet.north_world
        parts.append({
            "name": magnet.name, "shape": magnet.shape, "grade": magnet.grade,
            "volume_m3": volume(magnet), "mass_kg": mass(magnet),
            "moment_Am2": moment.tolist(), "remanence_T": magnet.remanence,
            "north_world": magnet.radial if north is None else np.round(north, 12).tolist(),
            "position": scene.to_file_units(magnet.position).tolist(),
        })
    low, high = scene_bounding_box(scene.magnets)
    # parts that cancel leave round-off (STL vertices are float32: ~1e-7 of each part)
    total = _tidy(np.sum(moments, axis=0), 1e-6, scale=sum(np.linalg.norm(m) for m in moments))
    box = scene.search_box
    return {
        "title": scene.title,
        "parts": parts,
        "total_moment_Am2": total.tolist(),
        "bounding_box": {"min": scene.to_file_units(low).tolist(),
                         "max": scene.to_file_units(high).tolist()},
        "search_box": {"min": scene.to_file_units(box.min).tolist(),
                       "max": scene.to_file_units(box.max).tolist(),
                       "spacing": float(scene.to_file_units(box.spacing)),
                       "shape": list(box.shape())},
        "probe": {"kind": scene.probe.kind,
                  "diameter": float(scene.to_file_units(scene.probe.diameter)),
                  "mass_kg": scene.probe.mass},
        "constraint": scene.constraint.kind,
        "steel_plates": [p.name for p in scene.plates],
        "params": scene.params,
        "safety": None,
        "shipping": None,
    }


def _tidy(vector, relative: float, scale: float | None = None) -> np.ndarray:
    """Components below `relative` of the scale (default: the vector's length) set to 0."""
    vector = np.asarray(vector, float)
    scale = float(np.linalg.norm(vector)) if scale is None else scale
    return np.where(np.abs(vector) <= relative * scale, 0.0, vector) + 0.0


# -- traps ------------------------------------------------------------------------------------

def _length(scene, metres):
    return None if metres is None else np.asarray(metres, float) / scene.unit_scale


def equilibrium_json(eq, scene) -> dict:
    """One equilibrium of a trap report as in the `traps` JSON.

    Parameters
    ----------
    eq : trapscape.physics.traps.search.Equilibrium
        The equilibrium (SI).
    scene : trapscape.scene.model.Scene
        Its scene, for the length unit.

    Returns
    -------
    dict
        position and coordinate in the scene's unit, class, directions, stiffnesses,
        frequencies, B, energy, escape figures, well interval, contact, family size, notes.
    """
    escape = eq.escape
    return {
        "position": _length(scene, eq.position),
        "coordinate": _length(scene, eq.coordinate_m),
        "class": eq.classification,
        "stable_directions": eq.stable_directions,
        "free_directions": eq.free_directions,
        "stiffness_N_per_m": list(eq.stiffness_N_per_m),
        "directions": eq.directions,
        "frequency_Hz": list(eq.frequency_Hz),
        "B_T": eq.B_T,
        "energy_J": eq.energy_J,
        "escape_energy_J": escape.energy_J if escape else None,
        "escape_force_N": escape.force_N if escape else None,
        "escape_exit": escape.exit if escape else None,
        "escape_exit_at": escape.exit_at if escape else None,
        "escape_exit_position": (None if not (escape and escape.exit_position is not None)
                                 else _length(scene, escape.exit_position)),
        "well_interval": (None if not (eq.well and eq.well.interval_m)
                          else _length(scene, eq.well.interval_m)),
        "contact": None if eq.contact is None else {
            "surface": eq.contact.surface, "normal_force_N": eq.contact.normal_force_N},
        "family_size": eq.family_size,
        "family": eq.family,
        "finite_probe_correction": eq.finite_probe_correction,
        "finite_probe_rule": None if eq.rule_check is None else {
            "rule": eq.rule_check.rule, "check_rule": eq.rule_check.check_rule,
            "energy_error_estimate_J": eq.rule_check.energy_difference_J,
            "stiffness_error_estimate_N_per_m": list(eq.rule_check.stiffness_difference_N_per_m)},
        "note": eq.note or None,
    }


def symmetry_json(symmetry, scene) -> dict | None:
    """The scene's symmetry as the `traps` JSON gives it.

    Parameters
    ----------
    symmetry : trapscape.physics.traps.symmetry.Symmetry or None
    scene : trapscape.scene.model.Scene
        For the length unit.

    Returns
    -------
    dict or None
        description (words), rotation_order (0: every angle, 1: none), axis, centre (scene
        unit), mirror_planes, alternating (an operation reverses every polarity).
    """
    if symmetry is None:
        return None
    return {"description": symmetry_words(symmetry, scene),
            "rotation_order": symmetry.order,
            "axis": None if symmetry.axis is None else symmetry.axis,
            "centre": _length(scene, symmetry.centre),
            "mirror_planes": symmetry.mirror_planes,
            "alternating": symmetry.alternating}


def family_json(family, report, scene) -> dict:
    """One family of the `traps` JSON.

    Parameters
    ----------
    family : trapscape.physics.traps.report.Family
    report : trapscape.physics.traps.search.TrapReport
    scene : trapscape.scene.model.Scene
        For the length unit.

    Returns
    -------
    dict
        number, class, count, kind, members and representative (1-based numbers of the
        equilibria), circle (radius, centre, axis in the scene's unit) or null, the escape
        force's and the energy's range, the surfaces, and the words of `describe_family`.
    """
    circle = family.circle
    force = family.escape_force_N
    return {
        "number": family.number,
        "class": family.classification,
        "count": len(family.members),
        "kind": family.kind,
        "members": [i + 1 for i in family.members],
        "representative": family.representative + 1,
        "circle": None if circle is None else {"radius": _length(scene, circle.radius_m),
                                               "centre": _length(scene, circle.centre),
                                               "axis": circle.axis},
        "escape_force_N": None if force is None else {"min": force[0], "max": force[1]},
        "energy_J": {"min": family.energy_J[0], "max": family.energy_J[1]},
        "surfaces": list(family.surfaces),
        "description": describe_family(family, report, scene),
    }


def traps_json(report, scene) -> dict:
    """The payload of `traps` (before stamping).

    Parameters
    ----------
    report : trapscape.physics.traps.search.TrapReport
        What find_traps returned for the scene.
    scene : trapscape.scene.model.Scene
        The scene, for the length unit.

    Returns
    -------
    dict
        constraint, probe, symmetry (`symmetry_json`), families (`family_json`), warnings
        (small margins, `trap_words.margin_warnings`), equilibria (see `equilibrium_json`;
        each names its family), headline, earnshaw_note, finite_probe, notes and caution.
    """
    finite = report.finite_probe
    return {
        "constraint": report.constraint_kind,
        "probe": report.probe_kind,
        "symmetry": symmetry_json(report.symmetry, scene),
        "families": [family_json(f, report, scene) for f in report.families],
        "warnings": margin_warnings(report, scene),
        "equilibria": [equilibrium_json(e, scene) for e in report.equilibria],
        "headline": headline_sentence(report, scene),
        "earnshaw_note": report.earnshaw_note,
        "finite_probe": {"used": finite.used, "model": finite.model,
                         "threshold": finite.threshold,
                         "max_relative_correction": finite.max_relative_correction,
                         "note": finite.note},
        "notes": list(report.notes),
        "caution": report.caution,
    }


# -- hold -------------------------------------------------------------------------------------

def hold_json(scene, hold) -> dict:
    """The payload of `hold` (before stamping).

    Parameters
    ----------
    scene : trapscape.scene.model.Scene
        The scene, for the length unit.
    hold : trapscape.physics.analysis.holding.HoldResult
        The pull curve and what it was asked for.

    Returns
    -------
    dict
        plate, part, friction, plate thickness (scene unit) and saturation, one row per gap
        (gap in the scene's unit, pull, slip, peel torque, plate flux density, warning), the
        saturation onset gap (scene unit or null), notes and cautions.
    """
    unit = scene.unit_scale
    plate = hold.plate
    onset = None if hold.saturation_onset_gap_m is None else hold.saturation_onset_gap_m / unit
    return {
        "plate": plate.name, "part": hold.part, "friction": hold.friction,
        "plate_thickness": plate.thickness / unit, "plate_saturation_T": plate.saturation,
        "rows": [{"gap": r.gap / unit, "pull_N": r.pull, "slip_N": r.slip,
                  "saturation_warning": r.saturation_warning, "peel_torque_N_m": r.peel_torque,
                  "plate_flux_density_T": r.plate_flux_density} for r in hold.rows],
        "saturation_onset_gap": onset,
        "notes": list(HOLD_NOTES) + ([SEVERAL_PLATES_NOTE] if len(scene.plates) > 1 else []),
        "cautions": list(HOLD_CAUTIONS),
    }
