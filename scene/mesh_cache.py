"""Checked meshes kept on disk, keyed by the file's bytes: reading a part again (the same scene
run twice, a screening of layouts built from the same CAD parts) skips trimesh and the checks of
scene.meshes (its enclosed-once test alone sums 4,096 points against every triangle).

The folder is $TRAPSCAPE_CACHE, else $XDG_CACHE_HOME/trapscape, else ~/.cache/trapscape (shared
with the equivalent-dipole fits, physics/field/fit_cache.py), under meshes/; TRAPSCAPE_CACHE=off
turns it off. Only meshes that passed every check are stored. A file that cannot be read is read
from the mesh file again and replaced; one that cannot be written is skipped. Files are written
to a temporary name and moved into place.
"""
from __future__ import annotations

import functools
import hashlib
import os
import tempfile
from importlib import metadata
from pathlib import Path
from typing import NamedTuple

import numpy as np

FORMAT = "1"  # bump when scene.meshes reads or checks a file differently


class CheckedMesh(NamedTuple):
    """A mesh file's triangles after every check, in the file's unit (scene.meshes)."""

    vertices: np.ndarray  # (V, 3) float64, file units, faces outward
    faces: np.ndarray  # (F, 3) int64
    file_scale: float | None  # metres per unit the file declares (3MF), else None
    inverted: bool  # the file was inside-out and every face was reversed
    bodies: int  # separate closed bodies


def cache_root() -> Path | None:
    """The cache folder, or None when caching is off.

    Returns
    -------
    pathlib.Path or None
    """
    setting = os.environ.get("TRAPSCAPE_CACHE")
    if setting == "off":
        return None
    if setting:
        return Path(setting)
    base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    return Path(base) / "trapscape"


def mesh_key(data: bytes, kind: str) -> str:
    """sha256 of what a checked mesh depends on: the file's bytes, its format, the reader.

    Parameters
    ----------
    data : bytes
        The mesh file.
    kind : str
        stl, obj, ply or 3mf.

    Returns
    -------
    str
    """
    digest = hashlib.sha256(f"{FORMAT}\0{kind}\0{_reader()}\0".encode())
    digest.update(data)
    return digest.hexdigest()


@functools.cache
def _reader() -> str:
    """trimesh's version (read once: a few ms of package metadata)."""
    try:
        return metadata.version("trimesh")
    except metadata.PackageNotFoundError:
        return "unknown"


def cached_mesh(key: str, read) -> CheckedMesh:
    """The checked mesh stored under `key`, or `read()` now and stored.

    Parameters
    ----------
    key : str
        mesh_key of the file.
    read : callable
        () -> CheckedMesh; raises (SceneError) for a file that fails a check.

    Returns
    -------
    CheckedMesh
    """
    folder = cache_root()
    path = None if folder is None else folder / "meshes" / f"{key}.npz"
    if path is not None and path.is_file():
        try:
            with np.load(path) as stored:
                scale = float(stored["file_scale"])
                return CheckedMesh(stored["vertices"], stored["faces"],
                                   None if np.isnan(scale) else scale,
                                   bool(stored["inverted"]), int(stored["bodies"]))
        except (OSError, ValueError, KeyError):
            pass  # damaged or foreign: read the mesh file again and replace it
    mesh = read()
    if path is not None:
        _store(path, mesh)
    return mesh


def _store(path: Path, mesh: CheckedMesh) -> None:
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        handle, temporary = tempfile.mkstemp(dir=path.parent, suffix=".npz.tmp")
        with os.fdopen(handle, "wb") as stream:
            np.savez(stream, vertices=np.asarray(mesh.vertices, np.float64),
                     faces=np.asarray(mesh.faces, np.int64),
                     file_scale=np.nan if mesh.file_scale is None else mesh.file_scale,
                     inverted=mesh.inverted, bodies=mesh.bodies)
        os.replace(temporary, path)
    except OSError:
        pass  # a read-only or full disk: no cache, the same answer
