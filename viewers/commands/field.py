"""`trapscape field`: B, H and |B| at points from a CSV, along a line or on a section plane; the
CSV in SI (lengths in the scene's unit), the plots in the reader's display units (--units)."""
from __future__ import annotations

import argparse
import csv
import warnings
from pathlib import Path

import numpy as np

from trapscape.scene.errors import SceneError
from trapscape.scene.reading import LARGEST_LENGTH
from trapscape.viewers.atomic import atomic_path
from trapscape.viewers.commands.common import (
    FIGURE_SUFFIXES,
    MAX_FIELD_POINTS,
    MAX_POINTS_FILE_BYTES,
    add_output_argument,
    add_scene_arguments,
    add_section_argument,
    add_units_argument,
    analysis_from_args,
    check_output_path,
    check_units,
    display_units,
    finite_number,
    parse_section,
    progress,
)

DEFAULT_RESOLUTION = 201
EXAMPLES = """\
  trapscape field samples/level_gauge.toml --line "0,0,-20" "0,0,20" 101 -o axis.csv
  trapscape field samples/holding_plate.toml --line "-3,0,0.7" "3,0,0.7" 61 --plot line.png
  trapscape field samples/bead_chip.toml --section z=1.5 -o plane.csv --plot plane.png
  trapscape field samples/arc_rotor.toml --points probes.csv -o probes-field.csv
  trapscape field samples/level_gauge.toml --line "0,0,-20" "0,0,20" 101 --plot axis.png --units gauss,in
"""


def add_arguments(parser) -> None:
    add_scene_arguments(parser)
    where = parser.add_mutually_exclusive_group(required=True)
    where.add_argument("--points", metavar="IN.csv", help="CSV with header x,y,z in the scene's unit")
    where.add_argument("--line", nargs=3, metavar=("A", "B", "N"),
                       help='N points from A to B, e.g. --line "0,0,-20" "0,0,20" 101')
    add_section_argument(where, "a section plane across the search box, e.g. --section z=0 "
                                "(the level in the scene's unit)")
    where.add_argument("--plane", dest="section", help=argparse.SUPPRESS)
    add_output_argument(parser, "OUT.csv", "where to write the CSV (SI: B in T, H in A/m, "
                        "lengths in the scene's unit, whatever --units says)", former="--out")
    parser.add_argument("--plot", metavar="FILE.png", help="also plot a line or a section")
    add_units_argument(parser)
    parser.add_argument("--resolution", type=int, default=None, metavar="N",
                        help="samples along the longest side of a section (default "
                             f"{DEFAULT_RESOLUTION})")


def run(args) -> int:
    if not (args.output or args.plot):
        raise SceneError("field: say where the result goes with -o OUT.csv (and/or --plot FILE.png).")
    check_units(args)
    if args.output:
        check_output_path(args.output, (".csv",))
    if args.plot:
        if args.points:
            raise SceneError("--plot draws a --line or a --section; for --points use -o only.")
        check_output_path(args.plot, FIGURE_SUFFIXES, "--plot")
    analysis = analysis_from_args(args)
    scene = analysis.scene
    points, layout = _sample_points(scene, args)
    with progress(args, unit="pt", desc="field") as update:
        values = analysis.field_at(points, progress=update)
    names = [m.name for m in scene.magnets]
    if args.output:
        _write_csv(args.output, scene, points, values, names)
        print(f"wrote {len(points)} points to {args.output}")
    if args.plot:
        from trapscape.viewers.field_plot import plot_line, plot_section

        draw = plot_line if layout[0] == "line" else plot_section
        draw(args.plot, scene, points, values, layout, display_units(args, scene))
        print(f"wrote the plot to {args.plot}")
    inside = values.inside_magnet >= 0
    if inside.any():
        print(f"{inside.sum()} of {len(points)} points lie inside a magnet (column "
              f"inside_magnet): B there is the flux density in the material, mu0 (H + M).")
    if not values.in_model.all():
        print(f"{(~values.in_model).sum()} points lie behind a steel plate, outside the model "
              f"(in_model = 0)")
    return 0


def _sample_points(scene, args):
    points, layout = _requested_points(scene, args)
    _within_reach(scene, points / scene.unit_scale)
    return points, layout


def _within_reach(scene, file_units):
    """Checked before any arithmetic on them (a length of 1e300 squared overflows)."""
    if np.abs(file_units).max() * scene.unit_scale > LARGEST_LENGTH:
        raise SceneError(f"field: a point lies more than a kilometre from the origin; check the "
                         f"coordinates (in {scene.units}, the scene's unit).")


def _requested_points(scene, args):
    unit = scene.unit_scale
    if args.points:
        return _read_points(args.points) * unit, None
    if args.line:
        start, stop = (_vector(text, "--line") for text in args.line[:2])
        _within_reach(scene, np.concatenate([start, stop]))
        count = _count(args.line[2])
        length = np.linalg.norm(stop - start)
        if length == 0.0:
            raise SceneError(f"--line: the two ends {args.line[0]!r} and {args.line[1]!r} are the "
                             "same point; give two different ends.")
        t = np.linspace(0.0, 1.0, count)
        points = (start + t[:, None] * (stop - start)) * unit
        return points, ("line", t * length, start, stop)
    return _section_points(scene, args.section, args.resolution)


def _section_points(scene, text, resolution):
    axis, level = parse_section(text)
    if level is None:
        raise SceneError(f"--section {text!r}: field needs the plane's level, e.g. "
                         f"--section {'xyz'[axis]}=0 (in the scene's unit).")
    _within_reach(scene, np.array([level]))
    resolution = DEFAULT_RESOLUTION if resolution is None else resolution
    if not 2 <= resolution <= int(MAX_FIELD_POINTS ** 0.5):
        raise SceneError(f"--resolution must be 2 to {int(MAX_FIELD_POINTS ** 0.5)} for a "
                         "section.")
    box = scene.search_box
    others = [a for a in range(3) if a != axis]
    extent = box.max[others] - box.min[others]
    step = extent.max() / (resolution - 1)
    counts = np.maximum(np.floor(extent / step + 1e-9).astype(int) + 1, 2)
    u = np.linspace(box.min[others[0]], box.max[others[0]], counts[0])
    v = np.linspace(box.min[others[1]], box.max[others[1]], counts[1])
    uu, vv = np.meshgrid(u, v, indexing="xy")
    points = np.zeros((uu.size, 3))
    points[:, others[0]] = uu.ravel()
    points[:, others[1]] = vv.ravel()
    points[:, axis] = level * scene.unit_scale
    return points, ("section", others, uu.shape, level * scene.unit_scale)


def _read_points(path):
    try:
        if Path(path).exists() and not Path(path).is_file():
            raise SceneError(f"the points file {path} is not a regular file; give a CSV file.")
        if Path(path).stat().st_size > MAX_POINTS_FILE_BYTES:
            raise SceneError(f"the points file {path} is over {MAX_POINTS_FILE_BYTES >> 20} MB "
                             f"(about {MAX_FIELD_POINTS:,} points); split it into several runs.")
        with open(path, newline="", encoding="utf-8-sig") as handle:
            header = next(csv.reader([handle.readline()]), [])
            if [c.strip().lower() for c in header[:3]] != ["x", "y", "z"]:
                raise SceneError(f"{path}: the first line must be the header x,y,z (in the "
                                 f"scene's unit).")
            points = _parsed_quickly(handle)
            if points is None:  # a bad cell somewhere: find it and name its line
                handle.seek(0)
                points = _parsed_by_line(path, list(csv.reader(handle))[1:])
    except OSError as error:
        raise SceneError(f"cannot read the points file {path}: {error.strerror}.") from None
    except UnicodeDecodeError:
        raise SceneError(f"{path}: the points file is not UTF-8 text; save it as a CSV with "
                         "the header x,y,z.") from None
    if not len(points):
        raise SceneError(f"{path}: no points below the header x,y,z.")
    return points


def _parsed_quickly(handle):
    """The x,y,z columns by numpy's reader, or None if any cell is not a finite number."""
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", UserWarning)  # "no data": said in our own words
            points = np.loadtxt(handle, delimiter=",", usecols=(0, 1, 2), ndmin=2, comments=None)
    except ValueError:
        return None
    return points if np.isfinite(points).all() else None


def _parsed_by_line(path, rows):
    values = []
    for number, row in enumerate(rows, start=2):
        if not any(cell.strip() for cell in row):
            continue
        if len(row) < 3:
            raise SceneError(f"{path}, line {number}: expected three numbers x,y,z, got {len(row)}.")
        values.append([finite_number(cell, f"{path}, line {number}") for cell in row[:3]])
    return np.array(values, dtype=float).reshape(-1, 3)


def _vector(text, where):
    parts = text.replace(";", ",").split(",")
    if len(parts) != 3:
        raise SceneError(f"{where}: {text!r} must be three numbers x,y,z separated by commas.")
    return np.array([finite_number(p, where) for p in parts])


def _count(text):
    try:
        count = int(text)
    except ValueError:
        raise SceneError(f"--line: the point count {text!r} must be a whole number.") from None
    if not 2 <= count <= MAX_FIELD_POINTS:
        raise SceneError(f"--line: the point count must be at least 2 and at most "
                         f"{MAX_FIELD_POINTS:,}; split a longer run into several lines.")
    return count


CSV_CHUNK_ROWS = 50_000  # rows formatted at a time (bounds the memory of the text)


def _write_csv(path, scene, points, values, names):
    from trapscape.viewers.csv_text import csv_block  # numba: not while building the parser

    u = scene.units
    header = [f"x_{u}", f"y_{u}", f"z_{u}", "Bx_T", "By_T", "Bz_T",
              "Hx_A_per_m", "Hy_A_per_m", "Hz_A_per_m", "B_T", "in_model", "inside_magnet"]
    table = np.column_stack([points / scene.unit_scale, values.B, values.H,
                             np.linalg.norm(values.B, axis=1)])
    owners = [""] + [_csv_cell(name) for name in names]
    owner_of = np.asarray(values.inside_magnet) + 1  # -1 (air) -> ""
    in_model = np.asarray(values.in_model).astype(np.int64)
    with atomic_path(path) as temporary, open(temporary, "wb") as handle:
        handle.write((",".join(header) + "\n").encode())
        for start in range(0, len(table), CSV_CHUNK_ROWS):
            rows = slice(start, start + CSV_CHUNK_ROWS)
            handle.write(csv_block(table[rows], in_model[rows], owners, owner_of[rows]))


def _csv_cell(text: str) -> str:
    """A text cell quoted as CSV needs it (names may hold commas or quotes)."""
    if any(c in text for c in ',"\r\n'):
        return '"' + text.replace('"', '""') + '"'
    return text
