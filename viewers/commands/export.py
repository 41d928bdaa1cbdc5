"""`trapscape export SCENE -o OUT.vti|.vtp|.stl|.html`: the sampled field as VTK image data, the
geometry of the layers as polydata or STL (scene coordinates and unit, for CAD), or one offline
HTML file with the interactive 3D view."""
from __future__ import annotations

from trapscape.scene.errors import SceneError
from trapscape.viewers.commands.common import (
    add_output_argument,
    add_scene_arguments,
    analysis_from_args,
    check_output_path,
    check_units,
    progress,
)
from trapscape.viewers.commands.render import (
    add_view_arguments,
    print_notes,
    render_options,
    view_context,
)

EXAMPLES = """\
  trapscape export samples/level_gauge.toml -o field.vti --spacing 0.5
  trapscape export samples/level_gauge.toml -o zones.stl --layers +isosurfaces
  trapscape export samples/bead_chip.toml -o view.html
"""


def add_arguments(parser) -> None:
    add_scene_arguments(parser)
    add_output_argument(parser, "OUT", required=True, former="--out",
                        help="OUT.vti (field grid), OUT.vtp or OUT.stl (geometry; STL: one file "
                             "per layer, OUT-<layer>.stl), OUT.html (interactive view)")
    add_view_arguments(parser)
    parser.add_argument("--spacing", type=float, metavar="S",
                        help=".vti: grid step in the scene's unit (default: the search box's)")


def run(args) -> int:
    from trapscape.viewers.export import format_of

    kind = format_of(args.output)
    check_units(args)
    check_output_path(args.output)
    if args.spacing is not None and not (args.spacing > 0 and args.spacing < float("inf")):
        raise SceneError(f"--spacing {args.spacing!r}: the grid step is a positive finite length "
                         "in the scene's unit.")
    analysis = analysis_from_args(args)
    with progress(args, desc="export") as update:
        return _export(analysis, kind, args, update)


def _export(analysis, kind, args, update) -> int:
    from trapscape.viewers.export import GEOMETRY_DEFAULTS, export
    from trapscape.viewers.layers import parse_layers

    scene = analysis.scene
    ctx = view_context(analysis, args, traps=kind != ".vti", update=update)
    layers = None
    if kind in (".vtp", ".stl"):
        layers = parse_layers(args.layers, scene) if args.layers else GEOMETRY_DEFAULTS
        if args.layers and all(item.strip()[:1] in "+-" for item in args.layers.split(",")):
            layers = _relative_to(GEOMETRY_DEFAULTS, args.layers, scene)
    options = render_options(scene, args, size=(1200, 900))
    written = export(ctx, args.output, layers=layers, options=options, spacing=args.spacing,
                     resolution=args.resolution)
    for path in written:
        print(f"wrote {path}")
    print_notes(ctx)
    return 0


def _relative_to(defaults, spec, scene):
    """'+section,-isosurfaces' applied to the geometry defaults rather than the picture's."""
    from trapscape.viewers.layers import LAYERS, _expand

    chosen = set(defaults)
    for item in (i.strip() for i in spec.split(",") if i.strip()):
        names = _expand(item[1:].strip().lower(), scene)
        chosen = chosen | names if item[0] == "+" else chosen - names
    if not chosen:
        raise SceneError(f"--layers {spec!r} leaves nothing to export.")
    return tuple(name for name in LAYERS if name in chosen)

