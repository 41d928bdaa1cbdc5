"""A CAD export screened as a layout: its imported magnets put into a template scene that holds
everything else (title, probe, guide, search box, steel plates, parameters), so one template and
one parts list turn a folder of CAD exports into scenes.

The template is a scene in mm with no [[magnet]]: the magnets come from the export. The result is
text: the import's summary as comments, the template, then the imported [[magnet]] tables.
"""
from __future__ import annotations

import os
from pathlib import Path

from trapscape.scene.cad.writing import SCENE_UNIT_WORD
from trapscape.scene.errors import SceneError
from trapscape.scene.files import MAX_SCENE_BYTES, read_limited
from trapscape.scene.tomlfile import parse_toml

MAGNET_TABLES = "magnet"  # the scene's [[magnet]] array
HINT = "give a scene with the probe, search box and the rest, and no [[magnet]]"


def read_template(path) -> str:
    """The template's text, checked: TOML, units = "mm", no [[magnet]] of its own.

    Raises
    ------
    SceneError
    """
    shown = str(path)
    raw = read_limited(path, MAX_SCENE_BYTES, "the template scene", HINT)
    document = parse_toml(raw, shown)
    if document.get(MAGNET_TABLES):
        raise SceneError(f"{shown}: a template holds no [[magnet]] (the magnets come from each "
                         f"CAD export); move them out of the template.")
    if document.get("units") != SCENE_UNIT_WORD:
        raise SceneError(f"{shown}: a template must say units = \"{SCENE_UNIT_WORD}\", the unit "
                         f"trapscape import writes the magnets in.")
    return raw.decode("utf-8-sig")


def scene_with_template(template: str, imported_text: str, source: Path) -> str:
    """The template with the imported magnets appended, the import's summary on top.

    Parameters
    ----------
    template : str
        read_template's text.
    imported_text : str
        scene.cad.importing.ImportedScene.text.
    source : Path
        The CAD export, named in the first comment.

    Returns
    -------
    str
    """
    lines = imported_text.splitlines()
    first_magnet = lines.index("[[magnet]]")
    comments = [line for line in lines[:first_magnet] if line.startswith("#")]
    header = [f"# A layout screened from {source} with a template scene;"] + comments
    return "\n".join(header + ["", template.rstrip(), ""] + lines[first_magnet:]) + "\n"


def write_layout_scene(imported, template: str, target: Path, source: Path) -> None:
    """The layout's scene and its mesh files written beside it, each moved into place whole.

    Parameters
    ----------
    imported : scene.cad.importing.ImportedScene
    template : str
    target : Path
        The scene to write.
    source : Path
        The CAD export.
    """
    import trimesh

    for relative, (vertices, faces) in imported.meshes.items():
        path = target.parent / relative
        path.parent.mkdir(parents=True, exist_ok=True)
        mesh = trimesh.Trimesh(vertices=vertices, faces=faces, process=False)
        _replace(path, lambda temporary: mesh.export(temporary, file_type="stl"))
    text = scene_with_template(template, imported.text, source)
    _replace(target, lambda temporary: Path(temporary).write_text(text, encoding="utf-8"))


def _replace(path: Path, write) -> None:
    temporary = path.with_name(f".{path.name}.{os.getpid()}.tmp")
    try:
        write(str(temporary))
        os.replace(temporary, path)
    finally:
        temporary.unlink(missing_ok=True)
