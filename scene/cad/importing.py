"""One CAD export (a file or a folder of them) -> the text of a scene, the mesh files it needs
and what was assumed. `import_cad` writes nothing: the caller writes the meshes, checks the scene
with `check_imported` and writes it (atomically), so a batch can import many files one by one.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from types import SimpleNamespace

import numpy as np

from trapscape.scene.cad.bodies import MESH_SUFFIXES, STEP_SUFFIXES, read_bodies
from trapscape.scene.cad.partslist import match, read_parts_list
from trapscape.scene.cad.recognise import recognise
from trapscape.scene.cad.units import decide_unit
from trapscape.scene.cad.writing import Part, scene_text
from trapscape.scene.errors import SceneError
from trapscape.scene.mesh_sizes import PLAUSIBLE_M
from trapscape.scene.parts import AXIS_WORDS, INTENTS, RADIAL
from trapscape.scene.shapes import SHAPES

DEFAULT_GRADE = "N42"  # a common sintered NdFeB grade (common practice), said in the summary
DEFAULT_INTENTS = ("axial", "thickness")  # the first the body's shape decides
DEFAULT_KEYS = ("grade", "magnetization")  # what --set may give for bodies the list leaves open


@dataclass
class ImportedScene:
    text: str  # the scene (TOML) with the summary as comments
    meshes: dict  # relative path -> (vertices (V, 3) in mm, faces (F, 3)) to write beside it
    notes: list = field(default_factory=list)  # what was assumed, one sentence each
    warnings: list = field(default_factory=list)  # what the user must look at
    parts: list = field(default_factory=list)  # Part, in scene order


def cad_files(inputs) -> list:
    """The CAD files named, a folder standing for the CAD files directly inside it."""
    files = []
    for given in inputs:
        path = Path(given)
        if path.is_dir():
            inside = sorted(p for p in path.iterdir()
                            if p.suffix.lower() in MESH_SUFFIXES + STEP_SUFFIXES and p.is_file())
            if not inside:
                raise SceneError(f"{given}: the folder holds no CAD export (.step, .stp, .3mf, "
                                 f".stl, .obj, .ply); give the files or another folder.")
            files.extend(inside)
        else:
            files.append(path)
    return files


def import_cad(inputs, scene_path, units=None, parts_list=None, defaults=None) -> ImportedScene:
    """The scene of the bodies in `inputs` (files or folders), to be written at scene_path.

    units: the unit word of files that state none (None: guessed); parts_list: a CSV path or
    None; defaults: {"grade": ..., "magnetization": ...} for bodies the list leaves open.
    """
    defaults = dict(defaults or {})
    unknown = [k for k in defaults if k not in DEFAULT_KEYS]
    if unknown:
        raise SceneError(f"--set {unknown[0]}: import takes --set grade=NAME and --set "
                         f"magnetization=WORD (defaults for bodies the parts list leaves open).")
    scene_path = Path(scene_path)
    rows = read_parts_list(Path(parts_list), str(parts_list)) if parts_list else None
    result = ImportedScene("", {})
    bodies = []
    for path in cad_files(inputs):
        shown = str(path)
        found = read_bodies(path, shown)
        raw = [float(np.ptp(b.vertices, axis=0).max()) for b in found.bodies]
        scale, note, warning = decide_unit(raw, found.metres_per_unit, found.unit_source, units,
                                           shown)
        result.notes.append(note)
        if warning:
            result.warnings.append(warning)
        for body in found.bodies:
            body.vertices = body.vertices * scale
            bodies.append(body)
    _unique_names(bodies)
    left_out, ignored = [], []
    for body in bodies:
        row = match(rows, body.name) if rows is not None else None
        if rows is not None and row is None:
            left_out.append(body.name)
            continue
        if row is not None and row.role == "ignore":
            ignored.append(body.name)
            continue
        result.parts.append(_part(body, row, defaults, result))
    if left_out:
        result.warnings.append(
            f"{len(left_out)} bod{'y' if len(left_out) == 1 else 'ies'} not in the parts list "
            f"{parts_list}, left out of the scene: {', '.join(left_out)}; add a row (role magnet "
            f"or ignore) for each.")
    if ignored:
        result.notes.append(f"ignored as the parts list says: {', '.join(ignored)}.")
    if not result.parts:
        raise SceneError("no body is left to be a magnet (every one is ignored or missing "
                         "from the parts list); check the parts list's patterns and roles.")
    _defaults_notes(result, defaults, rows)
    mesh_folder = f"{scene_path.stem}-meshes"
    for part in result.parts:
        if part.primitive is None:
            part.mesh_file = f"{mesh_folder}/{part.name}.stl"
            result.meshes[part.mesh_file] = (part.body.vertices * 1e3, part.body.faces)
    result.text = scene_text(result.parts, result.notes, result.warnings,
                             [str(p) for p in cad_files(inputs)])
    return result


def check_imported(imported: ImportedScene, scene_path) -> object:
    """Load the imported scene from its text (the meshes already written beside scene_path):
    the scene's own checks (overlaps, grades, mesh sizes) in one place."""
    from trapscape.scene.loader import load_scene_text

    scene_path = Path(scene_path)
    return load_scene_text(imported.text, base_dir=scene_path.parent or Path("."),
                           name=scene_path.name)


def _unique_names(bodies) -> None:
    seen = {}
    for body in bodies:
        base = body.name or "body"
        name, k = base, 1
        while name.lower() in seen:
            k += 1
            name = f"{base}-{k}"
        seen[name.lower()] = True
        body.name = name


def _part(body, row, defaults, result) -> Part:
    size = float(np.ptp(body.vertices, axis=0).max())
    if not PLAUSIBLE_M[0] <= size <= PLAUSIBLE_M[1]:
        result.warnings.append(
            f"body '{body.name}' is {size * 1e3:.3g} mm across, implausible for a magnet (0.5 mm "
            f"to 2 m); check the unit (--units) or mark it ignore in a parts list.")
    primitive = recognise(body.vertices, body.faces, body.exact_volume)
    grade = (row.grade if row is not None and row.grade else None) or defaults.get("grade")
    wanted = (row.magnetization if row is not None and row.magnetization else None) or \
        defaults.get("magnetization")
    polarity = row.polarity if row is not None else "+"
    part = Part(body.name, body, primitive, grade or DEFAULT_GRADE,
                not (row is not None and row.grade))
    _magnetization(part, wanted, polarity, row)
    return part


def _magnetization(part, wanted, polarity, row) -> None:
    """Sets part.magnetization (intent word) or part.north (body vector), and part.north_world."""
    where = f"body '{part.name}'" + (f" (parts list line {row.line})" if row else "")
    primitive = part.primitive
    shape = primitive.shape if primitive else "mesh"
    solid = SimpleNamespace(dims=primitive.dims if primitive else (),
                            mesh_vertices=part.body.vertices, mesh_faces=part.body.faces)
    rotation = primitive.rotation if primitive else np.eye(3)
    axes = SHAPES[shape].intent_axes(solid)
    if wanted is None:
        part.assumed_magnetization = True
        wanted = next((w for w in DEFAULT_INTENTS if w in axes), "+z")
    word = wanted.strip().lower()
    reverse = polarity == "-"
    if word.startswith("-") and word[1:] in INTENTS:
        word, reverse = word[1:], not reverse
    if word in INTENTS:
        if word not in axes:
            raise SceneError(f"{where}: a {shape} of its proportions has no single {word} "
                             f"direction; give another intent or a direction such as +z.")
        part.magnetization = ("-" if reverse else "") + word
        part.north_world = rotation @ ((-1.0 if reverse else 1.0) * axes[word])
    elif word in RADIAL:
        if not SHAPES[shape].radial_ok:
            raise SceneError(f"{where}: {word} is for rings and arcs, and this body is a "
                             f"{shape}; give axial, diametral, thickness or a direction.")
        part.magnetization = ("radial-in" if word == "radial-out" else "radial-out") \
            if reverse else word
    else:
        world = _direction(word, where)
        world = -world if reverse else world
        part.north_world = world
        part.north = rotation.T @ world  # the scene's north is in the body frame


def _direction(word: str, where: str) -> np.ndarray:
    if word in AXIS_WORDS:
        return AXIS_WORDS[word].copy()
    try:
        vector = np.array([float(x) for x in word.replace(",", " ").split()], float)
    except ValueError:
        vector = np.zeros(0)
    if vector.shape != (3,) or not np.all(np.isfinite(vector)) or not np.any(vector):
        raise SceneError(f"{where}: magnetization {word!r} is neither an intent (axial, "
                         f"diametral, thickness, radial-out, radial-in) nor a direction such as "
                         f"+z or \"0 0 1\" (the assembly's axes).")
    return vector / np.linalg.norm(vector)


def _defaults_notes(result, defaults, rows) -> None:
    graded = [p.name for p in result.parts if p.assumed_grade]
    if graded:
        result.notes.append(f"grade {defaults.get('grade', DEFAULT_GRADE)} "
                            f"{'(--set grade)' if 'grade' in defaults else '(the default)'} for "
                            f"{_few(graded)}.")
    guessed = [p.name for p in result.parts if p.assumed_magnetization]
    if guessed:
        result.notes.append(f"magnetisation not given for {_few(guessed)}: axial where the shape "
                            f"has an axis, else through the thickness, else +z; give it in a parts "
                            f"list or with --set magnetization=WORD.")


def _few(names) -> str:
    return ", ".join(names) if len(names) <= 6 else f"{len(names)} bodies ({names[0]}, ...)"
