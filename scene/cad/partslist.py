"""A parts list (CSV) for a large layout: each row a body-name pattern and what matching bodies
are. Columns: pattern (shell-style, * and ?, case-insensitive), role (magnet | ignore), grade,
magnetization (an intent word such as axial, or a direction +z / "0 0 1"), polarity (+ or -).
The first row whose pattern matches a body decides it."""
from __future__ import annotations

import csv
import fnmatch
import io
from dataclasses import dataclass
from pathlib import Path

from trapscape.scene.errors import SceneError
from trapscape.scene.files import read_limited

COLUMNS = ("pattern", "role", "grade", "magnetization", "polarity")
ROLES = ("magnet", "ignore")
MAX_LIST_BYTES = 4 * 2**20


@dataclass(frozen=True)
class Row:
    pattern: str
    role: str
    grade: str
    magnetization: str
    polarity: str  # "+" or "-"
    line: int


def read_parts_list(path: Path, shown: str) -> list:
    """The rows of a parts list, checked; a SceneError (one sentence) for a bad file or row."""
    raw = read_limited(path, MAX_LIST_BYTES, "parts list", "give the parts list's .csv file")
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise SceneError(f"{shown}: the parts list is not UTF-8 text; save it as CSV "
                         f"(UTF-8).") from None
    reader = csv.DictReader(io.StringIO(text))
    header = [h.strip().lower() for h in (reader.fieldnames or [])]
    if "pattern" not in header or "role" not in header:
        raise SceneError(f"{shown}: the parts list needs a header row with at least pattern and "
                         f"role (columns: {', '.join(COLUMNS)}).")
    unknown = [h for h in header if h not in COLUMNS]
    if unknown:
        raise SceneError(f"{shown}: unknown column '{unknown[0]}' in the parts list; use "
                         f"{', '.join(COLUMNS)}.")
    rows = []
    for line, record in enumerate(reader, start=2):
        cells = {k.strip().lower(): (v or "").strip() for k, v in record.items() if k}
        if not any(cells.values()):
            continue
        where = f"{shown}, line {line}"
        role = cells.get("role", "").lower()
        if role not in ROLES:
            raise SceneError(f"{where}: role {cells.get('role', '')!r} is neither magnet nor "
                             f"ignore; write one of them.")
        if not cells.get("pattern"):
            raise SceneError(f"{where}: the pattern is empty; give a body name or a pattern "
                             f"such as disc-*.")
        polarity = cells.get("polarity", "") or "+"
        if polarity not in ("+", "-"):
            raise SceneError(f"{where}: polarity {polarity!r} is neither + nor -; write + (as "
                             f"the magnetization says) or - (reversed).")
        rows.append(Row(cells["pattern"], role, cells.get("grade", ""),
                        cells.get("magnetization", ""), polarity, line))
    return rows


def match(rows: list, name: str) -> Row | None:
    """The first row whose pattern matches the body name (case-insensitive), or None."""
    for row in rows:
        if fnmatch.fnmatchcase(name.lower(), row.pattern.lower()):
            return row
    return None
