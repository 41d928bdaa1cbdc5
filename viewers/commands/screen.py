"""`trapscape screen`: many layouts against a spec, one row each, ranked; resumable
(physics.analysis.screen, physics.analysis.spec).

Exit codes: 0 every layout ran (passing or not); 3 some layouts could not be run (their rows say
why); 2 bad input (the spec, the inputs, the output path)."""
from __future__ import annotations

import concurrent.futures
import csv
import io
import logging
import os
from dataclasses import replace
from pathlib import Path

from trapscape.scene.errors import SceneError
from trapscape.viewers.atomic import replaced_atomically
from trapscape.viewers.commands.common import (
    add_output_argument,
    add_run_options,
    check_output_path,
    progress,
)

SOME_LAYOUTS_FAILED = 3
EXAMPLES = """\
  trapscape screen samples/level_gauge.toml --spec samples/level_gauge.spec.toml --vary gap=2..6@9 -o gauge.csv
  trapscape screen layouts/ --spec spec.toml -o review.csv --workers 2 --timeout 120
  trapscape screen exports/ --template stand.template.toml --parts stand_parts.csv --spec stand.spec.toml -o stand.csv
"""


def add_arguments(parser) -> None:
    parser.add_argument("inputs", nargs="+", metavar="SCENE|FOLDER",
                        help="scene files and folders of them; with --template, CAD exports "
                             "and folders of them")
    parser.add_argument("--spec", required=True, metavar="SPEC.toml",
                        help="the requirements and ranking (see the README's Screening)")
    add_output_argument(parser, "OUT.csv", "the table; full rows go to OUT.jsonl beside it "
                        "(a second run with the same -o resumes)", required=True)
    parser.add_argument("--vary", action="append", default=[], metavar="NAME=START..STOP@COUNT",
                        help="variants of every scene, as in sweep (once or twice: a grid)")
    parser.add_argument("--template", metavar="SCENE.toml",
                        help="screen CAD exports: each is imported (as trapscape import does) "
                             "into this scene, which holds the probe, search box and the rest "
                             "and no [[magnet]]; the scenes go to OUT-layouts/")
    parser.add_argument("--parts", metavar="PARTS.csv",
                        help="with --template: the parts list every export is imported with")
    parser.add_argument("--workers", type=int, default=None, metavar="N",
                        help="processes (default: the cores)")
    parser.add_argument("--timeout", type=float, default=None, metavar="SECONDS",
                        help="stop a layout after this long and record it as timed out")
    parser.add_argument("--dask", metavar="ADDRESS|local",
                        help="run the layouts on a Dask cluster (its scheduler's address, or "
                             "'local' for a LocalCluster of --workers processes)")
    add_run_options(parser)


def run(args) -> int:
    from trapscape.physics.analysis.spec import load_spec
    from trapscape.viewers.figure_process import FigureProcess

    check_output_path(args.output, (".csv",))
    spec = load_spec(args.spec)
    # the figure's process imports matplotlib on the other core while this one loads the engine
    with FigureProcess("trapscape.viewers.screen_plot") as figures:
        return _screen(args, spec, figures)


def _screen(args, spec, figures) -> int:
    from trapscape.physics.analysis import screen, sweep

    grid = sweep.grid_of([sweep.parse_vary(v) for v in args.vary]) if args.vary else []
    if args.template:
        folder = Path(args.output).with_name(Path(args.output).stem + "-layouts")
        layouts = screen.cad_layouts(args.inputs, args.template, args.parts, folder, grid)
    elif args.parts:
        raise SceneError("--parts goes with --template (CAD exports screened through a "
                         "template scene).")
    else:
        layouts = screen.layouts_from(args.inputs, grid)
    if args.set:
        layouts = [replace(x, overrides=tuple(args.set) + x.overrides) for x in layouts]
    if args.timeout is not None and not (args.timeout > 0 and args.timeout < 1e6):
        raise SceneError("--timeout must be a positive number of seconds.")
    log = screen.RowLog(Path(args.output).with_suffix(".jsonl"))
    digest = screen.spec_digest(args.spec)
    log.rows = [r for r in log.rows if r.get("spec_sha256") == digest]  # another spec: redo
    done = {r["key"] for r in log.rows}
    todo = [x for x in layouts if x.key not in done]
    keys = {x.key for x in layouts}
    try:
        _run(args, todo, log, len(layouts))
    finally:  # also on Ctrl-C: the table of what finished
        log.close()
        rows = screen.ranked(args.spec, [r for r in log.rows if r["key"] in keys])
        _write_csv(args.output, rows, spec)
        figures.call("save_screen_figure", rows, spec, str(Path(args.output).with_suffix(".png")))
    return _summary(args, rows, len(layouts) - len(todo))


def _run(args, todo, log, total) -> None:
    from trapscape.physics.analysis import screen

    workers = min(args.workers or (os.cpu_count() or 1), max(len(todo), 1))
    if workers < 1:
        raise SceneError("--workers must be 1 or more.")
    start = total - len(todo)
    if workers > 1 and not args.dask:
        _run_on_pool(args, todo, log, workers, start, total)
        return
    with progress(args, unit="layout", desc="screen") as update:
        if args.dask:
            _run_on_dask(args, todo, log, workers, lambda i: update and update(start + i, total))
            return
        for i, layout in enumerate(todo):
            log.append(screen.screen_layout_in_worker(layout, args.spec, args.timeout))
            if update:
                update(start + i + 1, total)


def _run_on_pool(args, todo, log, workers, start, total) -> None:
    from trapscape.physics.analysis import batch, screen

    with batch.process_pool(workers) as pool:
        # the workers start at the first submit, before the progress bar starts its thread
        futures = [pool.submit(screen.screen_layout_in_worker, x, args.spec, args.timeout)
                   for x in todo]
        try:
            with progress(args, unit="layout", desc="screen") as update:
                for i, future in enumerate(concurrent.futures.as_completed(futures)):
                    log.append(future.result())
                    if update:
                        update(start + i + 1, total)
        except BaseException:
            pool.shutdown(wait=False, cancel_futures=True)
            raise


def _run_on_dask(args, todo, log, workers, update) -> None:
    """The same layouts on a Dask cluster; each worker process runs one layout at a time in the
    engine's in-process mode, so the rows are those of the process pool."""
    try:
        from distributed import Client, LocalCluster, as_completed
    except ImportError:
        raise SceneError("--dask needs Dask's distributed scheduler: pip install "
                         "'dask[distributed]' (or pip install -e '.[dask]').") from None
    from trapscape.physics.analysis import screen

    logging.getLogger("distributed").setLevel(logging.ERROR)  # its shutdown chatter
    if args.dask == "local":
        cluster = LocalCluster(n_workers=workers, threads_per_worker=1, processes=True,
                               dashboard_address=None)
        client = Client(cluster)
    else:
        cluster = None
        try:
            client = Client(args.dask, timeout="20s")
        except OSError as error:
            raise SceneError(f"--dask {args.dask}: cannot reach the scheduler ({error}).") from None
    try:
        futures = client.map(screen.screen_layout_in_worker, todo, spec_path=args.spec,
                             timeout=args.timeout, pure=False)
        for i, future in enumerate(as_completed(futures), start=1):
            log.append(future.result())
            update(i)
    finally:
        client.close()
        if cluster is not None:
            cluster.close()


def _write_csv(path, rows, spec) -> None:
    figures = list(dict.fromkeys([r.key for r in spec.requirements] + list(spec.rank)))
    exports = any(r.get("cad") for r in rows)
    header = ["rank", "passed", "failing", "error", *(["cad_export"] if exports else []), "scene",
              "overrides", *figures, "score", "seconds"]
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(header)
    for r in rows:
        writer.writerow([r["rank"] or "", "yes" if r["passed"] else "no", r["failing"] or "",
                         r["error"] or "", *([r.get("cad") or ""] if exports else []),
                         r["scene"], " ".join(r["overrides"]),
                         *(_cell(r["figures"].get(f)) for f in figures), _cell(r["score"]),
                         f"{r['seconds']:.2f}"])
    with replaced_atomically(path, newline="") as handle:
        handle.write(buffer.getvalue())


def _cell(value) -> str:
    return "" if value is None else f"{value:.6g}"


def _summary(args, rows, skipped) -> int:
    passed = [r for r in rows if r["passed"]]
    errors = [r for r in rows if r["error"]]
    print(f"{len(rows)} layouts: {len(passed)} pass, {len(rows) - len(passed) - len(errors)} "
          f"fail, {len(errors)} could not be run" +
          (f" ({skipped} already in {Path(args.output).with_suffix('.jsonl')})" if skipped else ""))
    for r in passed[:3]:
        print(f"  #{r['rank']} {r['key']} (score {r['score']:.3g})")
    for r in errors[:5]:
        print(f"  {r['key']}: {r['error']}")
    plot = Path(args.output).with_suffix(".png")
    also = f", {plot}" if plot.exists() else ""
    print(f"wrote {args.output}{also} and {Path(args.output).with_suffix('.jsonl')}")
    return SOME_LAYOUTS_FAILED if errors else 0
