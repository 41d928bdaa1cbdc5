"""What makes a picture readable without the tool: the legend, the |B| colour scale, the scale
bar and the title."""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from trapscape.physics.analysis.views import probe_words
from trapscape.viewers.layers import style


def text_width(plotter, text: str, font_size: int) -> float:
    """Pixel width of a line of text as add_text would draw it."""
    import vtk

    actor = vtk.vtkTextActor()
    actor.SetInput(text)
    actor.GetTextProperty().SetFontSize(int(font_size * 2))  # pyvista doubles its font sizes
    actor.GetTextProperty().SetFontFamilyToArial()
    box = [0.0] * 4
    actor.GetBoundingBox(plotter.renderer, box)
    return box[1] - box[0]


# -- legend -----------------------------------------------------------------------------------

def _circle(r):
    angle = np.linspace(0.0, 2.0 * np.pi, 33)[:-1]
    return r * np.column_stack([np.cos(angle), np.sin(angle)])


# a legend symbol of half-size r about the origin: a list of (points (K, 2), closed) rings
SYMBOL_OUTLINES = {
    "sphere": lambda r: [(_circle(r), True)],
    "ring": lambda r: [(_circle(r), True), (_circle(0.55 * r), True)],
    "diamond": lambda r: [(np.array([[0, -1.2 * r], [0.85 * r, 0], [0, 1.2 * r], [-0.85 * r, 0]]), True)],
    "cube": lambda r: [(0.8 * r * np.array([[-1, -1], [1, -1], [1, 1], [-1, 1]]), True)],
    "line": lambda r: [(np.array([[-1.3 * r, 0], [1.3 * r, 0]]), False)],
    "rectangle": lambda r: [(r * np.array([[-1.3, -0.75], [1.3, -0.75], [1.3, 0.75], [-1.3, 0.75]]), True)],
    "none": lambda r: [],  # a line of text only
}
HOLLOW_SYMBOLS = ("ring",)  # drawn as a band between their outlines, not filled


def symbol_outline(symbol: str, x: float, y: float, r: float):
    """Display-coordinate polygon(s) of a legend symbol centred at (x, y), half-size r:
    a list of (points (K, 2), closed) rings; a ring symbol has two (unknown: a rectangle)."""
    outline = SYMBOL_OUTLINES.get(symbol, SYMBOL_OUTLINES["rectangle"])
    return [(np.array([x, y]) + points, closed) for points, closed in outline(r)]


def _actor_2d(points, polys=(), lines=(), colour=(0, 0, 0), width=1.0, opacity=1.0):
    import vtk

    vtk_points = vtk.vtkPoints()
    for px, py in points:
        vtk_points.InsertNextPoint(float(px), float(py), 0.0)
    polydata = vtk.vtkPolyData()
    polydata.SetPoints(vtk_points)
    for kind, cells in (("polys", polys), ("lines", lines)):
        array = vtk.vtkCellArray()
        for cell in cells:
            array.InsertNextCell(len(cell))
            for index in cell:
                array.InsertCellPoint(int(index))
        (polydata.SetPolys if kind == "polys" else polydata.SetLines)(array)
    mapper = vtk.vtkPolyDataMapper2D()
    mapper.SetInputData(polydata)
    actor = vtk.vtkActor2D()
    actor.SetMapper(mapper)
    actor.GetProperty().SetColor(*_rgb(colour))
    actor.GetProperty().SetLineWidth(width)
    actor.GetProperty().SetOpacity(opacity)
    return actor


def _rgb(colour):
    import matplotlib.colors

    return matplotlib.colors.to_rgb(colour)


def filled(plotter, ring: np.ndarray, colour, outline="#333333", width=1.0, opacity=1.0):
    """A filled convex-or-star polygon (a fan from its centre) with an outline, 2D."""
    centre = ring.mean(axis=0)
    points = np.vstack([ring, centre])
    k = len(ring)
    fan = [(i, (i + 1) % k, k) for i in range(k)]
    plotter.add_actor(_actor_2d(points, polys=fan, colour=colour, opacity=opacity), reset_camera=False)
    loop = list(range(k)) + [0]
    plotter.add_actor(_actor_2d(ring, lines=[loop], colour=outline, width=width), reset_camera=False)


@dataclass
class Legend:
    """Entries (label, colour, symbol) drawn as a panel of 2D symbols and dark text, so light
    colours stay readable on white."""

    entries: list = field(default_factory=list)

    def add(self, label: str, colour, symbol: str = "rectangle") -> None:
        if all(entry[0] != label for entry in self.entries):
            self.entries.append((label, colour, symbol))

    def height(self, font_size: int) -> float:
        return (len(self.entries) + 0.5) * font_size * 2.6

    def draw(self, plotter, left: float, top: float, width: float, font_size: int) -> None:
        """left, top, width in pixels of the panel (display coordinates, y up)."""
        if not self.entries:
            return
        row = font_size * 2.6
        bottom = top - self.height(font_size)
        panel = np.array([[left, bottom], [left + width, bottom], [left + width, top], [left, top]])
        filled(plotter, panel, "#ffffff", outline="#9a9a9a", opacity=0.92)
        r = font_size * 0.7
        for i, (label, colour, symbol) in enumerate(self.entries):
            y = top - (i + 0.8) * row
            x = left + font_size * 2.0
            for ring, closed in symbol_outline(symbol, x, y, r):
                if closed and symbol not in HOLLOW_SYMBOLS:
                    filled(plotter, ring, colour)
                elif not closed:
                    plotter.add_actor(_actor_2d(ring, lines=[[0, 1]], colour=_darker(colour),
                                                width=max(2.0, font_size / 5)), reset_camera=False)
            if symbol in HOLLOW_SYMBOLS:
                _draw_ring(plotter, x, y, r, colour)
            plotter.add_text(label, position=(x + font_size * 2.2, y - font_size * 0.75),
                             font_size=font_size, color=style.TEXT)


def _draw_ring(plotter, x, y, r, colour):
    angle = np.linspace(0.0, 2.0 * np.pi, 33)
    outer = np.column_stack([x + r * np.cos(angle), y + r * np.sin(angle)])
    inner = np.column_stack([x + 0.55 * r * np.cos(angle), y + 0.55 * r * np.sin(angle)])
    points = np.vstack([outer, inner])
    n = len(angle)
    quads = [(i, i + 1, n + i + 1, n + i) for i in range(n - 1)]
    plotter.add_actor(_actor_2d(points, polys=quads, colour=colour), reset_camera=False)
    plotter.add_actor(_actor_2d(outer, lines=[list(range(n))], colour="#333333"), reset_camera=False)


def _darker(colour):
    """Line symbols in near-white (field lines over the map) get a grey stroke in the legend."""
    r, g, b = _rgb(colour)
    return (r * 0.6, g * 0.6, b * 0.6) if min(r, g, b) > 0.8 else (r, g, b)


# -- the |B| colour scale ---------------------------------------------------------------------

@dataclass
class ColourScale:
    """|B| in mT, log or linear, shared by every layer coloured by the field."""

    low_mT: float
    high_mT: float
    log: bool = True
    cmap: str = style.FIELD_MAP
    line_width: float = 2.0
    used: bool = False

    @property
    def clim(self):
        return (self.low_mT, self.high_mT)

    values_as_log10: bool = False  # for viewers that cannot draw a log bar (vtk.js)

    def mesh_kwargs(self) -> dict:
        if self.values_as_log10:
            return dict(cmap=self.cmap, clim=tuple(np.log10(self.clim)), log_scale=False)
        return dict(cmap=self.cmap, clim=self.clim, log_scale=self.log)

    def scalars(self, mesh, name: str = "B_abs_mT") -> str:
        """The array to colour by: |B| in mT, or its log10 when values_as_log10."""
        if not self.values_as_log10:
            return name
        mesh.point_data["log10_B_mT"] = np.log10(np.maximum(np.asarray(mesh[name]), 1e-12))
        return "log10_B_mT"

    def colour_of(self, value_mT: float):
        """The colour of a value, as the map draws it (RGB, 0..1)."""
        import matplotlib

        colormap = matplotlib.colormaps[self.cmap]
        low, high = self.clim
        if self.log:
            t = (np.log10(max(value_mT, low)) - np.log10(low)) / (np.log10(high) - np.log10(low))
        else:
            t = (value_mT - low) / (high - low)
        return tuple(float(c) for c in colormap(float(np.clip(t, 0.0, 1.0)))[:3])

    def draw_bar(self, plotter, position, size, font_size, units=None) -> None:
        """The colour bar, labelled in the reader's field unit (`units`; default mT): the bar
        has its own lookup table, so only its range is converted, not the coloured meshes."""
        import pyvista as pv

        factor = 1.0 if units is None else float(units.B(1e-3))  # display units per mT
        label = "mT" if units is None else units.field_label
        clim = tuple(np.log10(self.clim)) if self.values_as_log10 else self.clim
        if factor != 1.0:
            clim = (tuple(np.asarray(clim) + np.log10(factor)) if self.values_as_log10
                    else tuple(np.asarray(clim) * factor))
        table = pv.LookupTable(cmap=self.cmap, scalar_range=clim,
                               log_scale=self.log and not self.values_as_log10)
        mapper = pv.DataSetMapper(pv.PolyData(np.zeros((1, 3))))
        mapper.lookup_table = table
        mapper.scalar_range = clim
        scale = "log" if self.log else "linear"
        if self.values_as_log10:
            scale = "log10"
        plotter.add_scalar_bar(
            title=f"B in {label}, {scale}", mapper=mapper, vertical=True, position_x=position[0],
            position_y=position[1], width=size[0], height=size[1], color=style.TEXT,
            title_font_size=int(2 * font_size), label_font_size=int(1.8 * font_size), n_labels=5,
            fmt=_bar_format(self.clim, factor),
            bold=False, shadow=False, fill=False)


def _bar_format(clim_mT, factor: float) -> str:
    """Three digits; in gauss, thousands written out (2540, not 2.54e+03)."""
    low, high = (v * factor for v in clim_mT)
    return "%.0f" if factor != 1.0 and high >= 1e3 and low >= 1.0 else "%.3g"


# -- scale bar ----------------------------------------------------------------------------------

def nice_length(target: float) -> float:
    """The 1-2-5 length at or below target."""
    exponent = np.floor(np.log10(target))
    for mantissa in (5.0, 2.0, 1.0):
        if mantissa * 10**exponent <= target:
            return float(mantissa * 10**exponent)
    return float(10**exponent)


def draw_scale_bar(plotter, world_per_pixel: float, unit: str, origin_px, font_size,
                   target_px: float, factor: float = 1.0) -> float:
    """A bar of a round length in `unit`, valid because the projection is parallel; `factor`
    is `unit`s per scene unit (the reader's unit, when it is not the scene's). Returns its
    length in `unit`."""
    length = nice_length(target_px * world_per_pixel * factor)
    pixels = length / (world_per_pixel * factor)
    x0, y0 = origin_px
    tick = max(4.0, font_size * 0.4)
    ends = np.array([(x0, y0), (x0 + pixels, y0), (x0, y0 - tick), (x0, y0 + tick),
                     (x0 + pixels, y0 - tick), (x0 + pixels, y0 + tick)])
    plotter.add_actor(_actor_2d(ends, lines=[(0, 1), (2, 3), (4, 5)], colour="#1a1a1a",
                                width=max(2.0, font_size / 6.0)), reset_camera=False)
    text = f"{length:g} {unit}"
    plotter.add_text(text, position=(x0 + pixels + tick * 2, y0 - font_size * 0.55),
                     font_size=font_size, color=style.TEXT)
    return length


def title_lines(scene, section, ctx=None) -> tuple[str, str]:
    """The title (the scene's) and one line saying what probe, constraint and section it shows
    (with a view context, lengths in the reader's unit)."""
    probe = scene.probe
    if ctx is None:
        diameter, unit = probe.diameter / scene.unit_scale, scene.units
    else:
        diameter, unit = ctx.shown.L(probe.diameter), ctx.shown.length_label
    parts = [f"{probe_words(scene).noun} Ø {diameter:.3g} {unit}"]
    constraint = scene.constraint
    if constraint.kind == "line":
        parts.append(f"on a line along {_direction_name(constraint.direction)}")
    elif constraint.kind == "plane":
        parts.append(f"on a plane normal to {_direction_name(constraint.direction)}")
    else:
        parts.append("free")
    parts.append("gravity on" if float((scene.gravity**2).sum()) > 0 else "no gravity")
    if section is not None:
        parts.append(f"section {section.name} {scene.units}" if ctx is None
                     else f"section {ctx.section_words()}")
    return scene.title or "trapscape", " · ".join(parts)


def _direction_name(direction) -> str:
    direction = np.asarray(direction, float)
    axis = int(np.argmax(np.abs(direction)))
    if abs(direction[axis]) > 0.999:
        return "xyz"[axis]
    return "(" + ", ".join(f"{v:.2f}" for v in direction) + ")"
