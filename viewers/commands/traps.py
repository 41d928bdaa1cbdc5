"""`trapscape traps SCENE [-o FILE] [--units ...]`: the probe's equilibria with their
classification, a table on the terminal in the reader's display units and JSON as DESIGN.md,
Command line (SI, null, never NaN)."""
from __future__ import annotations

import numpy as np

from trapscape.viewers.commands.common import (
    add_output_argument,
    add_scene_arguments,
    add_units_argument,
    analysis_from_args,
    check_output_path,
    check_units,
    display_units,
    progress,
    write_json,
)

EXAMPLES = """\
  trapscape traps samples/level_gauge.toml
  trapscape traps samples/level_gauge.toml --set gap=4 -o traps.json
  trapscape traps samples/graphite_stage.toml --quiet | less
  trapscape traps samples/bead_pair.toml --units gauss,lbf,in
"""


def add_arguments(parser) -> None:
    add_scene_arguments(parser)
    add_output_argument(parser, "FILE.json", "also write the equilibria as JSON (SI, lengths "
                        "in the scene's unit, whatever --units says)", former="--json")
    add_units_argument(parser)


def run(args) -> int:
    check_units(args)
    if args.output:
        check_output_path(args.output, (".json",))
    analysis = analysis_from_args(args)
    with progress(args, desc="scan") as update:
        report = analysis.traps(progress=update)
    print(format_table(report, analysis.scene, display_units(args, analysis.scene)))
    if args.output:
        write_json(args.output, analysis.traps_result())
        print(f"wrote {args.output}")
    return 0


# -- the table ------------------------------------------------------------------------------------

def _number(value, digits=3):
    if value is None or not np.isfinite(value):
        return "-"
    return f"{value:.{digits}g}"


def _field_number(value, units) -> str:
    """|B| to three digits; in gauss, thousands written out (3580, not 3.58e+03)."""
    if units.field == "gauss" and np.isfinite(value) and 1e3 <= abs(value) < 1e7:
        return f"{float(f'{value:.3g}'):.0f}"
    return _number(value)


def _range(pair, digits=3):
    if pair is None:
        return "-"
    low, high = (_number(v, digits) for v in pair)
    return low if low == high else f"{low}-{high}"


def _scaled(pair, convert):
    """A (low, high) pair in display units; None stays None."""
    return None if pair is None else tuple(convert(v) for v in pair)


def _tidy(values, size):
    """Rounding noise (below 1e-9 of the box) shown as 0 in the table; the JSON keeps it."""
    values = np.asarray(values, float)
    return np.where(np.abs(values) < 1e-9 * size, 0.0, values)


def _ring_frame(family, eq):
    ring = family.circle
    return None if ring is None else (ring.centre, ring.axis, eq.position)


ZERO_STIFFNESS = 1e-9  # of the largest: printed as 0


def _stiffness_words(eq, frame, units) -> str:
    from trapscape.physics.analysis.trap_words import along_words

    if eq.stiffness_N_per_m and eq.stiffness_N_per_m[0] is None:
        return "undefined (B = 0)"
    if not len(eq.stiffness_N_per_m):
        return "none (no free direction)"
    parts = []
    top = max(abs(k) for k in eq.stiffness_N_per_m)
    for k, direction, f in zip(eq.stiffness_N_per_m, eq.directions, eq.frequency_Hz):
        freq = f", {_number(f)} Hz" if f is not None else ""
        k = 0.0 if abs(k) <= ZERO_STIFFNESS * top else k  # a circle's, zero but for rounding
        parts.append(f"{_number(units.stiffness(k))} {along_words(direction, frame)}{freq}")
    return "; ".join(parts)


def _rule_spread(eq, family, units) -> str:
    """'0.98 N/m along x and 11 N/m radially': one per stiffness above; a direction where both
    rules agree to rounding (around a ring, where the symmetry fixes it) is left out."""
    from trapscape.physics.analysis.trap_words import along_words

    frame = _ring_frame(family, eq)
    top = max(abs(k) for k in eq.stiffness_N_per_m)
    parts = [f"{_number(units.stiffness(v))} {units.stiffness_label} {along_words(d, frame)}"
             for v, d in zip(eq.rule_check.stiffness_difference_N_per_m, eq.directions)
             if v > ZERO_STIFFNESS * top]
    if not parts:
        return f"0 {units.stiffness_label}"
    return " and ".join([", ".join(parts[:-1]), parts[-1]] if len(parts) > 1 else parts)


def format_table(report, scene, units=None) -> str:
    """The headline, the margin warnings, one row per family, and what each family is, in the
    reader's display units (default: the scene's length unit, N and mT)."""
    from trapscape.physics.analysis.display_units import scene_units
    from trapscape.physics.analysis.trap_words import (describe_family, headline_sentence,
                                                       margin_warnings, multiple,
                                                       probe_weight_N, symmetry_words)

    units = units or scene_units(scene)
    unit = units.length_label
    box = scene.search_box
    size = units.L(float(np.max(np.asarray(box.max) - np.asarray(box.min))))
    weight = probe_weight_N(scene)
    lines = [headline_sentence(report, scene, units), *margin_warnings(report, scene, units), ""]
    families = report.families
    lines.append(f"{len(report.equilibria)} equilibria of the {report.probe_kind} probe "
                 f"({report.constraint_kind} constraint) in {len(families)} families; "
                 f"symmetry of the scene: {symmetry_words(report.symmetry, scene, units)}.")
    lines.append("A family is one answer: equilibria that are images of each other under that "
                 "symmetry, points of one circle (a contact ring), or neighbouring points of one "
                 "contact curve; "
                 "'count' says how many, the JSON lists each.")
    force_title, field_title = f"escape force {units.force_label}", f"|B| {units.field_label}"
    force_width, field_width = max(14, len(force_title)), max(7, len(field_title))
    header = (f"{'#':>2}  {'count':>5}  {'class':<8} {'position of one member (' + unit + ')':<30} "
              f"{force_title:>{force_width}} {'x weight':>11} "
              f"{'escape energy J':>15} {field_title:>{field_width}}  resting on")
    lines.append(header)
    for family in families:
        eq = report.equilibria[family.representative]
        position = ", ".join(f"{v:.4g}" for v in _tidy(units.L(np.asarray(eq.position, float)),
                                                       size))
        force = family.escape_force_N
        ratio = "-"
        if force is not None and weight > 0:
            low, high = multiple(force[0] / weight), multiple(force[1] / weight)
            ratio = low if low == high else f"{low}-{high}"
        escape = eq.escape
        contact = ", ".join(family.surfaces) or "- (free)"
        lines.append(
            f"{family.number:>2}  {len(family.members):>5}  {family.classification:<8} "
            f"{position:<30} {_range(_scaled(force, units.F)):>{force_width}} {ratio:>11} "
            f"{_number(escape.energy_J if escape else None):>15} "
            f"{_field_number(units.B(np.linalg.norm(eq.B_T)), units):>{field_width}}  {contact}")
    if not report.equilibria:
        lines.append("    (none found in the search box)")
    if families:
        lines += ["", "What each family is:"]
        lines += [f"  #{f.number} {describe_family(f, report, scene, units)}" for f in families]
        lines += ["", f"Stiffness ({units.stiffness_label}) of the member shown, softest first, "
                  "with its direction and its frequency of small oscillations (Hz):"]
        for f in families:
            shown = report.equilibria[f.representative]
            lines.append(f"  #{f.number} " + _stiffness_words(shown, _ring_frame(f, shown),
                                                               units))
    if report.earnshaw_note:
        lines += ["", report.earnshaw_note]
    exits = []
    for f in families:
        eq = report.equilibria[f.representative]
        if eq.escape is not None and eq.escape.exit_at:
            exits.append(f"  #{f.number} leaves over {_number(eq.escape.energy_J)} J to "
                         f"{eq.escape.exit_at}")
    if exits:
        lines += ["", "Ways out (box face, part, or over a pass to another well):", *exits]
    checks = []
    for f in families:
        eq = report.equilibria[f.representative]
        if eq.rule_check is not None:
            checks.append(f"  #{f.number} stiffness to within {_rule_spread(eq, f, units)}; "
                          f"energy to {_number(eq.rule_check.energy_difference_J)} J")
    if checks:
        lines += ["", "Finite-size rule error (the rule against a coarser one):", *checks]
    lines += ["", report.finite_probe.note, *report.notes, "", report.caution]
    return "\n".join(lines)
