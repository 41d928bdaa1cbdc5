"""Mesh files (STL, OBJ, PLY, 3MF) read through trimesh and checked before use.

The body frame is the file's own origin, never the centroid (DESIGN.md, Conventions), so a part
exported in assembly coordinates lands where CAD put it. Each problem gets its own sentence:
missing, unreadable, empty, not closed, inconsistently oriented, zero volume, inside-out. Only
an inside-out but otherwise sound mesh is repaired (trimesh reverses every face, which is exact
for a closed, consistently wound mesh), with a warning that says so.
"""
from __future__ import annotations

import os
import warnings
import xml.etree.ElementTree as ElementTree
import zipfile
from pathlib import Path

import numpy as np

from trapscape.scene.errors import SceneError, SceneWarning
from trapscape.scene.files import MAX_MESH_BYTES, regular_file
from trapscape.scene.mesh_cache import CheckedMesh, cached_mesh, mesh_key
from trapscape.scene.shapes.meshops import mesh_volume, winding_number
from trapscape.scene.units import METRES_PER_3MF_UNIT

# A laptop's share: about 1.2 KB a triangle across the mesh's tables, search index and flat
# regions (216 bytes a triangle for a fan of slivers; 2.4 GB here);
# the exact field's time grows with the count too. A magnet's solid needs far fewer.
MAX_TRIANGLES = 2_000_000
WINDING_PAIR_BUDGET = 2e7  # point-triangle pairs for the enclosed-once test (about 1 s)
FORMATS = {".stl": "stl", ".obj": "obj", ".ply": "ply", ".3mf": "3mf"}
REPAIR_HINT = "repair it in CAD or a mesh tool (close the holes, export as a solid) and export again"
MESH_ELEMENT = "mesh"  # the 3MF core specification's element holding vertices and triangles


def read_mesh(path: Path, shown: str, scale: float | None, where: str):
    """(vertices (V, 3) m, faces (F, 3) int64) of a checked, outward-oriented closed mesh.

    scale: metres per file unit; None for a 3MF file means "the unit the 3MF declares". A file
    read before (the same bytes) comes from the mesh cache (scene.mesh_cache) with its warnings.
    """
    kind = FORMATS.get(path.suffix.lower())
    if kind is None:
        raise SceneError(f"{where}: {shown} is not a mesh format trapscape reads; export the "
                         f"part as STL, OBJ, PLY or 3MF.")
    if not os.path.lexists(path):
        raise SceneError(f"{where}: mesh file {shown} not found (looked for {path}); check the "
                         f"path, which is relative to the scene file.")
    regular_file(path, f"{where}: mesh file", "check the path, which is relative to the scene "
                 "file")
    if path.stat().st_size > MAX_MESH_BYTES:
        raise SceneError(f"{where}: {shown} is larger than {MAX_MESH_BYTES >> 20} MB; simplify "
                         f"the mesh (a magnet needs far fewer triangles).")
    try:
        key = mesh_key(path.read_bytes(), kind)
    except OSError:  # unreadable: the reader below says so in its own words
        checked = _checked_mesh(path, kind, shown, where)
    else:
        checked = cached_mesh(key, lambda: _checked_mesh(path, kind, shown, where))
    _check_triangle_count(len(checked.faces), shown, where)  # a limit lowered since stored
    if checked.inverted:
        warnings.warn(SceneWarning(
            f"{where}: {shown} is inside-out (its faces point inward); trimesh reversed every "
            f"face, which is safe for a closed mesh like this one - export it again with "
            f"outward normals to silence this warning."), stacklevel=2)
    if checked.bodies > 1:
        warnings.warn(SceneWarning(
            f"{where}: {shown} holds {checked.bodies} separate closed bodies; they are one part "
            f"here (one name, one grade, one north). To give each its own, run `trapscape import "
            f"{shown} -o parts.toml` (one [[magnet]] per body, with a parts list for grades and "
            f"directions) and copy its [[magnet]] tables, or export each magnet as its own "
            f"file."), stacklevel=2)
    if scale is None:
        scale = checked.file_scale
    vertices = np.asarray(checked.vertices, float) * scale
    faces = np.array(checked.faces, dtype=np.int64)
    vertices.setflags(write=False)
    faces.setflags(write=False)
    return vertices, faces


def _checked_mesh(path: Path, kind: str, shown: str, where: str) -> CheckedMesh:
    """The file read by trimesh and checked: each problem a SceneError of its own sentence."""
    mesh, file_scale = _load(path, kind, shown, where)
    if len(mesh.faces) == 0:
        if path.stat().st_size == 0:
            raise SceneError(f"{where}: {shown} is empty (0 bytes); export the part again.")
        raise SceneError(f"{where}: cannot read {shown} as {kind.upper()} (no triangles found in "
                         f"it: damaged, or not that format); export the solid body again.")
    _check_triangle_count(len(mesh.faces), shown, where)
    if not mesh.is_watertight:
        raise SceneError(f"{where}: {shown} is not closed (it has holes or open edges, so it "
                         f"has no inside); {REPAIR_HINT}.")
    if not mesh.is_winding_consistent:
        raise SceneError(f"{where}: {shown} has faces that point in and out at random (its "
                         f"winding is inconsistent); make the normals consistent in a mesh tool "
                         f"('recalculate' or 'unify normals') or export it again from CAD.")
    enclosed = mesh_volume(np.asarray(mesh.vertices, float), np.asarray(mesh.faces))
    box_volume = float(np.prod(np.ptp(mesh.vertices, axis=0)))
    if box_volume == 0.0 or abs(enclosed) <= 1e-9 * box_volume:
        raise SceneError(f"{where}: {shown} encloses zero volume (it is flat or degenerate); "
                         f"export the solid body, not a surface.")
    if enclosed < 0:
        mesh.invert()  # reverses every face: exact for a closed, consistently wound mesh
    _check_enclosed_once(np.asarray(mesh.vertices, float), np.asarray(mesh.faces), shown, where)
    return CheckedMesh(np.asarray(mesh.vertices, float), np.array(mesh.faces, dtype=np.int64),
                       file_scale, bool(enclosed < 0), int(mesh.body_count))


def _check_triangle_count(count: int, shown: str, where: str) -> None:
    if count > MAX_TRIANGLES:
        raise SceneError(f"{where}: {shown} has {count:,} triangles, more than the "
                         f"{MAX_TRIANGLES:,} trapscape handles; export it with a coarser "
                         f"tolerance (a chord error of 0.01 mm is plenty for the field).")


def _check_enclosed_once(vertices, faces, shown: str, where: str) -> None:
    """A SceneError when some volume is enclosed twice (winding number 2 on a lattice of the
    bounding box): overlapping bodies or a surface that passes through itself, whose volume,
    moment and mass would count the shared region twice. Overlaps thinner than the lattice
    step (about 1/12 of the part, finer for small meshes) can pass."""
    count = int(np.clip(WINDING_PAIR_BUDGET / len(faces), 64, 4096) ** (1.0 / 3.0))
    low, high = vertices.min(axis=0), vertices.max(axis=0)
    axes = [low[k] + (high[k] - low[k]) * (np.arange(count) + 0.5) / count for k in range(3)]
    lattice = np.stack(np.meshgrid(*axes, indexing="ij"), axis=-1).reshape(-1, 3)
    if np.abs(winding_number(lattice, vertices, faces)).max() > 1.5:
        raise SceneError(f"{where}: {shown} encloses some of its volume twice (overlapping "
                         f"bodies, or a surface that passes through itself), so its volume, "
                         f"moment and mass would count that region twice; unite the bodies in "
                         f"CAD (a boolean union) or export each magnet as its own file.")


def _load(path: Path, kind: str, shown: str, where: str):
    import trimesh

    if kind == "3mf":
        return _read_3mf(path, shown, where)
    try:
        loaded = trimesh.load(str(path), file_type=kind, force="mesh", process=True)
    except Exception as error:  # any reader failure is the file's fault, not ours
        raise SceneError(f"{where}: cannot read {shown} as {kind.upper()} "
                         f"({_short(error)}); export it again from CAD.") from None
    if not isinstance(loaded, trimesh.Trimesh):
        raise SceneError(f"{where}: {shown} holds no triangle mesh; export the solid body as "
                         f"{kind.upper()}.")
    return loaded, None


def _short(error: Exception) -> str:
    text = str(error).strip().splitlines()[0] if str(error).strip() else type(error).__name__
    return text[:120]


def _read_3mf(path: Path, shown: str, where: str):
    """A 3MF package read with the standard library (3MF Core Specification 1.x).

    trimesh's own 3MF reader needs lxml and networkx, which trimesh does not install; this one
    reads the mesh objects, their components and the build items with their transforms.
    """
    import trimesh

    try:
        with zipfile.ZipFile(path) as package:
            names = [n for n in package.namelist() if n.lower().endswith(".model")]
            if not names:
                raise ValueError("no 3D model part in the package")
            if package.getinfo(names[0]).file_size > MAX_MESH_BYTES:
                raise ValueError(f"its model unpacks to more than {MAX_MESH_BYTES >> 20} MB")
            root = ElementTree.fromstring(package.read(names[0]))
        unit = root.get("unit", "millimeter")
        if unit not in METRES_PER_3MF_UNIT:
            raise ValueError(f"unknown unit {unit!r}")
        vertices, faces = _3mf_build(root)
    except (zipfile.BadZipFile, ElementTree.ParseError, ValueError, KeyError, IndexError,
            OSError) as error:
        raise SceneError(f"{where}: cannot read {shown} as 3MF ({_short(error)}); export it "
                         f"again from CAD.") from None
    mesh = trimesh.Trimesh(vertices=vertices, faces=faces, process=True)
    return mesh, METRES_PER_3MF_UNIT[unit]


def _tag(element) -> str:
    return element.tag.rsplit("}", 1)[-1]


def _3mf_transform(text: str | None) -> np.ndarray:
    matrix = np.eye(4)
    if text:  # twelve numbers: the 3x3 part row by row (row vectors), then the translation
        values = np.array(text.split(), dtype=float).reshape(4, 3)
        matrix[:3, :3] = values[:3].T
        matrix[:3, 3] = values[3]
    return matrix


def _3mf_build(root):
    objects = {}
    for element in root.iter():
        if _tag(element) == "object":
            objects[element.get("id")] = element

    def object_triangles(object_id, transform, depth=0):
        if depth > 16:
            raise ValueError("components nest too deeply")
        element = objects[object_id]
        pieces = []
        for child in element:
            if _tag(child) == MESH_ELEMENT:
                vertices = np.array([[float(v.get(a)) for a in "xyz"] for v in child.iter()
                                     if _tag(v) == "vertex"])
                faces = np.array([[int(t.get(a)) for a in ("v1", "v2", "v3")]
                                  for t in child.iter() if _tag(t) == "triangle"], dtype=np.int64)
                if len(vertices) == 0 or len(faces) == 0 or faces.max() >= len(vertices):
                    raise ValueError("a mesh object without valid triangles")
                moved = vertices @ transform[:3, :3].T + transform[:3, 3]
                pieces.append(moved[faces])
            elif _tag(child) == "components":
                for component in child:
                    inner = transform @ _3mf_transform(component.get("transform"))
                    pieces.extend(object_triangles(component.get("objectid"), inner, depth + 1))
        return pieces

    triangles = []
    for item in root.iter():
        if _tag(item) == "item":
            triangles.extend(object_triangles(item.get("objectid"),
                                              _3mf_transform(item.get("transform"))))
    if not triangles:
        raise ValueError("no build items with triangles")
    soup = np.vstack(triangles)
    return soup.reshape(-1, 3), np.arange(len(soup) * 3).reshape(-1, 3)
