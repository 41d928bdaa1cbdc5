"""`trapscape traps SCENE [--json FILE]`: the probe's equilibria with their classification, a
table on the terminal and JSON as DESIGN.md, Command line (null, never NaN)."""
from __future__ import annotations

import numpy as np

from trapscape.viewers.commands.common import (add_scene_arguments, load_scene_from_args, progress,
                                     stamp, write_json)


def add_arguments(parser) -> None:
    add_scene_arguments(parser)
    parser.add_argument("--json", metavar="FILE", help="write the equilibria as JSON")


def run(args) -> int:
    from trapscape.physics.field.model import FieldModel
    from trapscape.physics.traps.search import find_traps

    scene = load_scene_from_args(args)
    model = FieldModel.from_scene(scene)
    with progress(args, desc="scan") as update:
        report = find_traps(model, scene, progress=update)
    print(format_table(report, scene))
    if args.json:
        write_json(args.json, stamp(scene, report_json(report, scene)))
        print(f"wrote {args.json}")
    return 0


# -- JSON -----------------------------------------------------------------------------------------

def _length(scene, metres):
    return None if metres is None else np.asarray(metres, float) / scene.unit_scale


def equilibrium_json(eq, scene) -> dict:
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
        "well_interval": (None if not (eq.well and eq.well.interval_m)
                          else _length(scene, eq.well.interval_m)),
        "contact": None if eq.contact is None else {
            "surface": eq.contact.surface, "normal_force_N": eq.contact.normal_force_N},
        "family_size": eq.family_size,
        "finite_probe_correction": eq.finite_probe_correction,
        "note": eq.note or None,
    }


def report_json(report, scene) -> dict:
    finite = report.finite_probe
    return {
        "constraint": report.constraint_kind,
        "probe": report.probe_kind,
        "equilibria": [equilibrium_json(e, scene) for e in report.equilibria],
        "earnshaw_note": report.earnshaw_note,
        "finite_probe": {"used": finite.used, "model": finite.model,
                         "threshold": finite.threshold,
                         "max_relative_correction": finite.max_relative_correction,
                         "note": finite.note},
        "notes": list(report.notes),
        "caution": report.caution,
    }


# -- the table ------------------------------------------------------------------------------------

def _number(value, digits=3):
    if value is None or not np.isfinite(value):
        return "-"
    return f"{value:.{digits}g}"


def _numbers(values, digits=3):
    return " ".join(_number(v, digits) for v in values) if len(values) else "-"


def _tidy(values, size):
    """Rounding noise (below 1e-9 of the box) shown as 0 in the table; the JSON keeps it."""
    values = np.asarray(values, float)
    return np.where(np.abs(values) < 1e-9 * size, 0.0, values)


def format_table(report, scene) -> str:
    unit = scene.units
    header = (f"{'#':>2}  {'position (' + unit + ')':<26} {'class':<9} {'stiffness N/m':<24} "
              f"{'freq Hz':<18} {'escape J':>9} {'escape N':>9} {'|B| mT':>8}  contact")
    lines = [f"{len(report.equilibria)} equilibria of the {report.probe_kind} probe "
             f"({report.constraint_kind} constraint)", header]
    box = scene.search_box
    size = float(np.max(np.asarray(box.max) - np.asarray(box.min))) / scene.unit_scale
    for i, eq in enumerate(report.equilibria, 1):
        position = ", ".join(f"{v:.4g}" for v in _tidy(_length(scene, eq.position), size))
        escape = eq.escape
        contact = "-" if eq.contact is None else (
            f"{eq.contact.surface} ({_number(eq.contact.normal_force_N)} N)")
        family = f" x{eq.family_size}" if eq.family_size > 1 else ""
        lines.append(
            f"{i:>2}  {position:<26} {eq.classification + family:<9} "
            f"{_numbers(eq.stiffness_N_per_m):<24} {_numbers(eq.frequency_Hz):<18} "
            f"{_number(escape.energy_J if escape else None):>9} "
            f"{_number(escape.force_N if escape else None):>9} "
            f"{_number(1e3 * np.linalg.norm(eq.B_T)):>8}  {contact}")
    if not report.equilibria:
        lines.append("    (none found in the search box)")
    if report.earnshaw_note:
        lines += ["", report.earnshaw_note]
    lines += ["", report.finite_probe.note, *report.notes, "", report.caution]
    return "\n".join(lines)
