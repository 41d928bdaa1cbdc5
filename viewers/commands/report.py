"""`trapscape report SCENE -o DIR [--units ...] [--no-3d]`: the customer report, report.html
(self-contained, opens offline) and report.pdf from the same content, with its pictures."""
from __future__ import annotations

import os
from pathlib import Path

from trapscape.scene.errors import SceneError
from trapscape.viewers.commands.common import (
    add_output_argument,
    add_scene_arguments,
    add_units_argument,
    analysis_from_args,
    check_units,
    display_units,
    progress,
)

EXAMPLES = """\
  trapscape report samples/level_gauge.toml -o gauge-report
  trapscape report samples/holding_plate.toml -o plate-report --units lbf,in
  trapscape report samples/bead_chip.toml -o chip-report --units gauss --no-3d
"""


DEFAULT_SIZE = "1400x1050"
DEFAULT_RESOLUTION = 64


def add_arguments(parser) -> None:
    add_scene_arguments(parser)
    add_output_argument(parser, "DIR", "the folder for report.html, report.pdf and the pictures",
                        required=True)
    add_report_options(parser)
    parser.add_argument("--size", default=DEFAULT_SIZE, metavar="WxH",
                        help=f"size of the 3D pictures in pixels (default {DEFAULT_SIZE})")
    parser.add_argument("--resolution", type=int, default=DEFAULT_RESOLUTION, metavar="N",
                        help="samples along the longest side of the pictures' field grid "
                             f"(default {DEFAULT_RESOLUTION})")


def add_report_options(parser) -> None:
    """--units and --no-3d (demo takes them too)."""
    add_units_argument(parser)
    parser.add_argument("--no-3d", dest="interactive", action="store_false",
                        help="leave the interactive 3D view out of the HTML (smaller, faster)")


def check_folder(path: str) -> Path:
    """The output folder, made if missing; a SceneError before any work when it cannot be."""
    out = Path(path)
    if out.exists() and not out.is_dir():
        raise SceneError(f"-o {path}: that is a file; give a folder for the report.")
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as error:
        raise SceneError(f"-o {path}: cannot make the folder ({error.strerror}); choose "
                         "another.") from None
    if not os.access(out, os.W_OK | os.X_OK):
        raise SceneError(f"-o {path}: the folder is not writable; choose another.")
    return out


def run(args) -> int:
    from trapscape.viewers.commands.common import MAX_GRID_RESOLUTION
    from trapscape.viewers.commands.render import parse_size
    from trapscape.viewers.report.pictures import PictureSizes

    check_units(args)  # a wrong unit is said before any work
    size = parse_size(args.size)
    if not 8 <= args.resolution <= MAX_GRID_RESOLUTION:
        raise SceneError(f"--resolution {args.resolution}: give 8 to {MAX_GRID_RESOLUTION} "
                         "samples along the longest side.")
    analysis = analysis_from_args(args)  # a broken scene is said before the folder is made
    out = check_folder(args.output)
    plot = (min(size[0], 1000), min(size[1], 760))
    sizes = PictureSizes(render=size, polarity=(size[0] * 6 // 7, size[1] * 6 // 7), plot=plot,
                         interactive=(min(size[0], 900), min(size[1], 600)))
    written = write(analysis, out, args, sizes=sizes, grid_resolution=args.resolution)
    print(f"report: {written['report.pdf']}")
    print(f"  also: {written['report.html']} (opens offline)")
    return 0


def write(analysis, out: Path, args, **options) -> dict:
    """The report's files in `out` (used by `report` and `demo`)."""
    from trapscape.viewers.report.build import weasyprint_html, write_report

    weasyprint_html()
    with progress(args, desc="scan") as update:
        return write_report(analysis, out, display_units(args, analysis.scene),
                            interactive=args.interactive, progress=update, **options)
