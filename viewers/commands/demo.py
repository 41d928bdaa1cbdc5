"""`trapscape demo [-o DIR]`: the whole job on a bundled sample (the level gauge): check it,
find its traps, write the customer report (the default view, the section, the polarity map, the
plots, report.html and report.pdf), and say in one sentence where the probe is caught."""
from __future__ import annotations

import warnings
from pathlib import Path

from trapscape.scene.errors import SceneError
from trapscape.scene.files import is_scene_file

DEMO_SAMPLE = "level_gauge.toml"
DEFAULT_DIR = "trapscape-demo"
EXAMPLES = """\
  trapscape demo
  trapscape demo -o demo-out --sample bead_chip.toml
  trapscape demo --set gap=4 --quiet
"""


def samples_dir() -> Path:
    """samples/ beside the packages (the repository, installed editable or run in place)."""
    from trapscape import viewers

    here = Path(viewers.__file__).resolve().parent
    for candidate in (here.parent / "samples", here / "samples"):
        if candidate.is_dir():
            return candidate
    raise SceneError("demo: the bundled samples/ folder is not beside the installed package; "
                     "install trapscape from its repository (pip install -e .) to run the demo.")


def add_arguments(parser) -> None:
    from trapscape.viewers.commands.common import add_output_argument, add_run_options

    add_output_argument(parser, "DIR", f"where the files go (default ./{DEFAULT_DIR}/)",
                        former="--out")
    parser.set_defaults(output=DEFAULT_DIR)
    parser.add_argument("--sample", default=DEMO_SAMPLE, metavar="NAME",
                        help=f"a file of samples/ to run on (default {DEMO_SAMPLE})")
    parser.add_argument("--size", default="1600x1200", metavar="WxH",
                        help="picture size in pixels (default 1600x1200)")
    from trapscape.viewers.commands.report import add_report_options

    add_report_options(parser)
    add_run_options(parser)


def run(args) -> int:
    from trapscape.physics.analysis.run import Analysis
    from trapscape.scene.loader import load_scene, parse_overrides
    from trapscape.viewers.commands.common import check_units, display_units, progress
    from trapscape.viewers.commands.render import parse_size
    from trapscape.viewers.commands.report import write as write_report

    sample = samples_dir() / args.sample
    if not sample.is_file():
        names = ", ".join(sorted(p.name for p in samples_dir().glob("*.toml")
                                 if is_scene_file(p)))
        raise SceneError(f"demo: no sample {args.sample!r}; choose one of {names}.")
    out = Path(args.output)
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as error:
        raise SceneError(f"demo: cannot make {out}: {error.strerror}; choose another -o DIR.") from None
    size = parse_size(args.size)
    check_units(args)  # a wrong unit is said before any work
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        analysis = Analysis(load_scene(str(sample), parse_overrides(args.set)))
    print(f"sample: {sample}")
    written = [("check", write_json_file(analysis.check_result(), out / "check.json"))]
    with progress(args, desc="scan") as update:
        analysis.traps(progress=update)  # found once: the JSON and the view share it
    written.append(("traps", write_json_file(analysis.traps_result(), out / "traps.json")))
    report = write_report(analysis, out, args, sizes=demo_sizes(size),
                          overview_name="view.png")
    written += [("render", report["overview"]), ("section", report["section"]),
                ("polarity map", report["polarity"]),
                *(("plot", report[name]) for name in ("profile", "pull") if name in report),
                ("report", report["report.pdf"]), ("report html", report["report.html"])]
    for what, path in written:
        print(f"{what:>12}: {path}")
    from trapscape.physics.analysis.trap_words import headline_sentence, margin_warnings

    report_traps = analysis.traps()
    units = display_units(args, analysis.scene)
    for warning in margin_warnings(report_traps, analysis.scene, units):
        print(warning)
    print(headline_sentence(report_traps, analysis.scene, units))
    print(report_traps.caution)
    return 0


def demo_sizes(size):
    """The report's picture sizes from --size (the renders and the polarity map at it)."""
    from trapscape.viewers.report.pictures import PictureSizes

    plot = (min(size[0], 1000), min(size[1], 760))
    return PictureSizes(render=size, polarity=size, plot=plot, interactive=size)


def write_json_file(payload: dict, path: Path) -> Path:
    from trapscape.viewers.commands.common import write_json

    write_json(str(path), payload)
    return path
