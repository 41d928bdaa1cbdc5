"""The text of an imported scene: the summary of what was assumed and recognised as comments,
then one [[magnet]] per body in millimetres and degrees."""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from trapscape.scene.shapes import SHAPES

SCENE_UNIT = 1e-3  # metres per unit of the written scene (millimetres)
SCENE_UNIT_WORD = "mm"
RESOLUTION = 1e-6  # written lengths round to this fraction of the part's size (angles: 360)


@dataclass
class Part:
    name: str
    body: object  # bodies.Body, in metres
    primitive: object  # recognise.Primitive or None (kept as a mesh)
    grade: str
    assumed_grade: bool
    magnetization: str | None = None  # intent word, or None with north
    north: np.ndarray | None = None  # body frame, when a direction was given
    north_world: np.ndarray | None = None  # for the summary (None when radial)
    assumed_magnetization: bool = False
    mesh_file: str | None = None


def degrees_from_rotation(rotation) -> np.ndarray:
    """[rx, ry, rz] degrees with rotation = Rz Ry Rx (extrinsic x, y, z: the scene's rotation,
    scene.patterns.rotation_from_degrees); ry in [-90, 90].

    References: the standard ZYX Euler angle extraction (e.g. Craig, Introduction to Robotics,
    3rd ed. 2005, eq. 2.66, with angles about the fixed axes).
    """
    r = np.asarray(rotation, float)
    ry = math.asin(max(-1.0, min(1.0, -r[2, 0])))
    if abs(r[2, 0]) < 1.0 - 1e-12:
        rx, rz = math.atan2(r[2, 1], r[2, 2]), math.atan2(r[1, 0], r[0, 0])
    else:  # gimbal lock: only rz - +-rx is fixed; take rx = 0
        rx, rz = 0.0, math.atan2(-r[0, 1], r[1, 1])
    return np.degrees([rx, ry, rz])


def _number(value: float, scale: float) -> str:
    decimals = max(0, -math.floor(math.log10(RESOLUTION * scale)))
    text = f"{round(value, decimals):.{decimals}f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "", "-") else text


def _vector(values, scale=1.0) -> str:
    return "[" + ", ".join(_number(float(v), scale) for v in values) + "]"


def describe(part) -> str:
    """One line: what the body became and how far it is from that."""
    p = part.primitive
    if p is None:
        return (f"{part.name}: kept as a mesh ({len(part.body.faces)} triangles; no box, "
                f"cylinder, ring, arc or sphere within tolerance)")
    return (f"{part.name}: {p.shape} (volume {100 * p.volume_deviation:.3g} % off, vertices "
            f"within {p.surface_deviation * 1e3:.2g} mm, its surface within "
            f"{p.cover_deviation * 1e3:.2g} mm of the facets)")


def summary_lines(parts) -> list:
    recognised = [p for p in parts if p.primitive is not None]
    lines = [f"recognised {len(recognised)} of {len(parts)} parts as primitives (exact closed "
             f"forms); the rest stay meshes."]
    if recognised:
        worst_volume = max(recognised, key=lambda p: p.primitive.volume_deviation)
        worst_surface = max(recognised, key=lambda p: p.primitive.cover_deviation)
        volume = 100 * worst_volume.primitive.volume_deviation
        lines.append(f"largest deviation: volume {volume:.3g} % ({worst_volume.name}), surface "
                     f"{worst_surface.primitive.cover_deviation * 1e3:.2g} mm "
                     f"({worst_surface.name}).")
    return lines + [describe(p) for p in parts]


def scene_text(parts, notes, warnings, sources) -> str:
    lines = [f"# Imported by `trapscape import` from {', '.join(sources)}.",
             "# Check what was assumed before trusting a result; grades and directions come from",
             "# the parts list or the defaults below, not from the geometry.", "#",
             "# Assumed:"]
    lines += [f"#   - {n}" for n in notes]
    if warnings:
        lines += ["# WARNINGS:"] + [f"#   - {w}" for w in warnings]
    lines += ["# Parts:"] + [f"#   - {s}" for s in summary_lines(parts)]
    title = f"Imported from {sources[0].replace(chr(92), '/')}{' and more' if len(sources) > 1 else ''}"
    lines += ["", f"title = \"{title}\"", f"units = \"{SCENE_UNIT_WORD}\"", ""]
    for part in parts:
        lines += _magnet(part)
    return "\n".join(lines)


def _magnet(part) -> list:
    p = part.primitive
    lines = ["[[magnet]]", f"name = \"{part.name}\""]
    if p is None:
        lines += ["shape = \"mesh\"", f"file = \"{part.mesh_file}\"", "file_units = \"mm\""]
    else:
        kinds = [dim.kind for dim in SHAPES[p.shape].dims]
        size = [math.degrees(d) if kind == "angle" else d / SCENE_UNIT
                for d, kind in zip(p.dims, kinds)]
        scale = max(size[:3])
        lines += [f"shape = \"{p.shape}\"", f"size = {_vector(size, scale)}",
                  f"position = {_vector(np.asarray(p.position) / SCENE_UNIT, scale)}",
                  f"rotation = {_vector(degrees_from_rotation(p.rotation), 360.0)}"]
    if part.magnetization is not None:
        world = "" if part.north_world is None else \
            f"  # north along {_vector(part.north_world, 1.0)} in the assembly's axes"
        lines.append(f"magnetization = \"{part.magnetization}\"{world}")
    else:
        lines.append(f"north = {_vector(part.north, 1.0)}  # body frame; "
                     f"{_vector(part.north_world, 1.0)} in the assembly's axes")
    lines += [f"grade = \"{part.grade}\"", ""]
    return lines
