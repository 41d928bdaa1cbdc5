"""Options and helpers shared by the sub-commands."""
from __future__ import annotations

import contextlib
import json
import os
import sys
import threading
from pathlib import Path

from trapscape.scene.errors import SceneError


def add_scene_arguments(parser) -> None:
    parser.add_argument("scene", metavar="SCENE", help="scene file (TOML)")
    parser.add_argument(
        "--set", action="append", default=[], metavar="NAME=VALUE",
        help="override a [params] value, e.g. --set gap=4 (repeatable)",
    )
    parser.add_argument("--quiet", action="store_true", help="no progress output")


def analysis_from_args(args):
    """The analysis of SCENE with its --set overrides (nothing computed yet)."""
    from trapscape.physics.analysis.run import load_analysis

    return load_analysis(args.scene, args.set)


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


@contextlib.contextmanager
def replaced_atomically(path, newline=None):
    """A text stream on a temporary file beside `path`, moved onto `path` when the block ends
    without error (readers never see half a file); SceneError if it cannot be written."""
    target = Path(path)
    # a name of our own (not mkstemp's, whose 0600 mode would outlive the move)
    temporary = target.with_name(f".{target.name}.{os.getpid()}.{threading.get_ident()}.tmp")
    try:
        try:
            with open(temporary, "w", encoding="utf-8", newline=newline) as stream:
                yield stream
            os.replace(temporary, target)
        except BaseException:
            temporary.unlink(missing_ok=True)
            raise
    except OSError as error:
        raise SceneError(f"cannot write {path}: {error.strerror}; choose a writable path.") from None


def write_json(path: str, payload: dict) -> None:
    """The payload as JSON, written to a temporary file beside `path` and moved into place."""
    from trapscape.physics.analysis.results import json_ready  # lazy: the parser starts fast

    text = json.dumps(json_ready(payload), indent=2, allow_nan=False) + "\n"
    with replaced_atomically(path) as stream:
        stream.write(text)
