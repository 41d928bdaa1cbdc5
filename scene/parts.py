"""[[magnet]] tables -> placed, validated Magnet objects (patterns expanded), SI units."""
from __future__ import annotations

import os
import warnings
from pathlib import Path

import numpy as np

from trapscape.scene import patterns, reading
from trapscape.scene.errors import SceneError, SceneWarning
from trapscape.scene.grades import find_grade
from trapscape.scene.mesh_sizes import check_mesh_size
from trapscape.scene.meshes import read_mesh
from trapscape.scene.model import Magnet, frozen_array
from trapscape.scene.names import did_you_mean
from trapscape.scene.reading import Context
from trapscape.scene.shapes import SHAPES, DimError
from trapscape.scene.units import unit_scale

MAX_PARTS = 10000  # more parts than any assembly we model; also bounds the pairwise checks

COMMON_KEYS = ("name", "shape", "position", "rotation", "north", "magnetization", "grade",
               "remanence",
               "pattern", "method", "cell_size", "density")
SHAPE_KEYS = {name: shape.keys for name, shape in SHAPES.items()}
AXIS_WORDS = {f"{sign}{axis}": (1.0 if sign != "-" else -1.0) * np.eye(3)[k]
              for k, axis in enumerate("xyz") for sign in ("+", "-", "")}
RADIAL = ("radial-out", "radial-in")
INTENTS = ("axial", "diametral", "thickness")  # found from the shape (scene.shapes.axes)
INTENT_WORDS = INTENTS + tuple(f"-{word}" for word in INTENTS) + RADIAL
PATTERN_KEYS = {
    "circular": ("kind", "count", "axis", "center", "polarity"),
    "linear": ("kind", "count", "step", "polarity"),
    "grid": ("kind", "counts", "steps", "polarity"),
}


def read_magnets(ctx: Context, entries: list, grades: dict, base_dir: Path,
                 mesh_files: list) -> list:
    """All magnets of the file, each pattern expanded into its copies; names unique."""
    if not entries:
        raise SceneError(f"{ctx.shown}: the scene has no magnets; add a [[magnet]] table with "
                         f"shape, size and grade.")
    magnets, meshes = [], {}
    for index, entry in enumerate(entries, start=1):
        magnets.extend(_read_entry(ctx, entry, index, grades, base_dir, mesh_files, meshes))
        if len(magnets) > MAX_PARTS:
            raise SceneError(f"{ctx.shown}, [[magnet]] {index}: the scene would hold more than "
                             f"{MAX_PARTS} parts; use fewer or smaller patterns.")
    seen = {}
    for magnet in magnets:
        if magnet.name in seen:
            raise SceneError(f"{ctx.shown}: two parts are named '{magnet.name}' ({seen[magnet.name]}"
                             f" and {magnet.origin}); give each [[magnet]] its own name.")
        seen[magnet.name] = magnet.origin
    return magnets


def _read_entry(ctx, entry, index, grades, base_dir, mesh_files, meshes) -> list:
    where = f"{ctx.shown}, [[magnet]] {index}"
    shape = reading.word(entry, "shape", where, tuple(SHAPES))
    name = reading.text(entry, "name", where, default=f"{shape}-{index}")
    where = f"{where} '{name}'"
    _check_magnet_keys(entry, shape, where)
    if SHAPES[shape].from_file:
        dims = ()
        vertices, faces = _mesh(ctx, entry, where, base_dir, mesh_files, meshes)
    else:
        dims, vertices, faces = _dims(ctx, entry, SHAPES[shape], where), None, None
    north, radial = _north(ctx, entry, shape, where, _Solid(dims, vertices, faces))
    remanence, grade, density = _material(ctx, entry, grades, where)
    method = reading.word(entry, "method", where, ("auto", "exact", "dipoles"), default="auto")
    cell_size = reading.number(ctx, entry, "cell_size", where, default=None, length=True,
                               positive=True)
    position = reading.vector(ctx, entry, "position", where, default=[0, 0, 0], length=True)
    rotation = patterns.rotation_from_degrees(
        reading.vector(ctx, entry, "rotation", where, default=[0, 0, 0]))
    placements = _placements(ctx, entry, position, rotation, where)
    parts = []
    for k, (place, turn, polarity) in enumerate(placements, start=1):
        copy_north = None if north is None else polarity * north
        copy_radial = radial if radial is None or polarity > 0 else _flip_radial(radial)
        parts.append(Magnet(
            name=name if "pattern" not in entry else f"{name}-{k}", shape=shape,
            dims=dims, position=frozen_array(place, (3,)), rotation=frozen_array(turn, (3, 3)),
            north=None if copy_north is None else frozen_array(copy_north, (3,)),
            radial=copy_radial, remanence=remanence, grade=None if grade is None else grade.name,
            material=grade, mesh_vertices=vertices, mesh_faces=faces, method=method, cell_size=cell_size,
            origin=f"{ctx.shown}, [[magnet]] {index}", density=density))
    return parts


def _check_magnet_keys(entry, shape, where):
    allowed = COMMON_KEYS + SHAPE_KEYS[shape]
    elsewhere = {}
    for other, keys in SHAPE_KEYS.items():
        for key in keys:
            if key not in allowed:
                elsewhere.setdefault(key, f"a {shape} takes {SHAPES[shape].size_example}, "
                                          f"while '{key}' is for a {other}")
    reading.check_keys(entry, allowed, where, elsewhere)


def _dims(ctx, entry, shape, where) -> tuple:
    """The shape's dims in SI, from size = [...] or from its named keys; its own checks
    (scene.shapes) raise DimError, reported here with the file, table, part and key."""
    names = tuple(dim.name for dim in shape.dims)
    named = [k for k in names if k in entry and k != "size"]
    if "size" in entry and named:
        raise SceneError(f"{where}: both size and {named[0]} are given; keep one way of giving "
                         f"the dimensions: {shape.size_example}.")
    if shape.takes_size and "size" in entry:
        raw = entry["size"]
        if len(names) == 1 and not isinstance(raw, list):
            raw = [raw]
        if not isinstance(raw, list) or len(raw) != len(names):
            got = f"{len(raw)} values" if isinstance(raw, list) else "a single value"
            raise SceneError(f"{where}, size: a {shape.name} takes {len(names)} value(s), got "
                             f"{got}; write {shape.size_example}.")
        raws, labels = raw, ["size"] * len(names)
    elif shape.takes_named and all(k in entry for k in names):
        raws, labels = [entry[k] for k in names], list(names)
    else:
        missing = "size" if not shape.takes_named else next(k for k in names if k not in entry)
        raise SceneError(f"{where}: the key '{missing}' is missing; give the dimensions as "
                         f"{shape.size_example}.")
    values = [_dim_value(ctx, raw, dim.kind, f"{where}, {label}", shape)
              for raw, dim, label in zip(raws, shape.dims, labels)]
    try:
        shape.validate(values, ctx.units)
    except DimError as error:
        at = where if error.index is None else f"{where}, {labels[error.index]}"
        raise SceneError(f"{at}: {error}") from None
    converted = [_dim_si(ctx, value, dim.kind, f"{where}, {label}")
                 for value, dim, label in zip(values, shape.dims, labels)]
    return shape.make_dims(converted)


def _dim_value(ctx, raw, kind, where, shape):
    """A dim as written (file units; degrees): a number, or for an outline a list of [x, y]."""
    if kind != "outline":
        return reading.scalar(ctx, raw, where)
    if not isinstance(raw, list) or not all(isinstance(c, list) and len(c) == 2 for c in raw):
        raise SceneError(f"{where}: write the corners of the cross-section as a list of [x, y] "
                         f"pairs: {shape.size_example}.")
    return [[reading.scalar(ctx, v, where) for v in corner] for corner in raw]


def _dim_si(ctx, value, kind, where):
    if kind == "angle":
        return float(np.radians(value))
    if kind == "outline":
        return [[reading.checked_length(ctx, v, where) for v in corner] for corner in value]
    return reading.checked_length(ctx, value, where, is_size=True)


def _mesh(ctx, entry, where, base_dir, mesh_files, meshes):
    relative = reading.text(entry, "file", where)
    units = entry.get("file_units")
    path = Path(os.path.abspath(base_dir / relative))  # resolve() fails on a link loop
    if units is not None:
        scale = unit_scale(units, f"{where}, file_units")
    elif path.suffix.lower() == ".3mf":
        scale = None  # a 3MF file states its unit
    else:
        scale = ctx.scale
    key = (str(path), scale)
    if key not in meshes:
        meshes[key] = read_mesh(path, relative, scale, where)
        read_as = units if units is not None else (None if scale is None else ctx.units)
        check_mesh_size(meshes[key][0], where, relative, read_as, ctx.units, ctx.mesh_size_check)
        if path not in mesh_files:
            mesh_files.append(path)
    return meshes[key]


class _Solid:
    """What a shape needs to find its axes before the Magnet exists."""

    def __init__(self, dims, vertices, faces):
        self.dims, self.mesh_vertices, self.mesh_faces = dims, vertices, faces


def _intent(entry, shape, where, solid):
    """magnetization = "axial" | "diametral" | "thickness" (a leading "-" reverses it) |
    "radial-out" | "radial-in": (north in the body frame or None, radial word or None)."""
    key_where = f"{where}, magnetization"
    if "north" in entry:
        raise SceneError(f"{where}: both north and magnetization are given; keep one (north is "
                         f"a direction, magnetization names it by intent such as \"axial\").")
    value = entry["magnetization"]
    word = value.strip().lower() if isinstance(value, str) else ""
    if word not in INTENT_WORDS:
        hint = did_you_mean(word, list(INTENT_WORDS)) if word else ""
        raise SceneError(f"{key_where}: {value!r} is not a magnetisation intent{hint}; write "
                         f"\"axial\", \"diametral\", \"thickness\" (\"-axial\" etc. for the "
                         f"reverse), \"radial-out\" or \"radial-in\", or give north instead.")
    if word in RADIAL:
        return _north(None, {"north": word}, shape, where, solid)
    sign, intent = (-1.0, word[1:]) if word.startswith("-") else (1.0, word)
    found = SHAPES[shape].intent_axes(solid)
    if intent not in found:
        raise SceneError(f"{key_where}: a {shape} of this shape has no single {intent} direction"
                         f" (its proportions leave it open); give north = \"+z\" or a vector "
                         f"instead.")
    return sign * np.asarray(found[intent], float) + 0.0, None  # + 0.0: no -0 in outputs


def _north(ctx, entry, shape, where, solid):
    """(unit north in the body frame or None, radial word or None)."""
    if "magnetization" in entry:
        return _intent(entry, shape, where, solid)
    value = entry.get("north", "+z")
    key_where = f"{where}, north"
    if isinstance(value, str):
        word = value.strip().lower()
        if word in RADIAL:
            if not SHAPES[shape].radial_ok:
                raise SceneError(f"{key_where}: \"{value}\" is for rings and arcs only; give a "
                                 f"{shape} a direction such as \"+z\" or [0, 0, 1].")
            return None, word
        if word in AXIS_WORDS:
            return AXIS_WORDS[word].copy(), None

        hint = did_you_mean(word, list(AXIS_WORDS) + list(RADIAL))
        raise SceneError(f"{key_where}: \"{value}\" is not a direction{hint}; write an axis "
                         f"such as \"+z\" or \"-x\", a vector [0, 0, 1]"
                         f"{', or radial-out / radial-in' if SHAPES[shape].radial_ok else ''}.")
    raw = reading.vector_value(ctx, value, key_where)
    norm = float(np.linalg.norm(raw))
    if norm == 0.0 or not np.isfinite(norm):
        raise SceneError(f"{key_where}: the north vector is zero, so it points nowhere; give the "
                         f"direction the north pole faces, e.g. [0, 0, 1].")
    return raw / norm, None


def _material(ctx, entry, grades, where):
    """(remanence T, Grade or None, density kg/m^3 or None)."""
    if "grade" in entry and "remanence" in entry:
        raise SceneError(f"{where}: both grade and remanence are given; keep one (remanence "
                         f"overrides what the grade would give, so it would be ambiguous).")
    density = reading.number(ctx, entry, "density", where, default=None, positive=True)
    if "grade" in entry:
        grade = find_grade(entry["grade"], grades, f"{where}, grade")
        return grade.remanence, grade, density if density is not None else grade.density
    if "remanence" not in entry:
        raise SceneError(f"{where}: neither grade nor remanence is given; add grade = \"N42\" "
                         f"or remanence = 1.3 (tesla).")
    remanence = reading.number(ctx, entry, "remanence", where, positive=True)
    check_remanence(remanence, f"{where}, remanence")
    return remanence, None, density


def check_remanence(remanence: float, where: str) -> None:
    if remanence > 2.0:
        raise SceneError(f"{where}: {remanence:g} T is above any permanent magnet (about 1.5 T "
                         f"at most); give it in tesla, not millitesla.")


def _flip_radial(radial: str) -> str:
    return "radial-in" if radial == "radial-out" else "radial-out"


def _placements(ctx, entry, position, rotation, where) -> list:
    if "pattern" not in entry:
        return [(position, rotation, 1)]
    where = f"{where}, pattern"
    pattern = reading.sub_table(entry["pattern"], where,
                                "pattern = { kind = \"circular\", count = 8 }")
    kind = reading.word(pattern, "kind", where, tuple(PATTERN_KEYS))
    reading.check_keys(pattern, PATTERN_KEYS[kind], f"{where} ({kind})")
    alternate = reading.word(pattern, "polarity", where, ("same", "alternate"),
                             default="same") == "alternate"
    if kind == "circular":
        count = reading.integer(ctx, pattern, "count", where, 1, MAX_PARTS)
        axis = reading.unit_vector(ctx, pattern, "axis", where, default=[0, 0, 1])
        center = reading.vector(ctx, pattern, "center", where, default=[0, 0, 0], length=True)
        if alternate and count % 2:
            warnings.warn(SceneWarning(
                f"{where}: alternate polarity around a circle of {count} (an odd count) puts two "
                f"like poles side by side where the circle closes; use an even count."),
                stacklevel=2)
        return patterns.circular(position, rotation, count, axis, center, alternate)
    if kind == "linear":
        count = reading.integer(ctx, pattern, "count", where, 1, MAX_PARTS)
        step = reading.vector(ctx, pattern, "step", where, length=True,
                              example="step = [12, 0, 0]")
        return patterns.linear(position, rotation, count, step, alternate)
    return _grid(ctx, pattern, position, rotation, alternate, where)


def _grid(ctx, pattern, position, rotation, alternate, where) -> list:
    counts_raw = pattern.get("counts")
    steps_raw = pattern.get("steps")
    if counts_raw is None or steps_raw is None:
        missing = "counts" if counts_raw is None else "steps"
        raise SceneError(f"{where}: the key '{missing}' is missing; a grid takes counts = [4, 3] "
                         f"and steps = [[12, 0, 0], [0, 12, 0]].")
    if not isinstance(counts_raw, list) or len(counts_raw) not in (2, 3):
        raise SceneError(f"{where}, counts: must list 2 or 3 whole numbers, e.g. [4, 3].")
    counts = [reading.whole(ctx, c, f"{where}, counts", 1, MAX_PARTS) for c in counts_raw]
    if not isinstance(steps_raw, list) or len(steps_raw) != len(counts):
        raise SceneError(f"{where}, steps: must list one step vector per count ({len(counts)}), "
                         f"e.g. [[12, 0, 0], [0, 12, 0]].")
    steps = [reading.vector_value(ctx, s, f"{where}, steps", length=True) for s in steps_raw]
    if int(np.prod(counts)) > MAX_PARTS:
        raise SceneError(f"{where}: the grid would hold {int(np.prod(counts))} parts, more than "
                         f"{MAX_PARTS}; use smaller counts.")
    return patterns.grid(position, rotation, counts, steps, alternate)
