"""`trapscape check SCENE [-o FILE] [--units ...]`: validate a scene and list its parts.

The table gives each part's shape, volume, mass, magnetic moment (A m^2), remanence and where
its north points in world axes; then the total moment and the magnets' bounding box, lengths,
fields and forces in the reader's display units. The JSON (DESIGN.md, Command line) holds the
same per part, lengths in the scene's unit, the rest SI, whatever --units says.
"""
from __future__ import annotations

import sys
import warnings

import numpy as np

from trapscape.scene.errors import SceneWarning
from trapscape.viewers.commands.common import (
    add_output_argument,
    add_scene_arguments,
    add_units_argument,
    analysis_from_args,
    check_output_path,
    check_units,
    display_units,
    write_json,
)

AXIS_NAMES = {(1, 0, 0): "+x", (-1, 0, 0): "-x", (0, 1, 0): "+y", (0, -1, 0): "-y",
              (0, 0, 1): "+z", (0, 0, -1): "-z"}


EXAMPLES = """\
  trapscape check samples/level_gauge.toml
  trapscape check samples/level_gauge.toml --set gap=4 -o check.json
  trapscape check samples/holding_plate.toml --units gauss,lbf,in
"""


def add_arguments(parser) -> None:
    add_scene_arguments(parser)
    add_output_argument(parser, "FILE.json", "also write the parts and totals as JSON (SI, "
                        "lengths in the scene's unit, whatever --units says)", former="--json")
    add_units_argument(parser)


def run(args) -> int:
    check_units(args)
    if args.output:
        check_output_path(args.output, (".json",))
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", SceneWarning)
        analysis = analysis_from_args(args)
    for warning in caught:  # one line each on stderr, like errors
        if issubclass(warning.category, SceneWarning):
            print(f"trapscape: warning: {warning.message}", file=sys.stderr)
        else:
            warnings.showwarning(warning.message, warning.category, warning.filename,
                                 warning.lineno)
    result = analysis.check_result()
    if args.output:  # first, so the file is there even if the table's reader goes away
        write_json(args.output, result)
    units = display_units(args, analysis.scene)
    print(format_table(analysis.scene, result, units))
    print(format_safety(analysis.scene, result, units))
    return 0


def north_words(vector) -> str:
    """'+z' for an axis, else the rounded vector."""
    if vector is None:
        return ""
    rounded = np.round(np.asarray(vector, float), 6)
    key = tuple(int(v) if v in (-1.0, 0.0, 1.0) else None for v in rounded + 0.0)
    if key in AXIS_NAMES:
        return AXIS_NAMES[key]
    return "[" + ", ".join(f"{v:.3f}" for v in rounded + 0.0) + "]"


def summarise(scene) -> dict:
    """The JSON payload of `check` (before stamping): physics.analysis.results.check_json."""
    from trapscape.physics.analysis.results import check_json

    return check_json(scene)


def format_table(scene, summary, units=None) -> str:
    """The parts, totals and boxes, lengths and fields in the reader's units (default: the
    scene's length unit and T)."""
    from trapscape.physics.analysis.display_units import scene_units

    units = units or scene_units(scene)
    unit = units.length_label

    def length(values):  # the JSON's lengths are in the scene's unit
        return units.L_from(np.asarray(values, float), scene.units)

    header = ["name", "shape", f"volume {unit}^3", "mass g", "moment A m^2", "|m| A m^2",
              f"Br {units.strong_field_label}", "north (world)"]
    rows = []
    for magnet, part in zip(scene.magnets, summary["parts"]):
        moment = np.asarray(part["moment_Am2"])
        rows.append([
            part["name"], part["shape"] + (f" {magnet.grade}" if magnet.grade else ""),
            f"{units.V(part['volume_m3']):.4g}",
            "?" if part["mass_kg"] is None else f"{part['mass_kg'] * 1e3:.4g}",
            "[" + ", ".join(f"{v:+.3g}" for v in moment + 0.0) + "]",
            f"{np.linalg.norm(moment):.4g}", f"{units.strong_B(part['remanence_T']):.3g}",
            magnet.radial if magnet.radial else north_words(magnet.north_world)])
    widths = [max(len(str(r[k])) for r in rows + [header]) for k in range(len(header))]
    lines = [f"{scene.title}: {len(rows)} part(s), units {scene.units}"
             + ("" if unit == scene.units else f", shown in {unit}")]
    lines += ["  ".join(str(c).ljust(w) for c, w in zip(row, widths)).rstrip()
              for row in [header, ["-" * w for w in widths]] + rows]
    total = np.asarray(summary["total_moment_Am2"])
    low, high = summary["bounding_box"]["min"], summary["bounding_box"]["max"]
    box = summary["search_box"]
    lines += [
        f"total moment: [{', '.join(f'{v:+.4g}' for v in total + 0.0)}] A m^2 "
        f"(|m| = {np.linalg.norm(total):.4g})",
        f"bounding box: {_triple(length(low))} .. {_triple(length(high))} {unit}",
        f"search box:   {_triple(length(box['min']))} .. {_triple(length(box['max']))} {unit}, "
        f"spacing {length(box['spacing']):.3g} {unit}, grid "
        f"{' x '.join(str(n) for n in box['shape'])}",
        f"probe: {scene.probe.kind}, diameter {length(summary['probe']['diameter']):.3g} {unit}, "
        f"constraint {scene.constraint.kind}"
        + (f"; steel plates: {', '.join(summary['steel_plates'])}" if scene.plates else ""),
    ]
    if any(p["mass_kg"] is None for p in summary["parts"]):
        lines.append("mass ?: the part gives remanence without density; add density = 7500 "
                     "(kg/m^3) to its [[magnet]] to get its mass.")
    return "\n".join(lines)


def format_safety(scene, summary, units=None) -> str:
    """The safety, handling and shipping figures and the cautions, as lines for a person, in
    the reader's units (default: the scene's length unit, N and mT)."""
    from trapscape.physics.analysis.display_units import scene_units

    units = units or scene_units(scene)
    unit, safety, shipping = units.length_label, summary["safety"], summary["shipping"]
    field, force = units.field_label, units.force_label

    def length(values):  # the JSON's lengths are in the scene's unit
        return units.L_from(np.asarray(values, float), scene.units)

    lines = ["", "safety (the magnets alone, off any steel plate; estimates from an idealised "
                 "model):",
             f"  implant shell, |B| = {units.B(safety['implant_limit_T']):g} {field} (ICNIRP "
             f"2009): reaches {length(safety['implant_distance_from_surface']):.3g} {unit} from "
             f"the nearest magnet, {length(safety['implant_radius']):.3g} {unit} from the centre "
             f"{_triple(length(safety['implant_centre']))} {unit}"]
    for level in safety["field_levels"]:
        lines.append(f"  {units.B(level['limit_T']):g} {field} ({level['label']}; "
                     f"{level['source'].split(' (')[0]}): "
                     f"{length(level['distance_from_surface']):.3g} {unit} from the magnets")
    forces = safety["part_forces"]
    if len(forces) > 1:
        lines.append("  force and torque on each part from the others, as assembled:")
        rows = [["part", f"|F| {force}", f"F {force}", f"torque {units.torque_label}"]]
        # below a nanonewton is the quadrature's round-off of a force that cancels
        rows += [[f["name"], _amount(f["force_magnitude_N"], 1e-9, units.F),
                  _vector(f["force_N"], 1e-9, units.F),
                  _vector(f["torque_N_m"], 1e-12, units.torque)] for f in forces]
        widths = [max(len(r[k]) for r in rows) for k in range(4)]
        lines += ["    " + "  ".join(c.ljust(w) for c, w in zip(r, widths)).rstrip() for r in rows]
        worst = max(forces, key=lambda f: f["force_magnitude_N"])
        pinch = units.F(safety["pinch_force_N"])
        pinch = f"{pinch:g} {force}" if force == "N" else f"{pinch:.3g} {force}"
        verdict = (f"above {pinch}: parts released here snap and pinch skin (common practice)"
                   if safety["pinch_warning"]
                   else f"below the {pinch} pinch level (common practice)")
        lines.append(f"  largest: {_amount(worst['force_magnitude_N'], 1e-9, units.F)} {force} "
                     f"on '{worst['name']}', {verdict}")
    lines.append(f"  demagnetisation (worst reverse field / HcJ; flagged above "
                 f"{safety['demagnetization_margin']:g}, common practice):")
    for d in safety["demagnetization"]:
        if d["ratio"] is None:
            lines.append(f"    {d['name']}: {d['note']}")
        else:
            flag = "  AT RISK" if d["at_risk"] else ""
            lines.append(f"    {d['name']}: {d['ratio']:.2f} at {d['temperature_C']:g} °C "
                         f"({d['reverse_H_at_temperature_A_per_m'] / 1e3:.0f} of "
                         f"{d['coercivity_A_per_m'] / 1e3:.0f} kA/m){flag}")
    over = [x for x in safety["flux_index"] if x["over_limit"]]
    small = [x["name"] for x in safety["flux_index"] if x["small_part"]]
    worst = max((x for x in safety["flux_index"] if x["index_kG2_mm2"] is not None),
                key=lambda x: x["index_kG2_mm2"], default=None)
    if worst is not None:
        lines.append(f"  flux index (toy standards, limit {safety['flux_index_limit_kG2_mm2']:g} "
                     f"kG^2 mm^2, from memory): largest {worst['index_kG2_mm2']:.3g} "
                     f"('{worst['name']}'); {len(over)} of {len(safety['flux_index'])} part(s) "
                     f"over the limit")
    if small:
        lines.append(f"  {len(small)} part(s) small enough to swallow (small-parts cylinder, "
                     f"from memory)" + (": two or more loose magnets are the gravest case"
                                         if len(small) > 1 else ""))
    size = " x ".join(f"{v:.3g}" for v in length(shipping["package_size"]))
    lines += ["", f"shipping by air ({shipping['regulation']}; {shipping['regulation_note']}):",
              f"  package {size} {unit}"
              + ("" if shipping["package_given"] else f"; warning: {shipping['notes'][0]}"),
              f"  H at 2.1 m: {shipping['H_at_2_1m_A_per_m']:.3g} A/m (limit "
              f"{shipping['limit_at_2_1m_A_per_m']:g}), at 4.6 m: "
              f"{shipping['H_at_4_6m_A_per_m']:.3g} A/m (limit "
              f"{shipping['limit_at_4_6m_A_per_m']:g}): {CLASS_WORDS[shipping['class']]}"]
    lines += [f"  {note}" for note in shipping["notes"] if shipping["package_given"]
              or note != shipping["notes"][0]]
    lines += ["", "cautions:"] + [f"  - {c}" for c in safety["cautions"]]
    return "\n".join(lines)


CLASS_WORDS = {"not-restricted": "not restricted as magnetised material",
               "magnetized-material": "magnetised material (UN2807, class 9)",
               "forbidden": "forbidden without approval"}


def _amount(value, zero: float, convert=float) -> str:
    """`value` (SI) converted for display; '0' at or below `zero` (SI)."""
    return f"{convert(value):.3g}" if abs(value) > zero else "0"


def _vector(values, zero: float = 0.0, convert=float) -> str:
    values = np.asarray(values, float)
    return "[" + ", ".join(f"{convert(v):+.3g}" if abs(v) > zero else "0"
                           for v in values + 0.0) + "]"


def _triple(values) -> str:
    return "(" + ", ".join(f"{v:.4g}" for v in values) + ")"
