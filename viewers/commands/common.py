"""Options and helpers shared by the sub-commands."""
from __future__ import annotations

import contextlib
import json
import math
import sys

import numpy as np

from trapscape.scene.errors import SceneError


def add_scene_arguments(parser) -> None:
    parser.add_argument("scene", metavar="SCENE", help="scene file (TOML)")
    parser.add_argument(
        "--set", action="append", default=[], metavar="NAME=VALUE",
        help="override a [params] value, e.g. --set gap=4 (repeatable)",
    )
    parser.add_argument("--quiet", action="store_true", help="no progress output")


def load_scene_from_args(args):
    from trapscape.scene.loader import load_scene, parse_overrides

    return load_scene(args.scene, overrides=parse_overrides(args.set))


def show_progress(args) -> bool:
    return not getattr(args, "quiet", False) and sys.stderr.isatty()


@contextlib.contextmanager
def progress(args, unit="pt", desc=None):
    """A progress callback ``update(done, total, stage=None)`` drawn on stderr at a terminal, or
    None (with --quiet or when stderr is not a terminal). The bar is closed on the way out."""
    if not show_progress(args):
        yield None
        return
    from tqdm import tqdm

    bar = tqdm(file=sys.stderr, unit=unit, desc=desc, leave=False)

    def update(done, total, stage=None):
        bar.total = total
        if stage is not None:
            bar.set_description(stage)
        bar.update(done - bar.n)

    try:
        yield update
    finally:
        bar.close()


def _clean(value):
    """JSON-safe: numpy to Python, NaN and inf to null."""
    if isinstance(value, dict):
        return {str(k): _clean(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_clean(v) for v in value]
    if isinstance(value, np.ndarray):
        return _clean(value.tolist())
    if isinstance(value, (np.floating, float)):
        value = float(value)
        return value if math.isfinite(value) else None
    if isinstance(value, np.integer):
        return int(value)
    if isinstance(value, np.bool_):
        return bool(value)
    return value


def tool_version() -> str:
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version("trapscape")
    except PackageNotFoundError:
        return "unknown"


def stamp(scene, payload: dict) -> dict:
    """Every JSON output carries the length unit, the tool's version and the scene's hash."""
    head = {"length_unit": scene.units, "trapscape_version": tool_version(),
            "scene": scene.path, "scene_sha256": scene.digest}
    return {**head, **payload}


def write_json(path: str, payload: dict) -> None:
    try:
        with open(path, "w", encoding="utf-8") as handle:
            json.dump(_clean(payload), handle, indent=2, allow_nan=False)
            handle.write("\n")
    except OSError as error:
        raise SceneError(f"cannot write {path}: {error.strerror}; choose a writable path.") from None
