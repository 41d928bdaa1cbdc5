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
from trapscape.scene.measures import mass, moment_world, scene_bounding_box, volume
from trapscape.viewers.commands.common import add_scene_arguments, load_scene_from_args, stamp, write_json

AXIS_NAMES = {(1, 0, 0): "+x", (-1, 0, 0): "-x", (0, 1, 0): "+y", (0, -1, 0): "-y",
              (0, 0, 1): "+z", (0, 0, -1): "-z"}


def add_arguments(parser) -> None:
    add_scene_arguments(parser)
    parser.add_argument("--json", metavar="FILE", help="also write the parts and totals as JSON")


def run(args) -> int:
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", SceneWarning)
        scene = load_scene_from_args(args)
    for warning in caught:  # one line each on stderr, like errors
        if issubclass(warning.category, SceneWarning):
            print(f"trapscape: warning: {warning.message}", file=sys.stderr)
        else:
            warnings.showwarning(warning.message, warning.category, warning.filename,
                                 warning.lineno)
    summary = summarise(scene)
    if args.json:  # first, so the file is there even if the table's reader goes away
        write_json(args.json, stamp(scene, summary))
    print(format_table(scene, summary))
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
    """The JSON payload of `check` (before stamping)."""
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
