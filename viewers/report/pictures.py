"""The report's pictures, made with the views every command uses: the overview (the default
layers of `render`), a section through the main trap facing the camera with the parts in front
cut away, the polarity map, and the offline interactive 3D view of `export` (no network)."""
from __future__ import annotations

import os
import tempfile
from dataclasses import dataclass
from pathlib import Path

from trapscape.viewers.layers import default_layers
from trapscape.viewers.polarity import draw_polarity_map
from trapscape.viewers.render import RenderOptions, render_png


@dataclass(frozen=True)
class PictureSizes:
    """Pixels of each picture, and the 3D view's sampling (points on the longest side)."""

    render: tuple = (1400, 1050)
    polarity: tuple = (1200, 900)
    plot: tuple = (1000, 760)
    interactive: tuple = (900, 600)


SMALL = PictureSizes(render=(480, 360), polarity=(480, 360), plot=(640, 480),
                     interactive=(480, 360))  # tests and quick looks


def overview(ctx, path: str, size) -> str:
    """The default view of `render` (iso camera, the default layers)."""
    return render_png(ctx, RenderOptions(layers=default_layers(ctx.scene), size=size), path)


FACING = {0: "side", 1: "front", 2: "top"}  # the camera preset looking along each axis


def section_view(ctx, path: str, size) -> str:
    """The section through the main trap, seen face on, the parts before it cut away: the
    plane the overview chose (through the main trap), the camera looking along its normal."""
    axis = ctx.section.axis if ctx.section is not None else 1
    options = RenderOptions(layers=default_layers(ctx.scene), size=size, camera=FACING[axis],
                            section_axis=axis, cutaway=True,
                            title=f"{ctx.scene.title}: section through the main trap")
    return render_png(ctx, options, path)


def polarity(ctx, path: str, size, units=None) -> str:
    """The polarity map of `render --view polarity`, its axes in the report's units."""
    return draw_polarity_map(ctx, path, size=size, units=units)


def interactive_page(ctx, size, folder) -> str:
    """The offline interactive 3D view of `export` as page text (vtk.js inside, nothing
    fetched); made in a temporary file in `folder` and removed.

    Parameters
    ----------
    ctx : trapscape.viewers.layers.context.ViewContext
    size : tuple of int
        Its window in pixels.
    folder : str or os.PathLike
        Where the temporary file may go (the report's folder).

    Returns
    -------
    str
        The page's HTML.
    """
    from trapscape.viewers.export import export_html

    handle, name = tempfile.mkstemp(suffix=".html", prefix=".report-3d-", dir=folder)
    os.close(handle)
    try:
        export_html(ctx, name, RenderOptions(layers=default_layers(ctx.scene), size=size))
        return Path(name).read_text(encoding="utf-8")
    finally:
        Path(name).unlink(missing_ok=True)
