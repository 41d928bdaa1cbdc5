"""`trapscape check SCENE [--json FILE]`: validate a scene and list its parts.

The table gives each part's shape, volume, mass, magnetic moment (A m^2), remanence and where
its north points in world axes; then the total moment and the magnets' bounding box. The JSON
(DESIGN.md, Command line) holds the same per part, lengths in the scene's unit, the rest SI.
"""
from __future__ import annotations

import sys
import warnings

import numpy as np

from trapscape.scene.errors import SceneWarning
from trapscape.viewers.commands.common import (
    add_output_argument,
    add_scene_arguments,
    analysis_from_args,
    check_output_path,
    write_json,
)

AXIS_NAMES = {(1, 0, 0): "+x", (-1, 0, 0): "-x", (0, 1, 0): "+y", (0, -1, 0): "-y",
              (0, 0, 1): "+z", (0, 0, -1): "-z"}


EXAMPLES = """\
  trapscape check samples/level_gauge.toml
  trapscape check samples/level_gauge.toml --set gap=4 -o check.json
"""


def add_arguments(parser) -> None:
    add_scene_arguments(parser)
    add_output_argument(parser, "FILE.json", "also write the parts and totals as JSON",
                        former="--json")


def run(args) -> int:
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
    print(format_table(analysis.scene, result))
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


def format_table(scene, summary) -> str:
    unit = scene.units
    header = ["name", "shape", f"volume {unit}^3", "mass g", "moment A m^2", "|m| A m^2",
              "Br T", "north (world)"]
    rows = []
    for magnet, part in zip(scene.magnets, summary["parts"]):
        moment = np.asarray(part["moment_Am2"])
        rows.append([
            part["name"], part["shape"] + (f" {magnet.grade}" if magnet.grade else ""),
            f"{part['volume_m3'] / scene.unit_scale ** 3:.4g}",
            "?" if part["mass_kg"] is None else f"{part['mass_kg'] * 1e3:.4g}",
            "[" + ", ".join(f"{v:+.3g}" for v in moment + 0.0) + "]",
            f"{np.linalg.norm(moment):.4g}", f"{part['remanence_T']:.3g}",
            magnet.radial if magnet.radial else north_words(magnet.north_world)])
    widths = [max(len(str(r[k])) for r in rows + [header]) for k in range(len(header))]
    lines = [f"{scene.title}: {len(rows)} part(s), units {unit}"]
    lines += ["  ".join(str(c).ljust(w) for c, w in zip(row, widths)).rstrip()
              for row in [header, ["-" * w for w in widths]] + rows]
    total = np.asarray(summary["total_moment_Am2"])
    low, high = summary["bounding_box"]["min"], summary["bounding_box"]["max"]
    box = summary["search_box"]
    lines += [
        f"total moment: [{', '.join(f'{v:+.4g}' for v in total + 0.0)}] A m^2 "
        f"(|m| = {np.linalg.norm(total):.4g})",
        f"bounding box: {_triple(low)} .. {_triple(high)} {unit}",
        f"search box:   {_triple(box['min'])} .. {_triple(box['max'])} {unit}, spacing "
        f"{box['spacing']:.3g} {unit}, grid {' x '.join(str(n) for n in box['shape'])}",
        f"probe: {scene.probe.kind}, diameter {summary['probe']['diameter']:.3g} {unit}, "
        f"constraint {scene.constraint.kind}"
        + (f"; steel plates: {', '.join(summary['steel_plates'])}" if scene.plates else ""),
    ]
    if any(p["mass_kg"] is None for p in summary["parts"]):
        lines.append("mass ?: the part gives remanence without density; add density = 7500 "
                     "(kg/m^3) to its [[magnet]] to get its mass.")
    return "\n".join(lines)


def _triple(values) -> str:
    return "(" + ", ".join(f"{v:.4g}" for v in values) + ")"
