"""`trapscape render SCENE -o OUT.png [--show]`: the 3D view of the scene's layers (or its
polarity map), off-screen to a PNG of any size or in an interactive window."""
from __future__ import annotations

import sys

from trapscape.scene.errors import SceneError
from trapscape.viewers.commands.common import (
    MAX_GRID_RESOLUTION,
    MAX_IMAGE_PIXELS,
    MAX_IMAGE_SIDE,
    add_output_argument,
    add_scene_arguments,
    add_section_argument,
    add_units_argument,
    analysis_from_args,
    check_output_path,
    check_units,
    display_units,
    parse_section,
    progress,
)

DEFAULT_RESOLUTION = 64
EXAMPLES = """\
  trapscape render samples/level_gauge.toml -o view.png
  trapscape render samples/bead_chip.toml -o front.png --camera front --section y=0
  trapscape render samples/level_gauge.toml -o zones.png --layers +isosurfaces --iso 10,20mT
  trapscape render samples/arc_rotor.toml -o polarity.png --view polarity
  trapscape render samples/holding_plate.toml -o view-in.png --units in,lbf,gauss
"""


def add_view_arguments(parser) -> None:
    """Options shared by render and export (layers, camera, section, colour scale)."""
    from trapscape.viewers.layers import LAYERS

    parser.add_argument(
        "--layers", metavar="SPEC",
        help="layers to draw: '+fieldlines,+hover,-section' changes the defaults, a plain list "
             "'magnets,markers' replaces them; 'all' and 'default' work too. Layers: "
             + ", ".join(LAYERS))
    parser.add_argument("--camera", default="iso", choices=("iso", "front", "side", "top", "fit"),
                        help="camera preset (default iso; fit frames the magnets and traps)")
    add_section_argument(parser, "the section plane, e.g. y, z=2.5 (scene unit); default: "
                                 "through the headline trap, facing the camera")
    parser.add_argument("--scale", choices=("log", "linear"), default="log",
                        help="colour scale of the field map (default log)")
    parser.add_argument("--iso", metavar="LEVELS",
                        help="isosurface levels, e.g. 20,50mT or 1000J/m3 (bare numbers: mT); "
                             "default: three levels across the field in the box")
    parser.add_argument("--resolution", type=int, default=None, metavar="N",
                        help="samples along the longest side of the box (default 64 for "
                             "pictures; a .vti export defaults to the search box's spacing)")
    parser.add_argument("--title", help="title over the picture (default: the scene's; '' for none)")
    add_units_argument(parser)


def add_arguments(parser) -> None:
    add_scene_arguments(parser)
    add_output_argument(parser, "OUT.png", "where to write the picture", former="--out")
    parser.add_argument("--show", action="store_true", help="open an interactive window too")
    parser.add_argument("--view", choices=("scene", "polarity"), default="scene",
                        help="scene: the 3D view (default); polarity: a top view of the parts, "
                             "numbered, with their north faces marked")
    add_view_arguments(parser)
    parser.add_argument("--size", default="1600x1200", metavar="WxH",
                        help="picture size in pixels (default 1600x1200)")
    parser.add_argument("--transparent", action="store_true", help="transparent background")
    parser.add_argument("--cutaway", action="store_true",
                        help="take away the parts between the camera and the section plane")


def parse_size(text: str) -> tuple[int, int]:
    width, _, height = text.lower().partition("x")
    try:
        size = (int(width), int(height))
    except ValueError:
        raise SceneError(f"--size {text!r}: write WIDTHxHEIGHT in pixels, e.g. --size 1600x1200.") from None
    if min(size) < 64 or max(size) > MAX_IMAGE_SIDE or size[0] * size[1] > MAX_IMAGE_PIXELS:
        raise SceneError(f"--size {text!r}: each side must be 64 to {MAX_IMAGE_SIDE} pixels and "
                         f"the picture at most {MAX_IMAGE_PIXELS // 1_000_000} megapixels.")
    return size



def view_context(analysis, args, traps: bool = True, update=None):
    """The view's context; with traps, the analysis finds them when a layer first needs them
    (markers, wells, the section through the main trap), not for a view of the magnets alone.
    `update`: the command's progress callback (viewers.commands.common.progress)."""
    from trapscape.viewers.layers.context import ViewContext

    resolution = args.resolution or DEFAULT_RESOLUTION
    if not 8 <= resolution <= MAX_GRID_RESOLUTION:
        raise SceneError(f"--resolution must be 8 to {MAX_GRID_RESOLUTION} for a 3D view "
                         f"({MAX_GRID_RESOLUTION}^3 field points).")
    display = display_units(args, analysis.scene) if getattr(args, "units", None) else None
    return ViewContext.of(analysis, traps=traps, grid_resolution=resolution, progress=update,
                          display=display)


def render_options(scene, args, size=(1600, 1200), transparent=False, cutaway=False):
    from trapscape.viewers.layers import parse_layers
    from trapscape.viewers.layers.isosurfaces import parse_levels
    from trapscape.viewers.render import RenderOptions

    axis, level = parse_section(args.section)
    return RenderOptions(
        layers=parse_layers(args.layers, scene), size=size, camera=args.camera,
        transparent=transparent, title=args.title, log_scale=args.scale == "log",
        iso_levels_T=tuple(parse_levels(args.iso)) if args.iso else None,
        section_axis=axis, section_level=level, cutaway=cutaway)


def print_notes(ctx) -> None:
    for note in ctx.notes:
        print(f"note: {note}", file=sys.stderr)


def run(args) -> int:
    if not args.output and not args.show:
        raise SceneError("render: say where the picture goes with -o OUT.png (or open a window "
                         "with --show).")
    check_units(args)
    if args.output:
        check_output_path(args.output, (".png",))
    analysis = analysis_from_args(args)
    scene = analysis.scene
    size = parse_size(args.size)
    with progress(args, desc="render") as update:
        return _render(analysis, scene, size, args, update)


def _render(analysis, scene, size, args, update) -> int:
    ctx = view_context(analysis, args, traps=args.view != "polarity", update=update)
    if args.view == "polarity":
        from trapscape.viewers.polarity import draw_polarity_map

        if args.output:
            draw_polarity_map(ctx, args.output, size=size, title=args.title,
                              transparent=args.transparent, units=ctx.display)
            print(f"wrote the polarity map to {args.output}")
        return 0
    from trapscape.viewers.render import render_png, show_window

    options = render_options(scene, args, size, args.transparent, args.cutaway)
    if args.output:
        render_png(ctx, options, args.output)
        if update is not None:
            update(1, 1, "done")
        print(f"wrote {args.output} ({size[0]}x{size[1]}; layers: {', '.join(options.layers)})")
    if args.show:
        show_window(ctx, options)
    print_notes(ctx)
    return 0
