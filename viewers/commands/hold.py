"""`trapscape hold`: the pull of the magnets on a steel plate against the air gap, with the slip
force, the peel torque and the plate-saturation warning (physics.analysis.holding)."""
from __future__ import annotations

import re

import numpy as np

from trapscape.scene.errors import SceneError
from trapscape.viewers.atomic import save_figure
from trapscape.viewers.commands.common import (
    FIGURE_SUFFIXES,
    add_output_argument,
    add_scene_arguments,
    add_units_argument,
    analysis_from_args,
    check_output_path,
    check_units,
    display_units,
    progress,
    write_json,
)

_NUMBER = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"
_GAPS = re.compile(rf"^\s*({_NUMBER})\s*\.\.\s*({_NUMBER})\s*@\s*(\d+)\s*$")
MAX_GAPS = 1000
EXAMPLES = """\
  trapscape hold samples/holding_plate.toml --gap 0..5@11
  trapscape hold samples/holding_plate.toml --gap 0..3@7 --friction 0.2 -o hold.json --plot pull.png
  trapscape hold samples/holding_plate.toml --gap 0..5@11 --units lbf,in --plot pull-lbf.png
"""


def add_arguments(parser) -> None:
    add_scene_arguments(parser)
    parser.add_argument("--gap", required=True, metavar="START..STOP@COUNT",
                        help="air gaps in the scene's unit (whatever --units says), e.g. "
                             "--gap 0..5@11")
    parser.add_argument("--part", metavar="NAME", help="move only this magnet (default: all)")
    parser.add_argument("--plate", metavar="NAME", help="the steel plate (default: the nearest)")
    parser.add_argument("--friction", type=float, metavar="MU",
                        help="friction coefficient on the plate, for the slip force (e.g. 0.2)")
    add_output_argument(parser, "FILE.json", "also write the rows as JSON (SI, gaps in the "
                        "scene's unit, whatever --units says)", former="--json")
    parser.add_argument("--plot", metavar="FILE.png", help="plot the pull against the gap")
    add_units_argument(parser)


def parse_gaps(text: str) -> np.ndarray:
    """'START..STOP@COUNT' (or a single number) -> COUNT evenly spaced gaps, file units."""
    match = _GAPS.match(text or "")
    if match is None:
        try:
            value = float(text)
        except (TypeError, ValueError):
            raise SceneError(f"--gap {text!r}: write START..STOP@COUNT in the scene's unit, "
                             f"e.g. --gap 0..5@11.") from None
        if not np.isfinite(value) or value < 0:
            raise SceneError(f"--gap {text!r}: a gap is a finite number, 0 or more.")
        return np.array([value])
    start, stop, count = float(match[1]), float(match[2]), int(match[3])
    if not 1 <= count <= MAX_GAPS:
        raise SceneError(f"--gap {text!r}: COUNT must be between 1 and {MAX_GAPS}.")
    if min(start, stop) < 0:
        raise SceneError(f"--gap {text!r}: gaps cannot be negative (that is inside the plate).")
    return np.linspace(start, stop, count)


def run(args) -> int:
    gaps = parse_gaps(args.gap)
    check_units(args)
    if args.output:
        check_output_path(args.output, (".json",))
    if args.plot:
        check_output_path(args.plot, FIGURE_SUFFIXES, "--plot")
    analysis = analysis_from_args(args)
    scene = analysis.scene
    units = display_units(args, scene)
    with progress(args, unit="gap", desc="pull") as update:
        result = analysis.hold(gaps * scene.unit_scale, part=args.part, plate=args.plate,
                               friction=args.friction, progress=update)
    payload = analysis.hold_result(gaps * scene.unit_scale, part=args.part, plate=args.plate,
                                   friction=args.friction)
    _print_table(units, result, args, payload)
    if args.output:
        write_json(args.output, payload)
        print(f"wrote {args.output}")
    if args.plot:
        _plot(args.plot, pull_figure(scene, units, result, args.friction))
        print(f"wrote the plot to {args.plot}")
    return 0


def _format(value, width=11):
    return f"{'-':>{width}}" if value is None else f"{value:>{width}.4g}"


def _label(text: str) -> str:
    """A unit as part of a column name: 'N m' -> 'N_m', 'lbf/in' -> 'lbf_per_in'."""
    return text.replace("/", "_per_").replace(" ", "_")


def _print_table(units, result, args, payload):
    unit, plate = units.length_label, result.plate
    what = f"part '{args.part}'" if args.part else "the whole assembly"
    strong = units.strong_field_label
    print(f"pull of {what} on plate '{plate.name}' "
          f"({units.L(plate.thickness):g} {unit} thick, saturation "
          f"{units.strong_B(plate.saturation):g} {strong})")
    force, torque = _label(units.force_label), _label(units.torque_label)
    header = (f"{'gap_' + unit:>10} {'pull_' + force:>11} {'slip_' + force:>11} "
              f"{'peel_' + torque:>11} {'plate_B_' + strong:>10}")
    print(header)
    for r in result.rows:
        flag = "  plate saturates" if r.saturation_warning else ""
        slip = None if r.slip is None else units.F(r.slip)
        peel = None if r.peel_torque is None else units.torque(r.peel_torque)
        print(f"{units.L(r.gap):>10.4g} {units.F(r.pull):>11.4g} {_format(slip)} "
              f"{_format(peel)} {units.strong_B(r.plate_flux_density):>10.3g}{flag}")
    onset = result.saturation_onset_gap_m
    if onset is None:
        print("saturation: not expected at any gap (estimate below the plate's saturation).")
    else:
        print(f"saturation: the plate is expected to saturate below a gap of about "
              f"{units.L(onset):.3g} {unit}; there the real pull is lower than shown.")
    for note in payload["notes"]:
        print(f"note: {note}")
    for caution in payload["cautions"]:
        print(f"caution: {caution}")


def _plot(path, figure):
    import matplotlib.pyplot as plt

    try:
        save_figure(figure, path)
    finally:
        plt.close(figure)


def pull_figure(scene, units, result, friction):
    """The pull (and the slip force, with a friction coefficient) against the gap, in the
    reader's display units; the gaps where the plate saturates shaded."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    rows, plate = result.rows, result.plate
    gaps = units.L(np.array([r.gap for r in rows]))
    pulls = units.F(np.array([r.pull for r in rows]))
    figure, axes = plt.subplots(figsize=(6.4, 4.2), dpi=120)
    axes.plot(gaps, pulls, "o-", label="pull (mirror model)")
    if friction is not None:
        axes.plot(gaps, units.F(np.array([r.slip for r in rows], float)), "s--",
                  label=f"slip, friction {friction:g}")
    warned = np.array([r.saturation_warning for r in rows])
    if warned.any():
        axes.fill_between(gaps, 0, pulls.max(), where=warned, color="tab:red", alpha=0.15,
                          step="mid", label="plate saturates: pull overstated")
    axes.set_xlabel(f"gap ({units.length_label})")
    axes.set_ylabel(f"force ({units.force_label})")
    axes.set_title(f"{scene.title or 'pull on steel'} - plate '{plate.name}'", fontsize=10)
    axes.grid(True, alpha=0.3)
    axes.legend(fontsize=8)
    figure.tight_layout()
    return figure

