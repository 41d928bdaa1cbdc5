"""`trapscape report SCENE -o DIR [--units ...] [--no-3d]`: the customer report, report.html
(self-contained, opens offline) and report.pdf from the same content, with its pictures."""
from __future__ import annotations

import os
from pathlib import Path

from trapscape.scene.errors import SceneError
from trapscape.viewers.commands.common import (
    add_output_argument,
    add_scene_arguments,
    analysis_from_args,
    progress,
)

EXAMPLES = """\
  trapscape report samples/level_gauge.toml -o gauge-report
  trapscape report samples/holding_plate.toml -o plate-report --units lbf,in
  trapscape report samples/bead_chip.toml -o chip-report --units gauss --no-3d
"""


def add_arguments(parser) -> None:
    add_scene_arguments(parser)
    add_output_argument(parser, "DIR", "the folder for report.html, report.pdf and the pictures",
                        required=True)
    add_report_options(parser)


def add_report_options(parser) -> None:
    """--units and --no-3d (demo takes them too)."""
    parser.add_argument("--units", metavar="UNITS",
                        help="display units, comma-separated: mT or gauss, N, kgf or lbf, mm or "
                             "in (default mT,N and the scene's length unit, else mm); JSON "
                             "outputs stay SI")
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


def display_units(args, scene):
    from trapscape.physics.analysis.display_units import parse_units

    return parse_units(args.units, default_length=scene.units)


def run(args) -> int:
    from trapscape.physics.analysis.display_units import parse_units

    parse_units(args.units)  # a wrong unit is said before any work
    out = check_folder(args.output)
    analysis = analysis_from_args(args)
    written = write(analysis, out, args)
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
