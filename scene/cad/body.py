"""One closed body of a CAD export, and what a file's bodies say about their unit."""
from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from trapscape.scene.errors import SceneError
from trapscape.scene.meshes import REPAIR_HINT
from trapscape.scene.shapes.meshops import mesh_volume

MAX_BODIES = 2000  # more bodies than an assembly we model; bounds the pairwise checks


@dataclass
class Body:
    """One closed body: vertices (V, 3) in metres once `scale` is applied, outward faces."""

    name: str
    vertices: np.ndarray
    faces: np.ndarray
    source: str  # the file it came from, as the user named it
    exact_volume: float | None = None  # m^3 from the CAD solid (STEP), else None


@dataclass
class FileBodies:
    bodies: list
    metres_per_unit: float | None  # what the file says; None: the file does not say
    unit_source: str  # "the file's LENGTH_UNIT", "the 3MF unit attribute", ""


def closed_body(mesh, name: str, shown: str, exact_volume=None) -> Body:
    """A Body from a trimesh piece, or a SceneError (one sentence) when it is open."""
    if not mesh.is_watertight or not mesh.is_winding_consistent:
        raise SceneError(f"{shown}: body '{name}' is not closed (it has holes, open edges or "
                         f"faces wound both ways, so it has no inside); {REPAIR_HINT}.")
    vertices = np.asarray(mesh.vertices, float)
    faces = np.asarray(mesh.faces, np.int64)
    volume = mesh_volume(vertices, faces)
    if volume == 0.0:
        raise SceneError(f"{shown}: body '{name}' encloses zero volume; export solids, not "
                         f"surfaces.")
    if volume < 0:
        faces = faces[:, ::-1].copy()  # inside-out: reverse every face (exact when closed)
    return Body(name, vertices, faces, shown, exact_volume)


def clean_name(text: str) -> str:
    """A part name from a CAD label: letters, digits, '-', '_' and '.', no leading or trailing
    separators ('' when nothing is left)."""
    return re.sub(r"[^A-Za-z0-9_.-]+", "-", text.strip()).strip("-.")[:60]
