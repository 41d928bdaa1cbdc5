"""Input files read with limits: a scene, materials or mesh path must be a regular file of a
bounded size (not a folder, a device such as /dev/zero, a pipe or a symbolic-link loop)."""
from __future__ import annotations

import errno
import os
import stat
from pathlib import Path

from trapscape.scene.errors import SceneError

MAX_SCENE_BYTES = 16 * 2**20  # a scene or materials file: TOML text, never near this
MAX_MESH_BYTES = 1024 * 2**20  # a mesh file, and the uncompressed model inside a 3MF package
NOT_SCENES = (".spec.toml", ".template.toml")  # TOML beside the scenes: screening specs, templates


def is_scene_file(path) -> bool:
    """A .toml that is a scene, not a screening spec or a template kept beside the scenes."""
    name = Path(path).name
    return name.endswith(".toml") and not name.endswith(NOT_SCENES)


def regular_file(path, what: str, hint: str) -> Path:
    """`path` when it names a regular file (links followed), else a SceneError that says what
    it is instead; `what` names the file ("the scene file"), `hint` says what to do."""
    path = Path(path)
    try:
        mode = os.stat(path).st_mode
    except FileNotFoundError:
        raise SceneError(f"{what} {path} not found; {hint}.") from None
    except OSError as error:
        if error.errno == errno.ELOOP:
            raise SceneError(f"{what} {path} is a loop of symbolic links; {hint}.") from None
        raise SceneError(f"cannot read {what} {path} ({error.strerror}); {hint}.") from None
    if stat.S_ISDIR(mode):
        raise SceneError(f"{what} {path} is a folder, not a file; {hint}.")
    if not stat.S_ISREG(mode):
        raise SceneError(f"{what} {path} is not a regular file (a device, pipe or socket); "
                         f"{hint}.")
    return path


def read_limited(path, limit: int, what: str, hint: str) -> bytes:
    """The bytes of a regular file of at most `limit` bytes (read no further than that)."""
    path = regular_file(path, what, hint)
    try:
        with open(path, "rb") as stream:
            data = stream.read(limit + 1)
    except OSError as error:
        raise SceneError(f"cannot read {what} {path} ({error.strerror}); {hint}.") from None
    if len(data) > limit:
        raise SceneError(f"{what} {path} is larger than {limit >> 20} MB; {hint}.")
    return data
