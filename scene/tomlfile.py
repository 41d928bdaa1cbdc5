"""Reading TOML bytes with messages a person can act on."""
from __future__ import annotations

import re
import sys

from trapscape.scene.errors import SceneError

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - exercised on 3.10 only
    import tomli as tomllib


def parse_toml(raw: bytes, shown: str) -> dict:
    """The document as a dict, or a SceneError naming the line and how to fix it."""
    try:
        text = raw.removeprefix(b"\xef\xbb\xbf").decode("utf-8")  # a byte-order mark is no text
    except UnicodeDecodeError as error:
        line = raw[: error.start].count(b"\n") + 1
        raise SceneError(f"{shown}, line {line}: the file is not UTF-8 text; save it as UTF-8 "
                         f"(plain text).") from None
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as error:
        raise SceneError(_syntax_message(str(error), shown, text)) from None
    except RecursionError:
        raise SceneError(f"{shown}: the file nests tables or lists too deeply; flatten it.") from None


def _syntax_message(detail: str, shown: str, text: str) -> str:
    where = re.search(r"\(at (line \d+, column \d+|end of document)\)", detail)
    place = f", {where.group(1)}" if where else ""
    place = place.replace("end of document", "at the end of the file")
    reason = re.sub(r"\s*\(at [^)]*\)", "", detail).strip()
    if reason.startswith("Cannot overwrite a value") or reason.startswith("Cannot declare"):
        doubled = _first_doubled_key(text)
        if doubled and doubled[0] == "table":
            _, name, first, second = doubled
            return (f"{shown}, lines {first} and {second}: the table [{name}] is declared twice; "
                    f"for a list of entries write [[{name}]] (double brackets) before each one, "
                    f"otherwise merge the two tables.")
        if doubled:
            _, key, first, second = doubled
            return (f"{shown}, lines {first} and {second}: the key '{key}' is given twice in "
                    f"the same table; keep one of them.")
        return (f"{shown}{place}: a key or table is given twice (TOML allows each key once per "
                f"table); delete or rename one of them.")
    return (f"{shown}{place}: not valid TOML ({reason[:1].lower() + reason[1:]}); check the "
            f"quotes, brackets and '=' on that line.")


_HEADER = re.compile(r"^\s*(\[\[?)\s*([^\]]+?)\s*\]\]?")
_KEY = re.compile(r"^\s*([A-Za-z0-9_\-\"'. ]+?)\s*=")


def _first_doubled_key(text: str):
    """("key" or "table", name, first line, second line) of the first thing given twice."""
    seen: dict = {}
    tables: dict = {}
    table = ("", 0)
    for number, line in enumerate(text.splitlines(), start=1):
        header = _HEADER.match(line)
        if header:
            single = header.group(1) == "["
            if single and header.group(2) in tables:
                return "table", header.group(2), tables[header.group(2)], number
            if single:
                tables[header.group(2)] = number
            table = (header.group(2), 0 if single else number)
            continue
        key = _KEY.match(line)
        if key:
            name = key.group(1).strip().strip("\"'")
            if (table, name) in seen:
                return "key", name, seen[(table, name)], number
            seen[(table, name)] = number
    return None
