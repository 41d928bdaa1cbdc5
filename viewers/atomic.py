"""Outputs written whole or not at all: each to a temporary file beside its target, moved onto
the target when complete (os.replace is atomic on one file system). An interrupted or failed
write leaves the previous file as it was and no partial file at the target."""
from __future__ import annotations

import contextlib
import os
import threading
from pathlib import Path

from trapscape.scene.errors import SceneError


def temporary_beside(path) -> Path:
    """A hidden name in the target's folder that keeps its suffix (writers that go by the
    extension pick the same format), unique to this process and thread."""
    target = Path(path)
    return target.with_name(
        f".{target.stem}.{os.getpid()}.{threading.get_ident()}.tmp{target.suffix}")


@contextlib.contextmanager
def atomic_path(path):
    """Yield a temporary path to write; on a clean exit it replaces `path`.

    Raises SceneError (one sentence) when the file cannot be written or the writer left
    nothing (VTK writers report failure on stderr, not by raising).
    """
    temporary = temporary_beside(path)
    try:
        try:
            yield str(temporary)
            if not temporary.is_file():
                raise OSError(0, "nothing was written there")
            os.replace(temporary, path)
        except BaseException:
            temporary.unlink(missing_ok=True)
            raise
    except OSError as error:
        reason = error.strerror or str(error)
        raise SceneError(f"cannot write {path}: {reason}; choose a writable path.") from None


@contextlib.contextmanager
def replaced_atomically(path, newline=None):
    """A text stream (UTF-8) on a temporary file, moved onto `path` when the block ends."""
    with atomic_path(path) as temporary, open(temporary, "w", encoding="utf-8",
                                              newline=newline) as stream:
        yield stream


def save_figure(figure, path, **options) -> None:
    """A matplotlib figure saved whole to `path` (format from the suffix)."""
    options.setdefault("bbox_inches", "tight")
    with atomic_path(path) as temporary:
        figure.savefig(temporary, format=Path(path).suffix.lstrip(".").lower() or "png", **options)
