"""Equivalent-dipole fits of large meshes kept on disk, keyed by the mesh and its magnetisation:
a screening of many layouts built from the same CAD parts fits each part once.

The cache folder is $TRAPSCAPE_CACHE, else $XDG_CACHE_HOME/trapscape, else ~/.cache/trapscape;
TRAPSCAPE_CACHE=off turns it off. A file that cannot be read is fitted again and replaced; one
that cannot be written is skipped (the fit is only slower next time). Files are written to a
temporary name and moved into place, so two workers fitting the same part never mix their bytes.
"""
from __future__ import annotations

import hashlib
import os
import tempfile
from pathlib import Path

import numpy as np

from trapscape.scene.mesh_cache import cache_root

FORMAT = "1"  # bump when the fit or its inputs change meaning


def cache_folder() -> Path | None:
    """Where fits are kept, or None when caching is off.

    Returns
    -------
    pathlib.Path or None
    """
    root = cache_root()
    return None if root is None else root / "fits"


def fit_key(vertices, faces, magnetization, count: int) -> str:
    """sha256 of everything the fit depends on.

    Parameters
    ----------
    vertices : ndarray, shape (V, 3)
        m, body frame.
    faces : ndarray, shape (F, 3)
    magnetization : ndarray, shape (3,)
        A/m, body frame.
    count : int
        Equivalent sources.

    Returns
    -------
    str
    """
    digest = hashlib.sha256(FORMAT.encode())
    for array in (np.asarray(vertices, np.float64), np.asarray(faces, np.int64),
                  np.asarray(magnetization, np.float64), np.array([count], np.int64)):
        digest.update(np.ascontiguousarray(array).tobytes())
    return digest.hexdigest()


def cached_fit(key: str, fit):
    """The fit stored under `key`, or `fit()` computed now and stored.

    Parameters
    ----------
    key : str
    fit : callable
        () -> (positions (N, 3), moments (N, 3), error float).

    Returns
    -------
    tuple
        As fit() returns.
    """
    folder = cache_folder()
    path = None if folder is None else folder / f"{key}.npz"
    if path is not None and path.is_file():
        try:
            with np.load(path) as stored:
                return stored["positions"], stored["moments"], float(stored["error"])
        except (OSError, ValueError, KeyError):
            pass  # damaged or foreign: fit again and replace it
    result = fit()
    if path is not None:
        _store(path, *result)
    return result


def _store(path: Path, positions, moments, error) -> None:
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        handle, temporary = tempfile.mkstemp(dir=path.parent, suffix=".npz.tmp")
        with os.fdopen(handle, "wb") as stream:
            np.savez(stream, positions=positions, moments=moments, error=error)
        os.replace(temporary, path)
    except OSError:
        pass  # a read-only or full disk: no cache, the same answer
