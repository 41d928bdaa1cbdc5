"""The plots of `trapscape field`: the field along a line, and |B| on a section with the magnets
outlined, in the reader's display units (default: the scene's length unit and mT). They draw
what the analysis computed (physics.analysis.run.FieldValues)."""
from __future__ import annotations

import numpy as np

from trapscape.viewers.atomic import save_figure

DECADES_SHOWN = 3  # the colour scale spans three decades below the strongest field in air
INSIDE_GREY = "#b8b8b8"
TOP_PERCENTILE = 99.8  # of the air samples: the colour scale's top


def _pyplot():
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    return plt


def _point_text(point, unit, style="g") -> str:
    return "(" + ", ".join(f"{v:{style}}" for v in np.asarray(point, float) + 0.0) + f") {unit}"


def _style(scene, units) -> str:
    """A coordinate the user typed reads as typed; converted, to four digits (0.7874 in)."""
    return "g" if units.length == scene.units else ".4g"


def plot_line(path, scene, points, values, layout, units=None) -> None:
    """The line figure written to `path` (PNG, PDF or SVG by its suffix)."""
    _save(line_figure(scene, values, layout, units), path)


def plot_section(path, scene, points, values, layout, units=None) -> None:
    """The section figure written to `path` (PNG, PDF or SVG by its suffix)."""
    _save(section_figure(scene, points, values, layout, units), path)


def _units(scene, units):
    from trapscape.physics.analysis.display_units import scene_units

    return units or scene_units(scene)


def _save(figure, path) -> None:
    try:
        save_figure(figure, path)
    finally:
        _pyplot().close(figure)


def line_figure(scene, values, layout, units=None):
    """B components and |B| along the line (display units), stretches inside a magnet shaded;
    `layout` holds the distances and ends in the scene's unit."""
    plt = _pyplot()
    units = _units(scene, units)
    _, distance, start, stop = layout
    distance, start, stop = (units.L_from(np.asarray(v, float), scene.units)
                             for v in (distance, start, stop))
    B_shown = units.B(values.B)
    unit = units.length_label
    figure, axes = plt.subplots(figsize=(7.5, 4.8), dpi=120)
    for k, name in enumerate("xyz"):
        axes.plot(distance, B_shown[:, k], label=f"B{name}", lw=1)
    axes.plot(distance, np.linalg.norm(B_shown, axis=1), "k", lw=2, label="|B|")
    _shade_inside(axes, distance, values.inside_magnet >= 0)
    axes.set_xlabel(f"distance from the line's start ({unit})")
    axes.set_ylabel(f"B ({units.field_label})")
    style = _style(scene, units)
    axes.set_title(f"{scene.title}\nB along the line {_point_text(start, unit, style)} to "
                   f"{_point_text(stop, unit, style)}", fontsize=10)
    axes.legend(fontsize=8)
    axes.grid(alpha=0.3)
    return figure


def _shade_inside(axes, distance, inside) -> None:
    """Grey bands where the line runs through a magnet (B there is the field in the material)."""
    edges = np.flatnonzero(np.diff(np.r_[0, inside.astype(int), 0]))
    for k, (first, end) in enumerate(zip(edges[::2], edges[1::2])):
        axes.axvspan(distance[first], distance[end - 1], color=INSIDE_GREY, alpha=0.5, lw=0,
                     label="inside a magnet" if k == 0 else None)


def section_figure(scene, points, values, layout, units=None):
    """|B| on the section (display units), on a log scale over the air; magnets grey and
    outlined."""
    from matplotlib.colors import ListedColormap, LogNorm
    from matplotlib.ticker import FuncFormatter, NullLocator
    from mpl_toolkits.axes_grid1 import make_axes_locatable

    plt = _pyplot()
    units = _units(scene, units)
    _, others, shape, level = layout
    unit = units.length_label
    u = units.L(points[:, others[0]].reshape(shape))
    v = units.L(points[:, others[1]].reshape(shape))
    inside = (values.inside_magnet >= 0).reshape(shape)
    magnitude = units.B(np.linalg.norm(values.B, axis=1)).reshape(shape)
    air = np.ma.masked_where(inside, magnitude)
    norm = _log_norm(magnitude[~inside], LogNorm)
    figure, axes = plt.subplots(figsize=(7.5, 6), dpi=120)
    image = axes.pcolormesh(u, v, np.ma.maximum(air, norm.vmin), cmap="cividis", norm=norm,
                            shading="gouraud", rasterized=True)
    if inside.any():
        axes.pcolormesh(u, v, np.ma.masked_where(~inside, np.ones(shape)),
                        cmap=ListedColormap([INSIDE_GREY]), shading="nearest")
        axes.contour(u, v, inside.astype(float), levels=[0.5], colors="k", linewidths=1.2)
    axes.set_aspect("equal")
    axes.set_xlabel(f"{'xyz'[others[0]]} ({unit})")
    axes.set_ylabel(f"{'xyz'[others[1]]} ({unit})")
    axis = "xyz"[({0, 1, 2} - set(others)).pop()]
    axes.set_title(f"{scene.title}\n|B| on the section {axis} = "
                   f"{units.L(level):{_style(scene, units)}} {unit}"
                   + (" (magnets grey, outlined)" if inside.any() else ""), fontsize=10)
    bar_axes = make_axes_locatable(axes).append_axes("right", size="4%", pad=0.12)
    bar = figure.colorbar(image, cax=bar_axes, extend="min")  # the arrow: weaker fields
    bar.set_ticks(round_ticks(norm.vmin, norm.vmax))
    bar.ax.yaxis.set_minor_locator(NullLocator())
    bar.ax.yaxis.set_major_formatter(FuncFormatter(lambda value, _: f"{value:g}"))
    bar.set_label(f"|B| in air ({units.field_label}, log scale)")
    return figure


def round_ticks(low, high) -> list:
    """The values 1, 2 and 5 times a power of ten between low and high."""
    decades = range(int(np.floor(np.log10(low))), int(np.ceil(np.log10(high))) + 1)
    values = [m * 10.0 ** e for e in decades for m in (1, 2, 5)]
    return [float(f"{v:.12g}") for v in values if low <= v <= high]


def _log_norm(air, LogNorm):
    """Three decades up to the strongest field in air (or 1 display unit when there is none),
    leaving out the few samples that land on a magnet's edge, where the field grows without
    bound."""
    positive = air[air > 0]
    top = float(np.percentile(positive, TOP_PERCENTILE)) if len(positive) else 1.0
    return LogNorm(vmin=top * 10.0 ** -DECADES_SHOWN, vmax=top, clip=False)
