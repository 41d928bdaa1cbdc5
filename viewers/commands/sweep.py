"""`trapscape sweep`: the trap search across one or two [params], each trap followed from step to
step, and where a trap is lost or born (physics.analysis.sweep)."""
from __future__ import annotations

import csv
import io
import os
from pathlib import Path

import numpy as np

from trapscape.scene.errors import SceneError
from trapscape.viewers.atomic import replaced_atomically, save_figure
from trapscape.viewers.commands.common import (
    add_output_argument,
    add_scene_arguments,
    add_units_argument,
    check_units,
    display_units,
    progress,
    write_json,
)

FOLD_ROUNDS = 4  # bisections of each fold's interval (to 1/16 of a step)
# The default match distance, as a share of the search box's longest side: generous, since pairs
# are made nearest first and within a class (parts, and their traps, may move a lot per step).
MATCH_SHARE = 0.3
EXAMPLES = """\
  trapscape sweep samples/level_gauge.toml --vary gap=2..6@9 -o gauge-sweep
  trapscape sweep samples/level_gauge.toml --vary gap=2..6@5 --vary bead=2..4@3 -o grid --workers 2
  trapscape sweep samples/ring_stack.toml --vary rings=1..4@4 -o stack --units in,lbf
"""


def add_arguments(parser) -> None:
    add_scene_arguments(parser)
    parser.add_argument("--vary", action="append", required=True, metavar="NAME=START..STOP@COUNT",
                        help="a [params] value to sweep, e.g. --vary gap=2..6@9 (once or twice)")
    add_output_argument(parser, "DIR", "folder for sweep.csv, sweep.json and sweep.png",
                        required=True)
    parser.add_argument("--workers", type=int, default=None, metavar="N",
                        help="processes to run the steps on (default: the cores, at most 2 "
                             "below 8 steps)")
    parser.add_argument("--match", type=float, default=None, metavar="LENGTH",
                        help="farthest a trap may move between steps and stay the same one, in "
                             "the scene's unit (default: 0.3 of the search box's longest side)")
    add_units_argument(parser)


def run(args) -> int:
    from trapscape.physics.analysis import sweep
    from trapscape.physics.analysis.run import load_analysis

    check_units(args)
    varies = [sweep.parse_vary(text) for text in args.vary]
    grid = sweep.grid_of(varies)
    folder = _output_folder(args.output)
    base = load_analysis(args.scene, args.set).scene  # bad scene or --set: one sentence, now
    for v in varies:
        if v.name not in base.params:
            raise SceneError(f"--vary {v.name}: the scene has no [params] value of that name "
                             f"(it has: {', '.join(sorted(base.params)) or 'none'}).")
    box = base.to_file_units(np.max(base.search_box.max - base.search_box.min))
    match = args.match if args.match is not None else MATCH_SHARE * float(box)
    if not (np.isfinite(match) and match > 0):
        raise SceneError("--match must be a positive finite length.")
    steps = _run_steps(args, grid)
    lines = _lines(varies, grid)
    tracks, folds = [], []
    for line in lines:
        line_steps = [steps[i] for i in line]
        line_tracks = sweep.track_line(line_steps, match)
        values = [grid[i][varies[0].name] for i in line]
        found = sweep.find_folds(line_steps, line_tracks, values, 2 * match)
        fixed = {k: v for k, v in grid[line[0]].items() if k != varies[0].name}
        search = _searcher(args, varies[0].name, fixed)
        line_steps, changed = sweep.continued(
            line_steps, line_tracks, found, lambda s, starts: search(values[s], starts))
        if changed:
            for s in changed:
                steps[line[s]] = line_steps[s]
            line_tracks = sweep.track_line(line_steps, match)
            found = sweep.find_folds(line_steps, line_tracks, values, 2 * match)
        found = [sweep.narrowed(f, search, 2 * match, FOLD_ROUNDS) for f in found]
        tracks.append((line, line_tracks))
        folds.extend((fixed, f) for f in found)
    rows = _rows(steps, tracks, varies)
    unit = base.units
    _write_csv(folder / "sweep.csv", rows, varies, unit)
    write_json(str(folder / "sweep.json"), _payload(args, varies, steps, rows, folds, unit))
    units = display_units(args, base)
    _plot(folder / "sweep.png", rows, folds, varies, unit, units, base)
    _print_summary(steps, tracks, folds, varies, unit, units, folder)
    return 0


def _output_folder(text) -> Path:
    folder = Path(text)
    if folder.exists() and not folder.is_dir():
        raise SceneError(f"-o {text}: a file of that name exists; give a folder for the sweep.")
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as error:
        raise SceneError(f"-o {text}: cannot make the folder: {error.strerror}.") from None
    if not os.access(folder, os.W_OK):
        raise SceneError(f"-o {text}: the folder is not writable.")
    return folder


def _run_steps(args, grid) -> list:
    from trapscape.physics.analysis import sweep

    workers = args.workers or (os.cpu_count() or 1)
    if workers < 1:
        raise SceneError("--workers must be 1 or more.")
    workers = min(workers, len(grid))
    if workers > 1:
        return _steps_on_pool(args, grid, workers)
    with progress(args, unit="step", desc="sweep") as update:
        steps = []
        for i, params in enumerate(grid):
            steps.append(sweep.step_result(args.scene, params, args.set))
            if update:
                update(i + 1, len(grid))
        return steps


def _steps_on_pool(args, grid, workers) -> list:
    from trapscape.physics.analysis import batch, sweep

    with batch.process_pool(workers) as pool:
        # the workers start at the first submit, before the progress bar starts its thread
        futures = [pool.submit(sweep.step_result, args.scene, p, tuple(args.set)) for p in grid]
        with progress(args, unit="step", desc="sweep") as update:
            steps = []
            for i, future in enumerate(futures):
                steps.append(future.result())
                if update:
                    update(i + 1, len(grid))
            return steps


def _searcher(args, name, fixed):
    from trapscape.physics.analysis import sweep

    def search(value, starts=None):
        return sweep.step_result(args.scene, {**fixed, name: value}, args.set, starts)

    return search


def _lines(varies, grid) -> list:
    """Indices of the steps along the first parameter, one list per value of the second."""
    n = len(varies[0].values)
    return [list(range(start, start + n)) for start in range(0, len(grid), n)]


def _rows(steps, tracks, varies) -> list:
    rows = []
    for _line, line_tracks in tracks:
        for track in line_tracks:
            for s, j in track.members:
                step = steps[_line[s]]
                eq = step["equilibria"][j]
                stiffness = [k for k in eq["stiffness_N_per_m"] if k is not None]
                escape = eq.get("escape_force_N")
                weight = step["weight_N"]
                rows.append({
                    "step": _line[s] + 1, **{v.name: step["params"][v.name] for v in varies},
                    "trap": _track_label(_line, track, len(tracks) > 1),
                    "class": eq["class"], "position": eq["position"],
                    "coordinate": eq.get("coordinate"),
                    "smallest_stiffness_N_per_m": min(stiffness) if stiffness else None,
                    "escape_force_N": escape,
                    "escape_over_weight": (escape / weight if escape is not None and weight > 0
                                           else None)})
    rows.sort(key=lambda r: (r["step"], r["trap"]))
    return rows


def _track_label(line, track, several_lines) -> str:
    return f"{line[0] // len(line) + 1}.{track.number}" if several_lines else str(track.number)


def _write_csv(path, rows, varies, unit) -> None:
    header = (["step"] + [v.name for v in varies] +
              ["trap", "class", f"x_{unit}", f"y_{unit}", f"z_{unit}", f"along_line_{unit}",
               "smallest_stiffness_N_per_m", "escape_force_N", "escape_over_weight"])
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(header)
    for r in rows:
        writer.writerow([r["step"], *(f"{r[v.name]:.9g}" for v in varies), r["trap"],
                         r["class"], *(f"{c:.9g}" for c in r["position"]),
                         _cell(r["coordinate"]), _cell(r["smallest_stiffness_N_per_m"]),
                         _cell(r["escape_force_N"]), _cell(r["escape_over_weight"])])
    with replaced_atomically(path, newline="") as handle:
        handle.write(buffer.getvalue())


def _cell(value) -> str:
    return "" if value is None else f"{value:.9g}"


def _payload(args, varies, steps, rows, folds, unit) -> dict:
    from trapscape.physics.analysis.sweep import CAUTION

    return {
        "scene": str(args.scene), "overrides": list(args.set), "length_unit": unit,
        "vary": [{"name": v.name, "values": list(v.values)} for v in varies],
        "steps": steps, "traps": rows,
        "folds": [{**fixed, "kind": f.kind, "traps": list(f.tracks),
                   "parameter": varies[0].name, "between": list(f.between),
                   "position": list(f.position)} for fixed, f in folds],
        "caution": CAUTION,
    }


def _plot(path, rows, folds, varies, unit, units, scene) -> None:
    from trapscape.viewers.sweep_plot import sweep_figure

    figure = sweep_figure(rows, folds, varies, unit, units, scene.title)
    save_figure(figure, path, dpi=150)


def _print_summary(steps, tracks, folds, varies, unit, units, folder) -> None:
    failed = [s for s in steps if "error" in s]
    name = varies[0].name
    for line, line_tracks in tracks:
        for t in line_tracks:
            first, last = steps[line[t.first]], steps[line[t.last]]
            kind = "stable" if t.stable else "unstable"
            label = _track_label(line, t, len(tracks) > 1)
            steps_word = "step" if len(t.members) == 1 else "steps"
            print(f"trap {label} ({kind}): from {name} = {first['params'][name]:g} to "
                  f"{last['params'][name]:g} ({len(t.members)} {steps_word})")
    for fixed, f in folds:
        where = ", ".join(f"{c:.3g}" for c in units.L_from(np.asarray(f.position, float), unit))
        event = ("meet and vanish (the trap is lost)" if f.kind == "lost"
                 else "appear together (a new trap)")
        at = "".join(f" at {k} = {v:g}" for k, v in fixed.items())
        print(f"fold{at}: traps {f.tracks[0]} and {f.tracks[1]} {event} between "
              f"{name} = {f.between[0]:.4g} and {f.between[1]:.4g}, near ({where}) "
              f"{units.length_label}")
    for s in steps:
        if s.get("continued"):
            shown = ", ".join(f"{k} = {v:g}" for k, v in s["params"].items())
            print(f"at {shown}: searched again from the neighbouring step's equilibria "
                  f"(continuation), which found more")
    for s in failed:
        print(f"step {s['params']}: {s['error']}")
    print(f"wrote {folder / 'sweep.csv'}, sweep.json and sweep.png")
