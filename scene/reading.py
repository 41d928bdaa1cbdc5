"""Typed reading of scene values: numbers or expressions, vectors, words, with checked keys.

Every reader takes the table, the key and a `where` ("gauge.toml, [[magnet]] 2 'block'") and
raises a SceneError that names the file, the table, the key and the fix.
"""
from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np

from trapscape.scene.errors import SceneError, SceneWarning
from trapscape.scene.expressions import evaluate, type_word
from trapscape.scene.names import did_you_mean, listing

REQUIRED = object()
# keys of the file's top level: written after a [table] header, TOML puts them in that table
TOP_LEVEL = ("version", "title", "units", "gravity", "materials", "allow_overlap",
             "mesh_size_check")
LARGEST_LENGTH = 1000.0  # m: nothing trapscape models is a kilometre across
SMALLEST_LENGTH = 1e-9  # m


@dataclass(frozen=True)
class Context:
    """What every reader needs: the file's name for messages, the parameters, the unit."""

    shown: str
    params: dict
    scale: float  # metres per file unit
    units: str
    mesh_size_check: str = "warn"  # scene.mesh_sizes.MODES


def check_keys(table: dict, allowed, where: str, elsewhere: dict | None = None) -> None:
    """Unknown keys are an error with a did-you-mean; `elsewhere` maps a key to where it goes."""
    for key in table:
        if key in allowed:
            continue
        if elsewhere and key in elsewhere:
            raise SceneError(f"{where}: the key '{key}' does not belong here; {elsewhere[key]}.")
        if key in TOP_LEVEL:
            raise SceneError(f"{where}: '{key}' is a top-level key, but it comes after a [table] "
                             f"header, so TOML puts it in that table; move it above the first "
                             f"[table] or [[table]].")
        raise SceneError(f"{where}: unknown key '{key}'{did_you_mean(key, allowed)}; the keys "
                         f"here are {listing(sorted(allowed))}.")


def _missing(key: str, where: str, example: str) -> SceneError:
    return SceneError(f"{where}: the key '{key}' is missing; add it, e.g. {example}.")


def scalar(ctx: Context, value, where: str) -> float:
    """A number, or an expression in quotes over [params], as a finite float."""
    if isinstance(value, bool) or not isinstance(value, (int, float, str)):
        raise SceneError(f"{where}: must be a number or an expression in quotes, got "
                         f"{type_word(value)}.")
    if isinstance(value, str):
        return evaluate(value, ctx.params, where)
    number = float(value)
    if not math.isfinite(number):
        raise SceneError(f"{where}: {value} is not a finite number; give a real value.")
    return number


# Physical quantities read by key name, and the range no real part leaves.
PLAUSIBLE = {
    "density": (1e5, "kg/m^3", "the densest solid, osmium, is 22,590 kg/m^3"),
}


def number(ctx: Context, table: dict, key: str, where: str, default=REQUIRED,
           example: str = "", length: bool = False, positive: bool = False) -> float:
    """table[key] as a float (lengths converted to metres), or the default when it is absent."""
    if key not in table:
        if default is REQUIRED:
            raise _missing(key, where, example or f"{key} = 1")
        return default
    value = scalar(ctx, table[key], f"{where}, {key}")
    if positive and value <= 0:
        unit = f" {ctx.units}" if length else ""
        raise SceneError(f"{where}, {key}: must be positive, got {value:g}{unit}; give a size "
                         f"above zero.")
    if key in PLAUSIBLE and abs(value) > PLAUSIBLE[key][0]:
        highest, unit, why = PLAUSIBLE[key]
        raise SceneError(f"{where}, {key}: {value:g} {unit} is above {highest:g} {unit} ({why}); "
                         f"check the value.")
    return checked_length(ctx, value, f"{where}, {key}", is_size=positive) if length else value


def checked_length(ctx: Context, value: float, where: str, is_size: bool = False) -> float:
    """value (file units) in metres; no length is a kilometre, no size below a nanometre."""
    metres = value * ctx.scale
    if abs(metres) > LARGEST_LENGTH:
        raise SceneError(f"{where}: {value:g} {ctx.units} is more than a kilometre; check the "
                         f"value and the file's units.")
    if is_size and 0 < abs(metres) < SMALLEST_LENGTH:
        raise SceneError(f"{where}: {value:g} {ctx.units} is below a nanometre; check the value "
                         f"and the file's units.")
    return metres


def integer(ctx: Context, table: dict, key: str, where: str, low: int, high: int,
            default=REQUIRED) -> int:
    if key not in table:
        if default is REQUIRED:
            raise _missing(key, where, f"{key} = {max(low, 2)}")
        return default
    return whole(ctx, table[key], f"{where}, {key}", low, high)


def whole(ctx: Context, value, where: str, low: int, high: int) -> int:
    number_ = scalar(ctx, value, where)
    if number_ != round(number_) or not low <= number_ <= high:
        raise SceneError(f"{where}: must be a whole number from {low} to {high}, got "
                         f"{number_:g}.")
    return int(round(number_))


def vector(ctx: Context, table: dict, key: str, where: str, default=REQUIRED, length=False,
           size: int = 3, example: str = "") -> np.ndarray:
    """table[key] as a list of `size` numbers (metres when length), or the default."""
    if key not in table:
        if default is REQUIRED:
            raise _missing(key, where, example or f"{key} = [0, 0, 1]")
        return np.array(default, dtype=float)
    return vector_value(ctx, table[key], f"{where}, {key}", length, size)


def vector_value(ctx: Context, value, where: str, length=False, size: int = 3) -> np.ndarray:
    if not isinstance(value, list) or len(value) != size:
        got = f"{len(value)} values" if isinstance(value, list) else type_word(value)
        raise SceneError(f"{where}: must be a list of {size} numbers, got {got}; write e.g. "
                         f"[{', '.join(['0'] * size)}].")
    numbers = [scalar(ctx, item, where) for item in value]
    if length:
        numbers = [checked_length(ctx, item, where) for item in numbers]
    return np.array(numbers, dtype=float)


def unit_vector(ctx: Context, table: dict, key: str, where: str, default=REQUIRED) -> np.ndarray:
    raw = vector(ctx, table, key, where, default)
    norm = float(np.linalg.norm(raw))
    if norm == 0.0 or not math.isfinite(norm):
        raise SceneError(f"{where}, {key}: the vector {_show(raw)} has no direction; give a "
                         f"non-zero vector such as [0, 0, 1].")
    return raw / norm


def word(table: dict, key: str, where: str, choices, default=REQUIRED) -> str:
    """table[key] as one of the allowed words."""
    if key not in table:
        if default is REQUIRED:
            raise _missing(key, where, f"{key} = \"{list(choices)[0]}\"")
        return default
    value = table[key]
    if not isinstance(value, str) or value not in choices:
        shown = f"\"{value}\"" if isinstance(value, str) else type_word(value)
        hint = did_you_mean(value, choices) if isinstance(value, str) else ""
        raise SceneError(f"{where}, {key}: {shown} is not one of {listing(choices)}{hint}; "
                         f"choose one of them.")
    return value


def text(table: dict, key: str, where: str, default=REQUIRED) -> str:
    if key not in table:
        if default is REQUIRED:
            raise _missing(key, where, f"{key} = \"...\"")
        return default
    value = table[key]
    if not isinstance(value, str) or not value.strip():
        raise SceneError(f"{where}, {key}: must be non-empty text in quotes, got "
                         f"{type_word(value)}.")
    if any(_is_control(c) for c in value):
        value = "".join(f"\\x{ord(c):02x}" if _is_control(c) else c for c in value)
        warnings.warn(SceneWarning(f"{where}, {key}: the text holds control characters (invisible "
                                   f"bytes that would garble a terminal); they are kept escaped, "
                                   f"as \"{value.strip()}\"."))
    return value.strip()


def _is_control(character: str) -> bool:
    return ord(character) < 32 and character != "\t" or 127 <= ord(character) < 160


def table_list(document: dict, key: str, where: str) -> list:
    """An array of tables ([[key]]); a single [key] table is a common slip, said so."""
    value = document.get(key, [])
    if isinstance(value, dict):
        raise SceneError(f"{where}: [{key}] must be written [[{key}]] (double brackets), once "
                         f"per entry.")
    if not isinstance(value, list) or not all(isinstance(v, dict) for v in value):
        raise SceneError(f"{where}: '{key}' must be a list of tables written [[{key}]], got "
                         f"{type_word(value)}.")
    return value


def sub_table(value, where: str, example: str) -> dict:
    if not isinstance(value, dict):
        raise SceneError(f"{where}: must be a table, got {type_word(value)}; write e.g. "
                         f"{example}.")
    return value


def _show(values) -> str:
    return "[" + ", ".join(f"{v:g}" for v in values) + "]"
