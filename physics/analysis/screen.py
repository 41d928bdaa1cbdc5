"""Screening many layouts against a spec: one row per layout, each written as it finishes, a
batch that resumes where it stopped.

A layout is a scene file with its --set overrides. Each runs in a worker (physics.analysis.batch
pools, engine in in-process mode) with an optional time limit; a layout that fails to load, raises
or runs out of time is recorded with its error and the batch goes on. Rows are appended to a JSON
lines file and flushed to disk one by one, so a killed batch keeps every finished row; a row cut
short by the kill is dropped when the batch is resumed.
"""
from __future__ import annotations

import hashlib
import json
import os
import signal
import threading
import time
from dataclasses import dataclass
from pathlib import Path

from trapscape.physics.analysis.results import json_ready
from trapscape.physics.analysis.run import load_analysis
from trapscape.physics.analysis.spec import layout_figures, load_spec, scores, verdict
from trapscape.physics.analysis.variants import scene_variants
from trapscape.physics.field import engine
from trapscape.scene.errors import SceneError
from trapscape.scene.files import is_scene_file


@dataclass(frozen=True)
class Layout:
    """One scene file with its overrides; or a CAD export that becomes that scene file when it
    runs (imported with the parts list into the template scene)."""

    scene: str
    overrides: tuple = ()
    cad: str = ""
    parts: str = ""
    template: str = ""

    @property
    def key(self) -> str:
        """What identifies the layout in the rows (resume skips the keys already there)."""
        return " ".join([self.cad or self.scene, *self.overrides])


def cad_layouts(inputs, template: str, parts: str | None, folder, grid=()) -> list:
    """One layout per CAD export (files, or folders standing for the exports inside them),
    with every combination of the swept values; their scenes are to be written into `folder`.

    Parameters
    ----------
    inputs : sequence of str
    template : str
        The template scene (scene.cad.template), checked here once.
    parts : str or None
        The parts list (CSV).
    folder : str or os.PathLike
    grid : sequence of dict

    Returns
    -------
    list of Layout

    Raises
    ------
    SceneError
        A bad template, or an input that is no CAD export.
    """
    from trapscape.scene.cad.importing import cad_files  # here: only CAD screenings need them
    from trapscape.scene.cad.template import read_template

    read_template(template)
    layouts, stems = [], set()
    for export in cad_files(inputs):
        if not export.is_file():
            raise SceneError(f"{export}: no such CAD export file or folder.")
        if export.suffix.lower() == ".toml":
            raise SceneError(f"{export}: with --template the inputs are CAD exports, not scenes; "
                             f"screen scenes in a run without --template.")
        stem = export.stem
        while stem in stems:  # the same name in two folders
            stem += "_"
        stems.add(stem)
        scene = str(Path(folder) / f"{stem}.toml")
        for params in grid or [{}]:
            overrides = tuple(f"{k}={v!r}" for k, v in params.items())
            layouts.append(Layout(scene, overrides, str(export), parts or "", template))
    return layouts


def _scene_from_export(layout: Layout) -> None:
    """Import the layout's CAD export into its template and write the scene (in the worker, so
    a bad export is that layout's row, not the end of the batch)."""
    from trapscape.scene.cad.importing import import_cad
    from trapscape.scene.cad.template import read_template, write_layout_scene

    target = Path(layout.scene)
    imported = import_cad([layout.cad], target, parts_list=layout.parts or None)
    target.parent.mkdir(parents=True, exist_ok=True)
    write_layout_scene(imported, read_template(layout.template), target, Path(layout.cad))


def layouts_from(inputs, grid=()) -> list:
    """Scene files and folders of them (their *.toml, spec files left out), each with every
    combination of the swept values.

    Parameters
    ----------
    inputs : sequence of str
    grid : sequence of dict
        {name: value} per variant (physics.analysis.sweep.grid_of); empty: each scene's own
        [sweep] table (physics.analysis.variants), or the scene as it is.

    Returns
    -------
    list of Layout

    Raises
    ------
    SceneError
        An input that is neither a file nor a folder, or a folder with no scene.
    """
    scenes = []
    for text in inputs:
        path = Path(text)
        if path.is_dir():
            found = sorted(str(p) for p in path.glob("*.toml") if is_scene_file(p))
            if not found:
                raise SceneError(f"{text}: the folder holds no scene (.toml) file.")
            scenes.extend(found)
        elif path.is_file():
            scenes.append(str(path))
        else:
            raise SceneError(f"{text}: no such scene file or folder.")
    layouts = []
    for scene in scenes:
        for params in grid or _variants_or_as_is(scene):
            layouts.append(Layout(scene, tuple(f"{k}={v!r}" for k, v in params.items())))
    return layouts


def _variants_or_as_is(scene) -> list:
    """The scene's [sweep] variants; a scene that cannot be read runs as it is and its row gets
    the error (a bad scene among good ones is a row, not the end of the batch)."""
    try:
        return scene_variants(scene)
    except SceneError:
        return [{}]


def screen_layout(layout: Layout, spec_path: str, timeout: float | None = None) -> dict:
    """One layout's row: its figures, pass or fail with the failing requirement, or its error.

    Parameters
    ----------
    layout : Layout
    spec_path : str
    timeout : float, optional
        Seconds; past it the layout is stopped and recorded as timed out (main thread only).

    Returns
    -------
    dict
        key, scene, overrides, figures, passed, failing, error, seconds (JSON-ready).
    """
    start = time.monotonic()
    row = {"key": layout.key, "scene": layout.scene, "cad": layout.cad or None,
           "overrides": list(layout.overrides),
           "spec_sha256": spec_digest(spec_path), "figures": {}, "passed": False,
           "failing": None, "error": None}
    try:
        with _time_limit(timeout):
            spec = load_spec(spec_path)
            if layout.cad:
                _scene_from_export(layout)
            analysis = load_analysis(layout.scene, list(layout.overrides))
            row["figures"] = layout_figures(analysis, spec)
            row["passed"], row["failing"] = verdict(spec, row["figures"])
    except SceneError as error:
        row["error"] = str(error)
    except _TimedOut:
        row["error"] = f"timed out after {timeout:g} s"
    except Exception as error:  # noqa: BLE001  one layout's bug must not stop the batch
        row["error"] = f"failed: {type(error).__name__}: {error}"
    row["seconds"] = time.monotonic() - start
    return json_ready(row)


def spec_digest(spec_path) -> str:
    """The spec file's sha256: a resumed batch keeps only rows judged by the same spec.

    Parameters
    ----------
    spec_path : str or os.PathLike

    Returns
    -------
    str
    """
    return hashlib.sha256(Path(spec_path).read_bytes()).hexdigest()


def screen_layout_in_worker(layout: Layout, spec_path: str, timeout=None) -> dict:
    """screen_layout in the engine's in-process mode (a pool worker's one thread).

    Parameters
    ----------
    layout : Layout
    spec_path : str
    timeout : float, optional

    Returns
    -------
    dict
    """
    with engine.in_process_mode():
        return screen_layout(layout, spec_path, timeout)


class _TimedOut(Exception):
    pass


class _time_limit:
    """SIGALRM after `seconds`: only in a process's main thread (a pool worker's task); in other
    threads (a Dask worker's) there is no limit, the cluster's own apply."""

    def __init__(self, seconds):
        main = threading.current_thread() is threading.main_thread()
        self.seconds = seconds if main else None

    def __enter__(self):
        if self.seconds:
            self.previous = signal.signal(signal.SIGALRM, self._expire)
            signal.setitimer(signal.ITIMER_REAL, self.seconds)

    def __exit__(self, *exc):
        if self.seconds:
            signal.setitimer(signal.ITIMER_REAL, 0)
            signal.signal(signal.SIGALRM, self.previous)
        return False

    @staticmethod
    def _expire(signum, frame):
        raise _TimedOut


def finished_rows(path) -> list:
    """The complete rows of a JSON lines file (a line cut short by a kill is left out).

    Parameters
    ----------
    path : str or os.PathLike

    Returns
    -------
    list of dict
    """
    path = Path(path)
    if not path.exists():
        return []
    rows = []
    for line in path.read_text(encoding="utf-8").splitlines():
        try:
            row = json.loads(line)
        except json.JSONDecodeError:
            continue
        if isinstance(row, dict) and "key" in row:
            rows.append(row)
    return rows


class RowLog:
    """Rows appended to a JSON lines file, each flushed to disk before the next.

    A line left incomplete by an earlier kill is cut away when the log opens, so every line after
    it starts on its own line.
    """

    def __init__(self, path):
        self.path = Path(path)
        rows = finished_rows(self.path)
        text = "".join(json.dumps(r, allow_nan=False) + "\n" for r in rows)
        temporary = self.path.with_name(self.path.name + ".tmp")
        temporary.write_text(text, encoding="utf-8")
        os.replace(temporary, self.path)
        self.rows = rows
        self.stream = open(self.path, "a", encoding="utf-8")  # noqa: SIM115  closed by close()

    def append(self, row: dict) -> None:
        """Write one row and flush it to disk.

        Parameters
        ----------
        row : dict
            JSON-ready.
        """
        self.stream.write(json.dumps(row, allow_nan=False) + "\n")
        self.stream.flush()
        os.fsync(self.stream.fileno())
        self.rows.append(row)

    def close(self) -> None:
        """Close the file (the rows stay readable in self.rows)."""
        self.stream.close()


def ranked(spec_path, rows) -> list:
    """The rows with their score and rank (1 = best passing; failing and errored rows unranked).

    Parameters
    ----------
    spec_path : str
    rows : list of dict

    Returns
    -------
    list of dict
        In the order: ranked passing rows first, then failing, then errored.
    """
    spec = load_spec(spec_path)
    rows = [dict(r) for r in rows]
    for r, score in zip(rows, scores(spec, rows)):
        r["score"] = score
    passing = sorted((r for r in rows if r["passed"]), key=lambda r: (-(r["score"] or 0.0),
                                                                      r["key"]))
    for i, r in enumerate(passing, start=1):
        r["rank"] = i
    others = [r for r in rows if not r["passed"]]
    for r in others:
        r["rank"] = None
    return passing + sorted(others, key=lambda r: (r["error"] is not None, r["key"]))
