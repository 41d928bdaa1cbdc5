"""`trapscape traps SCENE [--json FILE]`: the probe's equilibria with their classification, a
table on the terminal and JSON as DESIGN.md, Command line (null, never NaN)."""
from __future__ import annotations

import numpy as np

from trapscape.viewers.commands.common import (
    add_output_argument,
    add_scene_arguments,
    analysis_from_args,
    check_output_path,
    progress,
    write_json,
)

EXAMPLES = """\
  trapscape traps samples/level_gauge.toml
  trapscape traps samples/level_gauge.toml --set gap=4 -o traps.json
  trapscape traps samples/graphite_stage.toml --quiet | less
"""


def add_arguments(parser) -> None:
    add_scene_arguments(parser)
    add_output_argument(parser, "FILE.json", "also write the equilibria as JSON",
                        former="--json")


def run(args) -> int:
    if args.output:
        check_output_path(args.output, (".json",))
    analysis = analysis_from_args(args)
    with progress(args, desc="scan") as update:
        report = analysis.traps(progress=update)
    print(format_table(report, analysis.scene))
    if args.output:
        write_json(args.output, analysis.traps_result())
        print(f"wrote {args.output}")
    return 0


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
        position = ", ".join(f"{v:.4g}" for v in _tidy(np.asarray(eq.position, float) / scene.unit_scale, size))
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
    exits = [f"  #{i} leaves over {_number(eq.escape.energy_J)} J to {eq.escape.exit_at}"
             for i, eq in enumerate(report.equilibria, 1)
             if eq.escape is not None and eq.escape.exit_at]
    if exits:
        lines += ["", "Ways out (box face, part, or over a pass to another well):", *exits]
    checks = [f"  #{i} stiffness to within {_numbers(eq.rule_check.stiffness_difference_N_per_m)}"
              f" N/m, energy to {_number(eq.rule_check.energy_difference_J)} J"
              for i, eq in enumerate(report.equilibria, 1) if eq.rule_check is not None]
    if checks:
        lines += ["", "Finite-size rule error (the rule against a coarser one):", *checks]
    lines += ["", report.finite_probe.note, *report.notes, "", report.caution]
    return "\n".join(lines)
