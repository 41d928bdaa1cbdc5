"""The closed bodies of a CAD export: a multi-body mesh file split by connected component, a 3MF
file by object, a STEP file by solid (step.py). Numbers stay in the file's unit here; the unit is
decided once for the whole file (units.py)."""
from __future__ import annotations

import xml.etree.ElementTree as ElementTree
import zipfile
from pathlib import Path

import numpy as np

from trapscape.scene.cad.body import MAX_BODIES, FileBodies, clean_name, closed_body
from trapscape.scene.errors import SceneError
from trapscape.scene.files import MAX_MESH_BYTES, regular_file
from trapscape.scene.meshes import MESH_ELEMENT, _3mf_transform, _short, _tag
from trapscape.scene.units import METRES_PER_3MF_UNIT

MESH_SUFFIXES = (".stl", ".obj", ".ply", ".3mf")
STEP_SUFFIXES = (".step", ".stp")


def read_bodies(path: Path, shown: str) -> FileBodies:
    """The bodies of one CAD file, each closed and outward-oriented (a SceneError otherwise)."""
    suffix = path.suffix.lower()
    if suffix not in MESH_SUFFIXES + STEP_SUFFIXES:
        raise SceneError(f"{shown}: not a CAD export trapscape imports; export the assembly as "
                         f"STEP, 3MF, STL, OBJ or PLY.")
    if not path.exists():
        raise SceneError(f"{shown}: file not found; check the path.")
    regular_file(path, f"{shown}: the file", "give a CAD export file or a folder of them")
    if path.stat().st_size > MAX_MESH_BYTES:
        raise SceneError(f"{shown} is larger than {MAX_MESH_BYTES >> 20} MB; export the magnets "
                         f"alone or with coarser tessellation.")
    if path.stat().st_size == 0:
        raise SceneError(f"{shown} is empty (0 bytes); export the assembly again.")
    if suffix in STEP_SUFFIXES:
        from trapscape.scene.cad.step import read_step

        return read_step(path, shown)
    if suffix == ".3mf":
        return _read_3mf(path, shown)
    return FileBodies(_split(_load_mesh(path, shown), path.stem, shown), None, "")


def _load_mesh(path: Path, shown: str):
    import trimesh

    try:
        loaded = trimesh.load(str(path), file_type=path.suffix.lower()[1:], force="mesh",
                              process=True)
    except Exception as error:  # any reader failure is the file's fault, not ours
        raise SceneError(f"{shown}: cannot read it ({_short(error)}); export it again from "
                         f"CAD.") from None
    if not isinstance(loaded, trimesh.Trimesh) or len(loaded.faces) == 0:
        raise SceneError(f"{shown}: no triangles found in it (damaged, or not that format); "
                         f"export the solid bodies again.")
    return loaded


def _split(mesh, name: str, shown: str) -> list:
    """One Body per connected component, ordered by position (x, then y, then z) so the names
    name-1, name-2, ... are the same on every run (a single body keeps the name)."""
    pieces = _components(mesh)
    if len(pieces) > MAX_BODIES:
        raise SceneError(f"{shown} holds {len(pieces)} bodies, more than {MAX_BODIES}; export "
                         f"the magnets alone.")
    pieces = sorted(pieces, key=lambda p: tuple(np.round(p.bounds.mean(axis=0), 9)))
    return [closed_body(piece, name if len(pieces) == 1 else f"{name}-{k}", shown)
            for k, piece in enumerate(pieces, start=1)]


def _components(mesh) -> list:
    """The connected pieces of a mesh (faces joined through shared vertices), found with
    scipy's graph components (trimesh's split needs networkx for open meshes)."""
    import trimesh
    from scipy.sparse import coo_matrix
    from scipy.sparse.csgraph import connected_components

    faces = np.asarray(mesh.faces, np.int64)
    edges = np.vstack([faces[:, [0, 1]], faces[:, [1, 2]]])
    count = len(mesh.vertices)
    graph = coo_matrix((np.ones(len(edges)), (edges[:, 0], edges[:, 1])), shape=(count, count))
    _, labels = connected_components(graph, directed=False)
    face_labels = labels[faces[:, 0]]
    pieces = []
    for label in np.unique(face_labels):
        chosen = faces[face_labels == label]
        used, inverse = np.unique(chosen, return_inverse=True)
        pieces.append(trimesh.Trimesh(vertices=np.asarray(mesh.vertices)[used],
                                      faces=inverse.reshape(-1, 3), process=False))
    return pieces


def _read_3mf(path: Path, shown: str) -> FileBodies:
    """Each build item's object (with its components) is a body, named by the object's name
    attribute (3MF Core Specification 1.x); a multi-body object is split by component."""
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
        items = _3mf_items(root)
    except (zipfile.BadZipFile, ElementTree.ParseError, ValueError, KeyError, IndexError,
            OSError) as error:
        raise SceneError(f"{shown}: cannot read it as 3MF ({_short(error)}); export it again "
                         f"from CAD.") from None
    bodies = []
    for k, (label, soup) in enumerate(items, start=1):
        mesh = trimesh.Trimesh(vertices=soup.reshape(-1, 3),
                               faces=np.arange(len(soup) * 3).reshape(-1, 3), process=True)
        bodies.extend(_split(mesh, label or f"{path.stem}-{k}", shown))
    unit_word = "the 3MF unit attribute" if root.get("unit") else "the 3MF default (millimetre)"
    return FileBodies(bodies, METRES_PER_3MF_UNIT[unit], unit_word)


def _3mf_items(root) -> list:
    """[(object name, triangle soup (T, 3, 3))] per build item."""
    objects = {e.get("id"): e for e in root.iter() if _tag(e) == "object"}

    def triangles(object_id, transform, depth=0):
        if depth > 16:
            raise ValueError("components nest too deeply")
        pieces = []
        for child in objects[object_id]:
            if _tag(child) == MESH_ELEMENT:
                vertices = np.array([[float(v.get(a)) for a in "xyz"] for v in child.iter()
                                     if _tag(v) == "vertex"])
                faces = np.array([[int(t.get(a)) for a in ("v1", "v2", "v3")]
                                  for t in child.iter() if _tag(t) == "triangle"], np.int64)
                if len(vertices) == 0 or len(faces) == 0 or faces.max() >= len(vertices):
                    raise ValueError("a mesh object without valid triangles")
                pieces.append((vertices @ transform[:3, :3].T + transform[:3, 3])[faces])
            elif _tag(child) == "components":
                for component in child:
                    inner = transform @ _3mf_transform(component.get("transform"))
                    pieces.extend(triangles(component.get("objectid"), inner, depth + 1))
        return pieces

    items = []
    for item in root.iter():
        if _tag(item) == "item":
            found = triangles(item.get("objectid"), _3mf_transform(item.get("transform")))
            if found:
                items.append((clean_name(objects[item.get("objectid")].get("name", "")),
                              np.vstack(found)))
    if not items:
        raise ValueError("no build items with triangles")
    return items
