"""Options and helpers shared by the sub-commands."""
from __future__ import annotations

import argparse
import contextlib
import json
import os
import sys
import time
from pathlib import Path

from trapscape.scene.errors import SceneError
from trapscape.viewers.atomic import replaced_atomically

AXES = {"x": 0, "y": 1, "z": 2}
FIGURE_SUFFIXES = (".png", ".pdf", ".svg")

# What one run may ask of a 2-core, 24 GiB machine (README, Limits): each keeps a run's memory
# under about 2 GB and its time to minutes. Checked before any work, with the option to lower.
MAX_FIELD_POINTS = 4_000_000  # field: about 400 bytes a point in arrays, CSV text on top
MAX_GRID_RESOLUTION = 160  # render: 160^3 = 4.1 million field points in the 3D grid
MAX_IMAGE_SIDE = 8192  # pixels
MAX_IMAGE_PIXELS = 40_000_000  # 160 MB of RGBA, twice over in the off-screen buffers
MAX_POINTS_FILE_BYTES = 200 * 2**20  # a --points CSV of about 4 million rows


def add_scene_arguments(parser) -> None:
    """SCENE, --set and --quiet: what every command that reads a scene takes."""
    parser.add_argument("scene", metavar="SCENE", help="scene file (TOML)")
    add_run_options(parser)


def add_run_options(parser) -> None:
    parser.add_argument(
        "--set", action="append", default=[], metavar="NAME=VALUE",
        help="override a [params] value, e.g. --set gap=4 (repeatable)",
    )
    parser.add_argument("--quiet", action="store_true", help="no progress output")


def add_output_argument(parser, metavar, help, required=False, former=None) -> None:
    """-o/--output, the one name of every command's main output; `former` is an earlier name
    of the same option, still read but no longer shown."""
    parser.add_argument("-o", "--output", dest="output", metavar=metavar, required=required,
                        help=help)
    if former:
        parser.add_argument(former, dest="output", metavar=metavar, help=argparse.SUPPRESS)


UNITS_HELP = ("display units of the printed tables and the plots, comma-separated, any order: "
              "mT or gauss, N, kgf or lbf, mm, in (or cm, m), e.g. --units gauss,lbf,in "
              "(default mT, N and the scene's length unit); JSON and CSV files stay SI "
              "(lengths in the scene's unit)")


def add_units_argument(parser) -> None:
    """--units, one syntax for every command (physics.analysis.display_units.parse_units)."""
    parser.add_argument("--units", metavar="UNITS", help=UNITS_HELP)


def check_units(args) -> None:
    """A wrong --units said before any work (a SceneError: one sentence, exit 2)."""
    from trapscape.physics.analysis.display_units import parse_units

    parse_units(getattr(args, "units", None))


def display_units(args, scene):
    """The reader's units: --units, else the scene's length unit, N and mT."""
    from trapscape.physics.analysis.display_units import parse_units

    return parse_units(getattr(args, "units", None), default_length=scene.units)


def add_section_argument(parser, help) -> None:
    parser.add_argument("--section", metavar="AXIS[=VALUE]", help=help)


def parse_section(text):
    """'y' -> (1, None); 'z=2.5' -> (2, 2.5); None -> (None, None)."""
    if not text:
        return None, None
    name, _, value = text.partition("=")
    axis = AXES.get(name.strip().lower())
    if axis is None:
        raise SceneError(f"--section {text!r}: write an axis x, y or z, optionally =VALUE "
                         "in the scene's unit, e.g. --section z=2.5.")
    if not value.strip():
        return axis, None
    return axis, finite_number(value, f"--section {text!r}")


def finite_number(text, where) -> float:
    """float(text), or a SceneError naming `where` for text that is no finite number."""
    try:
        value = float(text)
    except ValueError:
        raise SceneError(f"{where}: {text.strip()!r} is not a number.") from None
    if value != value or value in (float("inf"), float("-inf")):
        raise SceneError(f"{where}: {text.strip()!r} is not a finite number.")
    return value


def check_output_path(path, suffixes=None, option="-o") -> None:
    """A SceneError before any work when `path` cannot be written: a wrong suffix, a folder,
    a missing folder or one we may not write in."""
    target = Path(path)
    if suffixes and target.suffix.lower() not in suffixes:
        raise SceneError(f"{option} {path}: write a {' or '.join(suffixes)} file, e.g. "
                         f"{option} result{suffixes[0]}.")
    if target.is_dir():
        raise SceneError(f"{option} {path}: that is a folder; give a file name inside it.")
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise SceneError(f"{option} {path}: the folder {folder} does not exist; make it first "
                         "or choose another path.")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise SceneError(f"{option} {path}: the folder {folder} is not writable; choose "
                         "another path.")


def analysis_from_args(args):
    """The analysis of SCENE with its --set overrides (nothing computed yet)."""
    from trapscape.physics.analysis.run import load_analysis

    return load_analysis(args.scene, args.set)


PROGRESS_LINE_SECONDS = 10.0  # off a terminal: one line this often, once a run is that long


def show_progress(args) -> bool:
    return not getattr(args, "quiet", False) and sys.stderr.isatty()


@contextlib.contextmanager
def progress(args, unit="pt", desc=None):
    """A progress callback ``update(done, total, stage=None)``: a bar on stderr at a terminal;
    off a terminal (a log, a pipe) a plain line every PROGRESS_LINE_SECONDS; None with --quiet.
    done None: a stage with no count begins, shown by its name and the time so far. The bar is
    closed on the way out."""
    if getattr(args, "quiet", False):
        yield None
        return
    if not sys.stderr.isatty():
        yield _progress_lines(desc or "working")
        return
    from tqdm import tqdm

    bar = tqdm(file=sys.stderr, unit=unit, desc=desc, leave=False, **_bar_size())

    counted = bar.bar_format

    def update(done, total, stage=None):
        if done is None:
            bar.bar_format = "{desc}working, {elapsed}"
            bar.set_description(stage or desc or "")
            return
        bar.bar_format = counted
        bar.total = total
        if stage is not None:
            bar.set_description(stage)
        bar.update(done - bar.n)

    try:
        yield update
    finally:
        bar.close()


FALLBACK_SIZE = {"ncols": 80, "nrows": 24}


def _bar_size() -> dict:
    """Nothing (tqdm measures the terminal) unless the terminal reports no size, as a new
    pseudo-terminal or a container's may: tqdm then hides the bar (it takes the bar to lie below
    a screen of 0 rows), and a long run looks hung."""
    try:
        size = os.get_terminal_size(sys.stderr.fileno())
    except OSError:
        return FALLBACK_SIZE
    return {} if size.columns > 0 and size.lines > 0 else FALLBACK_SIZE


def _progress_lines(desc, clock=time.monotonic):
    """update(done, total, stage=None) printing 'trapscape: scan 40% (12/30 pt), 20 s' to stderr
    at most every PROGRESS_LINE_SECONDS; once the run is that old, a stage with no count is also
    named when it begins, so a log shows where a long run spent its time."""
    start = clock()
    last = [start]
    stages = [None]

    def update(done, total, stage=None):
        now = clock()
        due = now - last[0] >= PROGRESS_LINE_SECONDS
        begins = done is None and stage != stages[0] and now - start >= PROGRESS_LINE_SECONDS
        stages[0] = stage if done is None else None
        if not (due or begins):
            return
        last[0] = now
        if done is None:  # a stage with no count
            print(f"trapscape: {stage or desc}, {now - start:.0f} s", file=sys.stderr, flush=True)
            return
        share = f"{100 * done / total:.0f}% ({done}/{total})" if total else f"{done}"
        print(f"trapscape: {stage or desc} {share}, {now - start:.0f} s", file=sys.stderr,
              flush=True)

    return update


def write_json(path: str, payload: dict) -> None:
    """The payload as JSON, written to a temporary file beside `path` and moved into place."""
    from trapscape.physics.analysis.results import json_ready  # lazy: the parser starts fast

    text = json.dumps(json_ready(payload), indent=2, allow_nan=False) + "\n"
    with replaced_atomically(path) as stream:
        stream.write(text)
