"""The scene's optional [report] table: what the customer report's cover carries beside the
computed figures.

    [report]
    document = "TS-0042"          # document number
    revision = "B"
    author = "A. Engineer"
    logo = "logo.png"             # PNG, JPEG or SVG, relative to the scene file
"""
from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from trapscape.scene import reading
from trapscape.scene.errors import SceneError

LOGO_SUFFIXES = (".png", ".jpg", ".jpeg", ".svg")
MAX_LOGO_BYTES = 4 * 2**20  # a logo, not a photograph: the HTML carries it inline


@dataclass(frozen=True)
class ReportSettings:
    """The cover's document number, revision, author and logo file (None: not given)."""

    document: str | None = None
    revision: str | None = None
    author: str | None = None
    logo: Path | None = None


def read_report(document: dict, shown: str, base_dir: Path) -> ReportSettings:
    """The [report] table of a scene document.

    Parameters
    ----------
    document : dict
        The parsed scene file.
    shown : str
        The file's name, for messages.
    base_dir : pathlib.Path
        The scene's folder (the logo's path is relative to it).

    Returns
    -------
    ReportSettings

    Raises
    ------
    SceneError
        An unknown key, a value that is not text, or a logo that is missing, not an image
        file or too large.
    """
    where = f"{shown}, [report]"
    table = reading.sub_table(document.get("report", {}), where,
                              '[report] with document = "TS-0042"')
    reading.check_keys(table, ("document", "revision", "author", "logo"), where)
    texts = {key: reading.text(table, key, where, default=None)
             for key in ("document", "revision", "author")}
    logo = None
    if "logo" in table:
        logo = _logo(reading.text(table, "logo", where), where, base_dir)
    return ReportSettings(logo=logo, **texts)


def _logo(relative: str, where: str, base_dir: Path) -> Path:
    path = (base_dir / relative).resolve()
    if path.suffix.lower() not in LOGO_SUFFIXES:
        raise SceneError(f"{where}, logo: {relative!r} is not a PNG, JPEG or SVG file; give "
                         f"an image file.")
    if not path.is_file():
        raise SceneError(f"{where}, logo: {relative!r} does not exist (the path is relative "
                         f"to the scene file); fix the path or remove the key.")
    if path.stat().st_size > MAX_LOGO_BYTES:
        raise SceneError(f"{where}, logo: {relative!r} is larger than "
                         f"{MAX_LOGO_BYTES // 2**20} MB; give a smaller image.")
    return path
