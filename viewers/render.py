"""The scene view: layers drawn with pyvista, off-screen to a PNG or in a window.

The projection is parallel (an engineering view), so the scale bar holds everywhere in the
picture. The 3D content is framed in the left part of the window; the legend and the |B| colour
bar sit in a column on the right, the title on top, the scale bar at the bottom left.
"""
from __future__ import annotations

import os
from dataclasses import dataclass, field, replace

import numpy as np

from trapscape.scene.errors import SceneError
from trapscape.scene.names import did_you_mean, listing
from trapscape.viewers.atomic import atomic_path
from trapscape.viewers.layers import layer_module
from trapscape.viewers.layers.annotations import (
    ColourScale,
    Legend,
    draw_scale_bar,
    text_width,
    title_lines,
)
from trapscape.viewers.layers import style
from trapscape.viewers.layers.cutaway import active, hidden_parts, outline_parts_behind
from trapscape.viewers.layers.magnets import world_meshes
from trapscape.viewers.layers.markers import draw_labels
from trapscape.viewers.layers.section import choose_section
from trapscape.viewers.layers.style import BACKGROUND, TEXT

CAMERAS = {  # preset -> (direction from the focal point to the camera, view up)
    "iso": ((1.0, -1.0, 0.8), (0.0, 0.0, 1.0)),
    "front": ((0.0, -1.0, 0.0), (0.0, 0.0, 1.0)),
    "side": ((1.0, 0.0, 0.0), (0.0, 0.0, 1.0)),
    "top": ((0.0, 0.0, 1.0), (0.0, 1.0, 0.0)),
    "fit": ((1.0, -1.0, 0.8), (0.0, 0.0, 1.0)),
}
HTML_MARKER_SCALE = 1.8  # a web view is seen smaller than a picture: bigger markers



def prefer_egl() -> None:
    """Off-screen and with no X display, go straight to EGL: VTK would otherwise try X first
    and print a warning about the missing display. Must run before vtk is imported."""
    if not os.environ.get("DISPLAY"):
        os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")


@dataclass(frozen=True)
class RenderOptions:
    layers: tuple
    size: tuple = (1600, 1200)
    camera: str = "iso"
    transparent: bool = False
    title: str | None = None  # None: the scene's title; "": none
    log_scale: bool = True
    iso_levels_T: tuple | None = None
    section_axis: int | None = None  # None: chosen from the constraint and the camera
    section_level: float | None = None  # scene unit; None: through the headline trap
    cutaway: bool = False
    legend: bool = True
    scale_bar: bool = True
    extra: dict = field(default_factory=dict)


def view_vectors(camera: str):
    """(direction to the camera, up, right), unit vectors."""
    if camera not in CAMERAS:
        raise SceneError(f"--camera {camera!r} is not a preset{did_you_mean(camera, CAMERAS)}; "
                         f"choose {listing(CAMERAS)}.")
    direction, up = (np.asarray(v, float) for v in CAMERAS[camera])
    direction /= np.linalg.norm(direction)
    right = np.cross(-direction, up)
    right /= np.linalg.norm(right)
    up = np.cross(right, -direction)
    return direction, up, right


def prepare(ctx, options: RenderOptions) -> None:
    """Set what the layers read from the context: the view, the section, the text size."""
    direction, up, right = view_vectors(options.camera)
    ctx.view_direction = direction
    ctx.view_up = up
    ctx.view_right = right
    ctx.equilibria_table = []
    ctx.pending_labels = []
    ctx.label_offset = (right + up) / np.sqrt(2.0)
    ctx.font_size = max(4, int(round(min(options.size[1] / 95, options.size[0] / 125))))
    ctx.iso_levels_T = options.iso_levels_T
    ctx.cutaway = options.cutaway
    ctx.marker_scale = 1.0
    if "section" in options.layers:
        ctx.section = choose_section(ctx, direction, options.section_axis, options.section_level)
    else:
        ctx.section = None


FIELD_COLOURED = ("section", "fieldlines")  # the layers coloured by |B| (and its colour bar)


def colour_scale(ctx, options):
    """The |B| colour scale; its range is read off the 3D field grid, so a view without a
    field-coloured layer does not sample the field for it."""
    if not any(name in FIELD_COLOURED for name in options.layers):
        return ColourScale(low_mT=1.0, high_mT=10.0, log=options.log_scale)
    low, high = ctx.B_range_mT
    if not options.log_scale:
        low = 0.0
    return ColourScale(low_mT=low, high_mT=high, log=options.log_scale,
                       line_width=max(1.5, options.size[1] / 600))


@dataclass
class Picture:
    """A built view: the plotter with every layer drawn, and what was decided on the way (the
    legend, the layout of the window, the world length of one pixel, the marker overlay, which
    must live as long as the plotter)."""

    plotter: object
    legend: object
    layout: object = None
    world_per_pixel: float | None = None
    overlay: object = None
    labels: list = field(default_factory=list)  # [(actor, anchor, box)] of the marker labels


def build_picture(ctx, options: RenderOptions, off_screen: bool = True, overlay: bool = True,
                  annotations: str = "picture") -> Picture:
    """A pyvista Plotter holding every chosen layer, the camera set, annotations added
    ("picture": legend, colour bar, scale bar, title; "html": what a web view can carry)."""
    if off_screen:
        prefer_egl()
    import pyvista as pv


    prepare(ctx, options)
    plotter = pv.Plotter(off_screen=off_screen, window_size=list(options.size))
    plotter.set_background(BACKGROUND)
    plotter.enable_parallel_projection()
    legend, scale = Legend(), colour_scale(ctx, options)
    if annotations == "html":
        # vtk.js maps colours linearly: hand it log10 |B| so it colours as the picture does
        scale.values_as_log10 = scale.log
        ctx.marker_scale = HTML_MARKER_SCALE
    wants_overlay = overlay and ("markers" in options.layers or "section" in options.layers)
    marker_layer = _overlay(plotter) if wants_overlay else None
    hidden = hidden_parts(ctx, world_meshes(ctx)) if "section" in options.layers else set()
    for name in options.layers:
        module = layer_module(name)
        if name == "magnets":
            module.draw(plotter, ctx, legend, hidden=hidden)
        elif name in ("section", "fieldlines", "isosurfaces"):
            module.draw(plotter, ctx, legend, scale)
        elif name == "markers":
            module.draw(plotter, ctx, legend, overlay=marker_layer)
        else:
            module.draw(plotter, ctx, legend)
    if marker_layer is not None and "section" in options.layers and "magnets" in options.layers:
        outline_parts_behind(marker_layer, ctx, legend, world_meshes(ctx), hidden)  # over the map
    if ctx.section is not None and active(ctx):
        legend.add(f"cutaway: parts in front of the section ({ctx.section.name} {ctx.unit}) "
                   "taken away, cut faces grey", style.GHOST, "rectangle")
    picture = Picture(plotter, legend, overlay=marker_layer)
    layout = plan_layout(plotter, ctx, options, legend)
    if annotations == "html":  # a page of any size: centre the content, the text is HTML
        layout.legend_width, layout.title_band = 0.0, 0.0
    picture.world_per_pixel = _frame(plotter, ctx, options, layout)
    picture.layout = layout
    if annotations == "html":
        _annotate_html(plotter, ctx, options, legend, scale, picture.world_per_pixel)
    else:
        _annotate(plotter, ctx, options, legend, scale, layout, picture.world_per_pixel)
        if "markers" in options.layers:  # last: placed clear of every text drawn before
            x0, x1, y0, y1 = layout.content
            picture.labels = draw_labels(plotter, ctx, (x0, y0, x1, y1), renderer=marker_layer)
    # no depth peeling: with Mesa's EGL it drops every translucent actor (seen with VTK 9.7)
    return picture


def _overlay(plotter):
    """A renderer drawn over the main one with the same camera: markers inside a ring of
    magnets or behind the section stay visible."""
    from pyvista.plotting.renderer import Renderer

    overlay = Renderer(plotter)
    overlay.SetLayer(1)
    overlay.SetInteractive(False)
    plotter.ren_win.SetNumberOfLayers(2)
    plotter.ren_win.AddRenderer(overlay)
    overlay.SetActiveCamera(plotter.renderer.GetActiveCamera())
    return overlay


def content_bounds(plotter, ctx, options) -> np.ndarray:
    """(2, 3) what the camera frames: everything drawn, or for `fit` the magnets and traps."""
    if options.camera == "fit":
        boxes = [ctx.magnet_bounds]
        if ctx.equilibria:
            points = np.array([e.position for e in ctx.equilibria])
            boxes.append(np.array([points.min(axis=0), points.max(axis=0)]))
        lower = np.min([b[0] for b in boxes], axis=0)
        upper = np.max([b[1] for b in boxes], axis=0)
        pad = 0.08 * np.linalg.norm(upper - lower)
        return np.array([lower - pad, upper + pad])
    points = visible_points(plotter)
    if len(points) == 0:
        return ctx.box_bounds
    return np.array([points.min(axis=0), points.max(axis=0)])


def visible_points(plotter, per_actor: int = 4000, directions=()) -> np.ndarray:
    """Points of every 3D actor drawn (a deterministic subsample of each): framing on them, not
    on bounding boxes, keeps thin planes and rings from being framed too loosely."""
    gathered = []
    for actor in plotter.renderer.actors.values():
        mapper = actor.GetMapper() if hasattr(actor, "GetMapper") else None
        data = mapper.GetInput() if hasattr(mapper, "GetInput") else None
        if data is None or not actor.GetVisibility() or not hasattr(data, "GetPoints"):
            continue
        vtk_points = data.GetPoints()
        if vtk_points is None or vtk_points.GetNumberOfPoints() == 0:
            continue
        from vtk.util.numpy_support import vtk_to_numpy

        array = vtk_to_numpy(vtk_points.GetData())
        step = max(1, len(array) // per_actor)
        gathered.append(array[::step])
        if step > 1:  # a subsample can miss a plane's corners: keep the extreme points too
            extremes = [array[:, axis].argmin() for axis in range(3)] + [
                array[:, axis].argmax() for axis in range(3)]
            for direction in directions:
                along = array @ direction
                extremes += [along.argmin(), along.argmax()]
            gathered.append(array[extremes])
    return np.concatenate(gathered) if gathered else np.zeros((0, 3))


@dataclass
class Layout:
    """Pixel rectangles of the picture (display coordinates, y up)."""

    width: int
    height: int
    font: int  # pyvista font size of body text (glyphs are about 2 font pixels tall)
    frame: dict | None = None  # what the camera framed: focal point, extents (scene unit)
    title_band: float = 0.0
    legend_left: float = 0.0
    legend_font: int = 0
    legend_width: float = 0.0

    @property
    def content(self):
        """(x0, x1, y0, y1) in pixels where the 3D content is framed."""
        right = self.legend_left - 0.02 * self.width if self.legend_width else 0.98 * self.width
        return (0.02 * self.width, right, 0.08 * self.height + 2.5 * self.font,
                self.height - self.title_band - 0.01 * self.height)


def plan_layout(plotter, ctx, options, legend) -> Layout:
    width, height = options.size
    layout = Layout(width=width, height=height, font=ctx.font_size)
    if options.title != "":
        layout.title_band = 2.0 * ctx.font_size * (1.45 + 1.0) * 1.2 + 0.02 * height
    if options.legend and legend.entries:
        font = max(4, int(round(ctx.font_size * 0.85)))
        widest = max(text_width(plotter, label, font) for label, _, _ in legend.entries)
        while font > 4 and widest + 6 * font > 0.36 * width:
            font -= 1
            widest = max(text_width(plotter, label, font) for label, _, _ in legend.entries)
        layout.legend_font = font
        layout.legend_width = widest + 6 * font
        layout.legend_left = width * 0.985 - layout.legend_width
    return layout


def _frame(plotter, ctx, options, layout: Layout) -> float:
    """Set the camera so the content fills the layout's box; return world units per pixel."""
    direction, up, right = view_vectors(options.camera)
    lower, upper = content_bounds(plotter, ctx, options)
    if options.camera == "fit":
        corners = np.array([[x, y, z] for x in (lower[0], upper[0]) for y in (lower[1], upper[1])
                            for z in (lower[2], upper[2])])
    else:
        corners = visible_points(plotter, directions=(right, up, right + up, right - up))
    centre = corners.mean(axis=0)
    u = (corners - centre) @ right
    v = (corners - centre) @ up
    x0, x1, y0, y1 = layout.content
    width, height = options.size
    # parallel scale = half the window's height in world units; fit both extents in the box
    scale = 1.04 * max((v.max() - v.min()) * height / (2 * (y1 - y0)),
                       (u.max() - u.min()) * height / (2 * (x1 - x0)), 1e-9)
    pixel = 2 * scale / height  # world units per pixel
    offset_x = ((x0 + x1) / 2 - width / 2) * pixel
    offset_y = ((y0 + y1) / 2 - height / 2) * pixel
    mid = centre + right * (u.max() + u.min()) / 2 + up * (v.max() + v.min()) / 2
    focal = mid - right * offset_x - up * offset_y
    distance = 4.0 * float(np.linalg.norm(upper - lower)) + 1.0
    layout.frame = {"focal": [float(c) for c in mid], "direction": [float(c) for c in direction],
                    "up": [float(c) for c in up], "distance": distance,
                    "width": float(u.max() - u.min()), "height": float(v.max() - v.min())}
    camera = plotter.camera
    camera.focal_point = tuple(focal)
    camera.position = tuple(focal + direction * distance)
    camera.up = tuple(up)
    camera.parallel_scale = scale
    plotter.renderer.ResetCameraClippingRange()
    return pixel


def _annotate(plotter, ctx, options, legend, scale, layout: Layout, world_per_pixel) -> None:
    width, height = options.size
    font = ctx.font_size
    if options.title != "":
        title, subtitle = title_lines(ctx.scene, ctx.section, ctx)
        title = options.title or title
        top = height - 0.015 * height
        big = int(round(font * 1.45))
        while big > 4 and text_width(plotter, title, big) > 0.96 * width:
            big -= 1
        small = font
        while small > 3 and text_width(plotter, subtitle, small) > 0.96 * width:
            small -= 1
        plotter.add_text(title, position=(int(0.02 * width), int(top - 2.0 * 1.45 * font * 1.05)),
                         font_size=big, color=TEXT)
        plotter.add_text(subtitle, position=(int(0.02 * width),
                                             int(top - 2.0 * font * (1.45 + 1.0) * 1.15)),
                         font_size=small, color=TEXT)
    if options.scale_bar:
        draw_scale_bar(plotter, world_per_pixel, ctx.shown.length_label,
                       origin_px=(0.03 * width, 0.04 * height + font), font_size=font,
                       target_px=0.16 * width, factor=ctx.length_factor())
    if not options.legend:
        return
    top = height - layout.title_band
    bottom = top
    if legend.entries:
        legend.draw(plotter, left=layout.legend_left, top=top, width=layout.legend_width,
                    font_size=layout.legend_font)
        bottom = top - legend.height(layout.legend_font)
    left = layout.legend_left if legend.entries else 0.80 * width
    lf = layout.legend_font or font
    if scale.used or "fieldlines" in options.layers:
        bar_top = bottom - 3.5 * lf
        rows = len(ctx.equilibria_table)
        bar_height = min(0.42 * height, bar_top - 0.06 * height - (rows > 0) * 0.2 * height)
        if bar_height > 0.1 * height:
            scale.draw_bar(plotter, position=(left / width, (bar_top - bar_height) / height),
                           size=(0.055, bar_height / height), font_size=lf,
                           units=ctx.display)
            bottom = bar_top - bar_height - 1.5 * lf
    if ctx.equilibria_table:
        _draw_table(plotter, ctx.equilibria_table, left, bottom, lf, 0.03 * height)
    if ctx.notes and options.extra.get("notes_on_picture"):
        plotter.add_text("\n".join(ctx.notes), position="lower_right", font_size=font)


def _annotate_html(plotter, ctx, options, legend, scale, world_per_pixel) -> None:
    """A web view rotates, so no scale bar; the title, legend and colour scale go into the page
    as HTML (viewers.export), as vtk.js draws no text and labels a log colour bar wrongly. The
    markers' numbers are drawn as flat 3D text facing the starting view, beside each marker."""
    if "markers" not in options.layers or not ctx.pending_labels:
        return
    import pyvista as pv

    from trapscape.viewers.layers.markers import marker_radius

    right, up, towards = ctx.view_right, ctx.view_up, ctx.view_direction
    height = 2.2 * marker_radius(ctx)
    frame = np.column_stack([right, up, towards])
    for equilibrium, _ in ctx.pending_labels:
        text = pv.Text3D(str(equilibrium.number), depth=0.0)
        points = np.asarray(text.points, float)
        points = (points - points.min(axis=0)) * (height / max(np.ptp(points[:, 1]), 1e-12))
        corner = equilibrium.position + right * 1.3 * marker_radius(ctx) + up * 0.6 * marker_radius(ctx)
        text.points = corner + points @ frame.T
        plotter.add_mesh(text, color=TEXT, lighting=False)


def _draw_table(plotter, rows, left, top, font, floor) -> None:
    """The equilibria, one per line, as many as fit above `floor` (pixels)."""
    room = plotter.window_size[0] - left - 4
    widest = max(rows + ["Equilibria (firmest first)"], key=len)
    while font > 6 and text_width(plotter, widest, font) > room:  # shrink rather than clip
        font -= 1
    line = 2.0 * font * 1.25
    fits = max(int((top - floor) // line) - 1, 0)
    if fits <= 0:
        return
    shown = rows if len(rows) <= fits else rows[:fits - 1] + [
        f"... {len(rows) - fits + 1} more: trapscape traps SCENE -o FILE.json"]
    text = "\n".join(["Equilibria (firmest first)"] + shown)
    plotter.add_text(text, position=(int(left), int(top - line * (len(shown) + 1))),
                     font_size=font, color=TEXT)


def render_png(ctx, options: RenderOptions, path: str) -> str:
    picture = build_picture(ctx, options, off_screen=True)
    plotter = picture.plotter
    try:
        with atomic_path(path) as temporary:
            plotter.screenshot(temporary, transparent_background=options.transparent,
                               window_size=list(options.size))
    finally:
        plotter.close()
    return path


def show_window(ctx, options: RenderOptions) -> None:
    """The interactive window with the same layers (needs a display)."""
    if not os.environ.get("DISPLAY") and os.name != "nt" and not os.environ.get("WAYLAND_DISPLAY"):
        raise SceneError("--show needs a display and none is set (DISPLAY is empty); "
                         "write a picture with -o OUT.png instead.")
    picture = build_picture(ctx, replace(options), off_screen=False)
    picture.plotter.show()
