"""`trapscape hold`: the pull of the magnets on a steel plate against the air gap, with the slip
force, the peel torque and the plate-saturation warning (physics/hold.py)."""
from __future__ import annotations

import re

import numpy as np

from trapscape.scene.errors import SceneError
from trapscape.viewers.commands.common import (add_scene_arguments, load_scene_from_args, progress,
                                     stamp, write_json)

_NUMBER = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"
_GAPS = re.compile(rf"^\s*({_NUMBER})\s*\.\.\s*({_NUMBER})\s*@\s*(\d+)\s*$")
MAX_GAPS = 1000

CAUTIONS = (
    "Magnets snap onto steel: keep fingers and skin out of the gap (pinching).",
    "Sintered magnets are brittle and chip or shatter when they strike steel or each other; "
    "wear eye protection.",
    "Keep strong magnets away from implanted medical devices (pacemakers, defibrillators) and "
    "out of children's reach (swallowed magnets are dangerous).",
    "These figures are estimates: verify them against the supplier's data, test the real "
    "assembly, and follow the local codes for lifting and holding loads.",
)
NOTES = (
    "The plate is a perfect magnetic mirror (each magnet pulled by its image): this overstates "
    "the pull where the plate saturates or is thin, and for rough, painted or non-flat steel.",
    "Slip = friction x pull is the usual estimate (common practice).",
    "Peel torque: pull x distance from the centre of pull to the nearest footprint edge, at the "
    "onset of tipping.",
    "Several plates: each magnet has one image in each plate (first order); the gap and the pull "
    "refer to the plate named here.",
)


def add_arguments(parser) -> None:
    add_scene_arguments(parser)
    parser.add_argument("--gap", required=True, metavar="START..STOP@COUNT",
                        help="air gaps in the scene's unit, e.g. --gap 0..5@11")
    parser.add_argument("--part", metavar="NAME", help="move only this magnet (default: all)")
    parser.add_argument("--plate", metavar="NAME", help="the steel plate (default: the nearest)")
    parser.add_argument("--friction", type=float, metavar="MU",
                        help="friction coefficient on the plate, for the slip force (e.g. 0.2)")
    parser.add_argument("--json", metavar="FILE", help="write the rows as JSON")
    parser.add_argument("--plot", metavar="FILE.png", help="plot the pull against the gap")


def parse_gaps(text: str) -> np.ndarray:
    """'START..STOP@COUNT' (or a single number) -> COUNT evenly spaced gaps, file units."""
    match = _GAPS.match(text or "")
    if match is None:
        try:
            return np.array([float(text)])
        except (TypeError, ValueError):
            raise SceneError(f"--gap {text!r}: write START..STOP@COUNT in the scene's unit, "
                             f"e.g. --gap 0..5@11.") from None
    start, stop, count = float(match[1]), float(match[2]), int(match[3])
    if not 1 <= count <= MAX_GAPS:
        raise SceneError(f"--gap {text!r}: COUNT must be between 1 and {MAX_GAPS}.")
    if min(start, stop) < 0:
        raise SceneError(f"--gap {text!r}: gaps cannot be negative (that is inside the plate).")
    return np.linspace(start, stop, count)


def run(args) -> int:
    from trapscape.physics.holding.pull import choose_plate, moving_parts, pull_curve, saturation_onset_gap

    scene = load_scene_from_args(args)
    gaps = parse_gaps(args.gap)
    moving = moving_parts(scene, args.part)
    _, plate = choose_plate(scene, args.plate, moving)
    with progress(args, unit="gap", desc="pull") as update:
        rows = pull_curve(scene, gaps * scene.unit_scale, part=args.part, friction=args.friction,
                          plate=plate.name, progress=update)
    onset = saturation_onset_gap(scene, part=args.part, plate=plate.name)
    onset_file = None if onset is None else onset / scene.unit_scale
    _print_table(scene, rows, plate, args, onset_file)
    if args.json:
        write_json(args.json, stamp(scene, _payload(scene, rows, plate, args, onset_file)))
        print(f"wrote {args.json}")
    if args.plot:
        _plot(args.plot, scene, rows, plate, args)
        print(f"wrote the plot to {args.plot}")
    return 0


def _payload(scene, rows, plate, args, onset):
    unit = scene.unit_scale
    return {
        "plate": plate.name, "part": args.part, "friction": args.friction,
        "plate_thickness": plate.thickness / unit, "plate_saturation_T": plate.saturation,
        "rows": [{"gap": r.gap / unit, "pull_N": r.pull, "slip_N": r.slip,
                  "saturation_warning": r.saturation_warning, "peel_torque_N_m": r.peel_torque,
                  "plate_flux_density_T": r.plate_flux_density} for r in rows],
        "saturation_onset_gap": onset,
        "notes": list(NOTES), "cautions": list(CAUTIONS),
    }


def _format(value, width=11):
    return f"{'-':>{width}}" if value is None else f"{value:>{width}.4g}"


def _print_table(scene, rows, plate, args, onset):
    unit = scene.units
    what = f"part '{args.part}'" if args.part else "the whole assembly"
    print(f"pull of {what} on plate '{plate.name}' "
          f"({plate.thickness / scene.unit_scale:g} {unit} thick, saturation {plate.saturation:g} T)")
    header = f"{'gap_' + unit:>10} {'pull_N':>11} {'slip_N':>11} {'peel_N_m':>11} {'plate_B_T':>10}"
    print(header)
    for r in rows:
        flag = "  plate saturates" if r.saturation_warning else ""
        print(f"{r.gap / scene.unit_scale:>10.4g} {r.pull:>11.4g} {_format(r.slip)} "
              f"{_format(r.peel_torque)} {r.plate_flux_density:>10.3g}{flag}")
    if onset is None:
        print("saturation: not expected at any gap (estimate below the plate's saturation).")
    else:
        print(f"saturation: the plate is expected to saturate below a gap of about {onset:.3g} "
              f"{unit}; there the real pull is lower than shown.")
    for note in NOTES:
        print(f"note: {note}")
    for caution in CAUTIONS:
        print(f"caution: {caution}")


def _plot(path, scene, rows, plate, args):
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    gaps = np.array([r.gap for r in rows]) / scene.unit_scale
    pulls = np.array([r.pull for r in rows])
    figure, axes = plt.subplots(figsize=(6.4, 4.2), dpi=120)
    axes.plot(gaps, pulls, "o-", label="pull (mirror model)")
    if args.friction is not None:
        axes.plot(gaps, [r.slip for r in rows], "s--", label=f"slip, friction {args.friction:g}")
    warned = np.array([r.saturation_warning for r in rows])
    if warned.any():
        axes.fill_between(gaps, 0, pulls.max(), where=warned, color="tab:red", alpha=0.15,
                          step="mid", label="plate saturates: pull overstated")
    axes.set_xlabel(f"gap ({scene.units})")
    axes.set_ylabel("force (N)")
    axes.set_title(f"{scene.title or 'pull on steel'} - plate '{plate.name}'", fontsize=10)
    axes.grid(True, alpha=0.3)
    axes.legend(fontsize=8)
    figure.tight_layout()
    try:
        figure.savefig(path)
    except OSError as error:
        raise SceneError(f"cannot write {path}: {error.strerror}; choose a writable path.") from None
    finally:
        plt.close(figure)

