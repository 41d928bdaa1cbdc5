"""Scene files (TOML, version 1 of DESIGN.md, Scene format) -> a validated Scene in SI units.

Public API:
    load_scene(path, overrides=None) -> Scene
    load_scene_text(text, base_dir=".", name="scene.toml", overrides=None) -> Scene
    parse_overrides(["gap=4", "t=2*gap"]) -> {"gap": "4", "t": "2*gap"}

Every problem a user can fix raises scene.errors.SceneError with one sentence; suspicious but
usable input (overlapping magnets, an odd alternating circle, an inside-out mesh that was turned
the right way out, a constraint outside the search box) gives a scene.errors.SceneWarning.

Choices beyond DESIGN.md, documented here:
- `units` is required: a scene drawn in mm and read as m is wrong by 10^9 in volume.
- `north` defaults to "+z" (body z: a cylinder's or ring's axis), `position` and `rotation` to
  zero. A cylinder, ring, arc or sphere may give `size = [...]` or the named keys (`diameter`,
  `height`, `outer_diameter`, `inner_diameter`, `angle`), not both.
- Extra [[magnet]] keys: `method` ("auto" | "exact" | "dipoles"), `cell_size` (file units),
  `density` (kg/m^3; default: the grade's), `file_units` for a mesh (default: the scene's units;
  a 3MF file's own declared unit when the key is absent).
- A pattern's copies are named "<name>-1", "<name>-2", ...; the first is the part as placed.
- A scene without [probe] gets DEFAULT_PROBE: a soft-steel sphere 1 mm across (chi = 1000,
  density 7850 kg/m^3, no saturation), the commonest thing people worry about (a loose steel
  chip or ball). A soft probe's density defaults to 7850 and its chi to 1000 (steel: chi_eff
  is ~3 whatever chi is), a magnet probe's density to its grade's or 7500 (sintered NdFeB).
- [search_box] defaults: the magnets' bounding box plus a margin of the largest magnet
  dimension (cut at the face of any steel plate whose normal is along an axis: the model
  holds in front of the face only), and resolution = 80 points along its longest side.
- A [[steel_plate]] needs point, normal and thickness; saturation defaults to 2.0 T (low-carbon
  steel, from memory); names default to "plate-1", "plate-2", ...
- [safety] and [package] (scene.safety_settings): the implant limit, working temperatures and
  shipping box of the safety and shipping figures.
- [report] (scene.report_settings): the customer report's document number, revision, author
  and logo file.
- The digest is sha256 over the scene file's bytes, every mesh file's bytes, the materials
  file's bytes and the sorted --set overrides.
"""
from __future__ import annotations

import hashlib
import os
import warnings
from pathlib import Path

import numpy as np

from trapscape.scene import reading
from trapscape.scene.errors import SceneError, SceneWarning
from trapscape.scene.expressions import evaluate_params
from trapscape.scene.files import MAX_MESH_BYTES, MAX_SCENE_BYTES, read_limited
from trapscape.scene.grades import built_in_grades, load_materials
from trapscape.scene.measures import extent_along, largest_dimension, scene_bounding_box
from trapscape.scene.model import (
    CONSTRAINT_KINDS,
    Constraint,
    Probe,
    Scene,
    SearchBox,
    SteelPlate,
    frozen_array,
)
from trapscape.scene.mesh_sizes import MODES
from trapscape.scene.overlaps import line_inside_parts, overlapping_pairs
from trapscape.scene.parts import read_magnets
from trapscape.scene.probe_reading import read_probe
from trapscape.scene.reading import Context
from trapscape.scene.report_settings import read_report
from trapscape.scene.safety_settings import read_safety
from trapscape.scene.tomlfile import parse_toml
from trapscape.scene.units import unit_scale

TOP_KEYS = ("version", "title", "units", "gravity", "allow_overlap", "mesh_size_check", "params",
            "materials", "magnet", "steel_plate", "probe", "search_box", "safety", "package",
            "report", "sweep")  # [sweep]: variants for `screen` (physics.analysis.variants), not the scene
TOP_ELSEWHERE = {
    "constraint": "the constraint goes under the probe: write [probe.constraint]",
    "magnets": "write [[magnet]] (singular, double brackets) once per magnet",
    "plate": "a steel plate is written [[steel_plate]]",
    "steel_plates": "a steel plate is written [[steel_plate]]",
}
DEFAULT_GRAVITY = (0.0, 0.0, -9.81)  # m/s^2, standard gravity 9.80665 rounded as in DESIGN.md
LARGEST_GRAVITY = 1e5  # m/s^2, about 10,000 g: beyond any assembly's service, even in a centrifuge
DEFAULT_PROBE = Probe(kind="soft", diameter=1e-3, density=7850.0, susceptibility=1000.0)
DEFAULT_RESOLUTION = 80
PLATE_SATURATION = 2.0  # T, low-carbon steel, from memory
BYTES_PER_GRID_POINT = 400  # field, gradient, energies and their temporaries (rough estimate)
MAX_GRID_POINTS = 8e6  # the scan's time: field and gradient at every point, minutes a million


def parse_overrides(items) -> dict:
    """["NAME=VALUE", ...] from --set -> {name: value text}; a later NAME wins."""
    overrides = {}
    for item in items or ():
        name, sep, value = str(item).partition("=")
        name, value = name.strip(), value.strip()
        if not sep or not name.isidentifier() or not value:
            raise SceneError(f"--set {item}: write NAME=VALUE with a [params] name and a number "
                             f"or expression, e.g. --set gap=4.")
        overrides[name] = value
    return overrides


def load_scene(path, overrides=None) -> Scene:
    """Read, validate and convert a scene file; lengths in metres."""
    path = Path(path)
    raw = read_limited(path, MAX_SCENE_BYTES, "scene file", "give the scene's .toml file")
    return _build(raw, path.parent, path.name, str(path), overrides or {})


def load_scene_text(text, base_dir=".", name="scene.toml", overrides=None) -> Scene:
    """Like load_scene, from TOML text (mesh and materials paths relative to base_dir)."""
    raw = text.encode("utf-8") if isinstance(text, str) else bytes(text)
    return _build(raw, Path(base_dir), name, "", overrides or {})


def _build(raw: bytes, base_dir: Path, shown: str, path_text: str, overrides: dict) -> Scene:
    overrides = {str(k): str(v) for k, v in overrides.items()}
    document = parse_toml(raw, shown)
    reading.check_keys(document, TOP_KEYS, shown, TOP_ELSEWHERE)
    _check_version(document, shown)
    units = document.get("units")
    if units is None:
        raise SceneError(f"{shown}: the key 'units' is missing; add units = \"mm\" (or cm, m, "
                         f"in) at the top, before any [table].")
    scale = unit_scale(units, f"{shown}, units")
    raw_params = reading.sub_table(document.get("params", {}), f"{shown}, [params]",
                                   "[params] with gap = 3")
    params = evaluate_params(raw_params, overrides, shown)
    ctx = Context(shown=shown, params=params, scale=scale, units=units,
                  mesh_size_check=reading.word(document, "mesh_size_check", shown, MODES,
                                               default="warn"))
    hashed = [raw]
    grades = _grades(document, base_dir, shown, hashed)
    mesh_files: list = []
    magnets = read_magnets(ctx, reading.table_list(document, "magnet", shown), grades, base_dir,
                           mesh_files)
    hashed.extend(_file_bytes(p) for p in mesh_files)
    plates = _plates(ctx, document, magnets)
    probe, constraint = _probe(ctx, document.get("probe"), grades)
    box = _search_box(ctx, document.get("search_box", {}), magnets, plates)
    safety = read_safety(ctx, document, scene_bounding_box(magnets))
    report = read_report(document, shown, base_dir)
    _check_overlaps(shown, magnets, scale, units, _allow_overlap(document, shown))
    _warn_constraint_outside(shown, constraint, box, probe)
    _warn_line_through_magnets(shown, constraint, box, magnets, scale, units)
    return Scene(
        title=reading.text(document, "title", shown, default=Path(shown).stem),
        units=units, unit_scale=scale,
        gravity=frozen_array(_gravity(ctx, document, shown), (3,)),
        magnets=tuple(magnets), plates=tuple(plates), probe=probe, constraint=constraint,
        search_box=box, params=dict(params), path=path_text,
        digest=_digest(hashed, overrides), safety=safety, report=report)


def _gravity(ctx, document, shown) -> np.ndarray:
    gravity = reading.vector(ctx, document, "gravity", shown, default=DEFAULT_GRAVITY)
    if np.abs(gravity).max() > LARGEST_GRAVITY:
        raise SceneError(f"{shown}, gravity: {np.abs(gravity).max():.3g} m/s^2 is more than "
                         f"{LARGEST_GRAVITY:g} m/s^2 (10,000 g); give it in m/s^2, e.g. "
                         f"gravity = [0, 0, -9.81].")
    return gravity


def _check_version(document, shown):
    if "version" in document and (isinstance(document["version"], bool)
                                  or document["version"] != 1):
        raise SceneError(f"{shown}, version: this trapscape reads scene format version 1, the "
                         f"file says {document['version']!r}; write version = 1 or upgrade "
                         f"trapscape.")


def _file_bytes(path: Path) -> bytes:
    return read_limited(path, MAX_MESH_BYTES, "the mesh file", "check the path")


def _digest(hashed: list, overrides: dict) -> str:
    digest = hashlib.sha256()
    for chunk in hashed:
        digest.update(hashlib.sha256(chunk).digest())  # hash of hashes: no ambiguity of joins
    for name in sorted(overrides):
        digest.update(f"--set {name}={overrides[name]}\n".encode("utf-8"))
    return digest.hexdigest()


def _grades(document, base_dir: Path, shown: str, hashed: list) -> dict:
    table = built_in_grades()
    if "materials" not in document:
        return table
    relative = reading.text(document, "materials", shown)
    path = Path(os.path.abspath(base_dir / relative))
    raw = read_limited(path, MAX_SCENE_BYTES, f"{shown}, materials: the materials file",
                       "the path is relative to the scene file")
    hashed.append(raw)
    table.update(load_materials(path, raw, relative))
    return table


def _plates(ctx: Context, document, magnets) -> list:
    plates = []
    for index, entry in enumerate(reading.table_list(document, "steel_plate", ctx.shown), 1):
        where = f"{ctx.shown}, [[steel_plate]] {index}"
        reading.check_keys(entry, ("name", "point", "normal", "thickness", "saturation"), where)
        name = reading.text(entry, "name", where, default=f"plate-{index}")
        where = f"{where} '{name}'"
        plate = SteelPlate(
            name=name,
            point=frozen_array(reading.vector(ctx, entry, "point", where, length=True,
                                              example="point = [0, 0, -10]"), (3,)),
            normal=frozen_array(reading.unit_vector(ctx, entry, "normal", where), (3,)),
            thickness=reading.number(ctx, entry, "thickness", where, length=True, positive=True,
                                     example="thickness = 5"),
            saturation=reading.number(ctx, entry, "saturation", where, default=PLATE_SATURATION,
                                      positive=True))
        _check_in_front(ctx, plate, magnets, where)
        plates.append(plate)
    return plates


def _check_in_front(ctx, plate, magnets, where):
    for magnet in magnets:
        low, _ = extent_along(magnet, plate.normal)
        behind = float(plate.normal @ plate.point) - low
        if behind > 1e-9:
            raise SceneError(
                f"{where}: magnet '{magnet.name}' reaches {behind / ctx.scale:.3g} {ctx.units} "
                f"behind the plate's face, where the mirror model does not hold; move the "
                f"magnet or the plate, or flip the plate's normal to point at the magnets.")


def _probe(ctx: Context, table, grades):
    if table is None:
        return DEFAULT_PROBE, Constraint()
    where = f"{ctx.shown}, [probe]"
    table = reading.sub_table(table, where, "[probe] with kind = \"soft\" and diameter = 2")
    probe = read_probe(ctx, table, grades, where)
    constraint = _constraint(ctx, table.get("constraint"), f"{ctx.shown}, [probe.constraint]")
    return probe, constraint


def _constraint(ctx, table, where) -> Constraint:
    if table is None:
        return Constraint()
    table = reading.sub_table(table, where, "[probe.constraint] with kind = \"line\"")
    reading.check_keys(table, ("kind", "point", "direction"), where)
    kind = reading.word(table, "kind", where, CONSTRAINT_KINDS, default="free")
    if kind == "free":
        for key in ("point", "direction"):
            if key in table:
                raise SceneError(f"{where}, {key}: a free probe has no {key}; remove it, or "
                                 f"set kind = \"line\" or \"plane\".")
        return Constraint()
    return Constraint(
        kind=kind,
        point=frozen_array(reading.vector(ctx, table, "point", where, default=[0, 0, 0],
                                          length=True), (3,)),
        direction=frozen_array(reading.unit_vector(ctx, table, "direction", where,
                                                   default=[0, 0, 1]), (3,)))


def _search_box(ctx: Context, table, magnets, plates) -> SearchBox:
    where = f"{ctx.shown}, [search_box]"
    table = reading.sub_table(table, where, "[search_box] with margin = 10")
    reading.check_keys(table, ("min", "max", "margin", "spacing", "resolution"), where)
    given = [k for k in ("min", "max") if k in table]
    if given and "margin" in table:
        raise SceneError(f"{where}: both {given[0]} and margin are given; give min and max, or "
                         f"a margin around the magnets, not both.")
    if given:
        low = reading.vector(ctx, table, "min", where, length=True, example="min = [-40, -40, -40]")
        high = reading.vector(ctx, table, "max", where, length=True, example="max = [40, 40, 40]")
    else:
        low, high = scene_bounding_box(magnets)
        margin = reading.number(ctx, table, "margin", where, default=None, length=True)
        if margin is None:
            margin = max(largest_dimension(m) for m in magnets)
        if margin < 0:
            raise SceneError(f"{where}, margin: must not be negative, got "
                             f"{margin / ctx.scale:g} {ctx.units}.")
        low, high = _in_front_of_plates(low - margin, high + margin, plates)
    extent = high - low
    if np.any(extent <= 0):
        axis = "xyz"[int(np.argmin(extent))]
        raise SceneError(f"{where}: the box has {'zero' if extent.min() == 0 else 'negative'} "
                         f"size along {axis} (min {low[int(np.argmin(extent))] / ctx.scale:g}, "
                         f"max {high[int(np.argmin(extent))] / ctx.scale:g} {ctx.units}); make "
                         f"max larger than min on every axis.")
    spacing = _spacing(ctx, table, extent, where)
    _check_memory(ctx, extent, spacing, where)
    return SearchBox(min=frozen_array(low, (3,)), max=frozen_array(high, (3,)), spacing=spacing)


def _in_front_of_plates(low, high, plates):
    """A default box stops at the face of a plate whose normal is along an axis."""
    low, high = low.copy(), high.copy()
    for plate in plates:
        axis = int(np.argmax(np.abs(plate.normal)))
        if abs(plate.normal[axis]) < 1.0 - 1e-12:
            continue
        if plate.normal[axis] > 0:
            low[axis] = max(low[axis], plate.point[axis])
        else:
            high[axis] = min(high[axis], plate.point[axis])
    return low, high


def _spacing(ctx, table, extent, where) -> float:
    if "spacing" in table and "resolution" in table:
        raise SceneError(f"{where}: both spacing and resolution are given; keep one.")
    if "spacing" in table:
        return reading.number(ctx, table, "spacing", where, length=True, positive=True)
    resolution = reading.integer(ctx, table, "resolution", where, 2, 100000,
                                 default=DEFAULT_RESOLUTION)
    return float(extent.max()) / (resolution - 1)


def machine_memory() -> float:
    """Bytes of RAM (8 GiB when the system does not say)."""
    try:
        return float(os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES"))
    except (ValueError, OSError, AttributeError):
        return 8.0 * 2**30


def _check_memory(ctx, extent, spacing, where) -> None:
    counts = np.maximum(np.floor(extent / spacing + 1e-9) + 1, 2)
    points = float(np.prod(counts))
    needed = points * BYTES_PER_GRID_POINT
    budget = min(machine_memory() / 4, MAX_GRID_POINTS * BYTES_PER_GRID_POINT)
    if needed <= budget:
        return
    # points scale as spacing^-3; 2 % more for the +1 end points, rounded up to two digits
    fitting = _round_up(spacing * (needed / budget) ** (1.0 / 3.0) * 1.02 / ctx.scale)
    shape = " x ".join(f"{c:.0f}" for c in counts)
    if points > MAX_GRID_POINTS:
        raise SceneError(
            f"{where}: a grid of {shape} = {points:.3g} points is more than the "
            f"{MAX_GRID_POINTS / 1e6:g} million a search can scan in reasonable time; use spacing = "
            f"{fitting:g} ({ctx.units}) or coarser, or a smaller box.")
    raise SceneError(
        f"{where}: a grid of {shape} = {points:.3g} points would need about "
        f"{_bytes(needed)}, more than a quarter of this machine's {_bytes(budget * 4)} of "
        f"memory; use spacing = {fitting:g} ({ctx.units}) or coarser, or a smaller box.")


def _round_up(value: float) -> float:
    step = 10.0 ** (np.floor(np.log10(value)) - 1)
    return float(np.ceil(value / step) * step)


def _bytes(count: float) -> str:
    for unit, size in (("TB", 1e12), ("GB", 1e9), ("MB", 1e6)):
        if count >= size:
            return f"{count / size:.3g} {unit}"
    return f"{count:.3g} bytes"


def _allow_overlap(document, shown) -> bool:
    value = document.get("allow_overlap", False)
    if not isinstance(value, bool):
        raise SceneError(f"{shown}, allow_overlap: write true or false (without quotes), not "
                         f"{value!r}.")
    return value


def _check_overlaps(shown, magnets, scale, units, allowed) -> None:
    """Overlapping magnets are an error (solid parts cannot share space; the field would count
    the shared volume twice) unless the scene says allow_overlap = true: then a warning."""
    pairs = overlapping_pairs(magnets)
    if pairs and not allowed:
        i, j, depth = pairs[0]
        more = f" ({len(pairs) - 1} more pairs overlap too)" if len(pairs) > 1 else ""
        raise SceneError(
            f"{shown}: magnets '{magnets[i].name}' and '{magnets[j].name}' overlap by about "
            f"{depth / scale:.2g} {units}{more}; move them apart, or write allow_overlap = true "
            f"at the top of the scene to compute it anyway (the shared volume counts twice).")
    for i, j, depth in pairs[:10]:
        warnings.warn(SceneWarning(
            f"{shown}: magnets '{magnets[i].name}' and '{magnets[j].name}' overlap by about "
            f"{depth / scale:.2g} {units} (allowed by allow_overlap; the shared volume counts "
            f"twice)."), stacklevel=3)
    if len(pairs) > 10:
        warnings.warn(SceneWarning(f"{shown}: {len(pairs) - 10} more pairs of magnets overlap; "
                                   f"check the positions and pattern steps."), stacklevel=3)


def _warn_line_through_magnets(shown, constraint, box, magnets, scale, units) -> None:
    if constraint.kind != "line":
        return
    span = _line_span_in_box(constraint.point, constraint.direction, box)
    if span is None:
        return
    for index, first, last in line_inside_parts(constraint.point, constraint.direction, span,
                                                magnets):
        ends = [(constraint.point + t * constraint.direction) / scale for t in (first, last)]
        warnings.warn(SceneWarning(
            f"{shown}, [probe.constraint]: the guide line runs through magnet "
            f"'{magnets[index].name}' from {_triple(ends[0])} to {_triple(ends[1])} {units}; "
            f"the probe cannot pass there, so check the line's point and direction."),
            stacklevel=3)


def _triple(values) -> str:
    return "(" + ", ".join(f"{v:.4g}" for v in np.asarray(values, float) + 0.0) + ")"


def _warn_constraint_outside(shown, constraint, box, probe) -> None:
    if constraint.kind == "free":
        return
    corners = np.array([[x, y, z] for x in (box.min[0], box.max[0])
                        for y in (box.min[1], box.max[1]) for z in (box.min[2], box.max[2])])
    offsets = corners - constraint.point
    if constraint.kind == "plane":
        heights = offsets @ constraint.direction
        crosses = heights.min() <= 0 <= heights.max()
    else:
        crosses = _line_crosses_box(constraint.point, constraint.direction, box)
    if not crosses:
        warnings.warn(SceneWarning(
            f"{shown}, [probe.constraint]: the {constraint.kind} does not pass through the "
            f"search box, so no equilibrium can be found on it; move the box or the "
            f"constraint's point."), stacklevel=3)


def _line_crosses_box(point, direction, box) -> bool:
    return _line_span_in_box(point, direction, box) is not None


def _line_span_in_box(point, direction, box):
    """(t_low, t_high) of the infinite line point + t direction inside the box, or None: the
    slab test (Kay & Kajiya, SIGGRAPH 1986)."""
    t_low, t_high = -np.inf, np.inf
    for axis in range(3):
        if abs(direction[axis]) < 1e-15:
            if not box.min[axis] <= point[axis] <= box.max[axis]:
                return None
            continue
        t1 = (box.min[axis] - point[axis]) / direction[axis]
        t2 = (box.max[axis] - point[axis]) / direction[axis]
        t_low, t_high = max(t_low, min(t1, t2)), min(t_high, max(t1, t2))
    return (t_low, t_high) if t_low <= t_high else None

