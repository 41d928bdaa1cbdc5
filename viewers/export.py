"""Open-format exports of a scene view, all in the scene's coordinates and length unit:

- .vti: the sampled field and what follows from it (B in T, |B| in T, the energy density
  B^2/2mu0 in J/m^3, the probe's energy in J where it fits), with the unit in the field data;
- .vtp: the geometry of the chosen layers in one polydata, each cell tagged with its layer and
  object (names in the field data);
- .stl: the same geometry, one file per layer, for CAD (capture volumes, magnets, sheets);
- .html: one self-contained file with the interactive 3D view, for a browser with no server.
"""
from __future__ import annotations

import contextlib
from pathlib import Path

import numpy as np

from trapscape.physics.analysis.results import tool_version
from trapscape.physics.analysis.views import probe_energy_and_force
from trapscape.scene.errors import SceneError
from trapscape.viewers.atomic import atomic_path
from trapscape.viewers.layers import layer_module
from trapscape.viewers.layers.annotations import title_lines
from trapscape.viewers.layers.markers import table_rows
from trapscape.viewers.render import RenderOptions, build_picture, colour_scale, prepare

GEOMETRY_DEFAULTS = ("magnets", "markers", "wells", "isosurfaces", "hover")
MAX_GRID_POINTS = 2_000_000  # beyond this the .vti grid is coarsened (said on stderr)
FORMATS = (".vti", ".vtp", ".stl", ".html")
SIDEBAR_EM = 22  # width of the HTML page's text column
FILL = 0.92  # share of the view's width or height the content fills on load
# once vtk.js has built the scene (global.renderWindow), frame it as the picture is framed: a
# parallel view along the picture's direction, scaled to the viewport's own shape (vtk.js's
# own reset frames a sphere round everything, which fills about a third of the view)
FRAME_SCRIPT = """<script>
(function () {
  const frame = FRAME;
  function fit() {
    const win = window.global && window.global.renderWindow;
    if (!win) return false;
    const drawn = win.getRenderers().filter(function (r) { return r.getActors().length > 0; });
    if (!drawn.length) return false;
    const renderer = drawn[0];
    const size = win.getViews()[0].getSize();  // the canvas as drawn
    if (!size[0] || !size[1]) return false;
    const camera = renderer.getActiveCamera();
    const f = frame.focal, d = frame.direction;
    camera.setParallelProjection(true);
    camera.setFocalPoint(f[0], f[1], f[2]);
    camera.setPosition(f[0] + d[0] * frame.distance, f[1] + d[1] * frame.distance,
                       f[2] + d[2] * frame.distance);
    camera.setViewUp(frame.up[0], frame.up[1], frame.up[2]);
    // the extent across and up the view of every actor's bounding box
    const right = [d[1] * frame.up[2] - d[2] * frame.up[1], d[2] * frame.up[0] - d[0] * frame.up[2],
                   d[0] * frame.up[1] - d[1] * frame.up[0]].map(function (c) { return -c; });
    let u0 = Infinity, u1 = -Infinity, v0 = Infinity, v1 = -Infinity;
    drawn.forEach(function (r) {
      r.getActors().forEach(function (actor) {
        if (!actor.getVisibility()) return;
        const b = actor.getBounds();
        if (!b || !isFinite(b[0]) || b[0] > b[1]) return;
        for (let i = 0; i < 8; i++) {
          const p = [b[i & 1 ? 1 : 0] - f[0], b[i & 2 ? 3 : 2] - f[1], b[i & 4 ? 5 : 4] - f[2]];
          const u = p[0] * right[0] + p[1] * right[1] + p[2] * right[2];
          const v = p[0] * frame.up[0] + p[1] * frame.up[1] + p[2] * frame.up[2];
          u0 = Math.min(u0, u); u1 = Math.max(u1, u); v0 = Math.min(v0, v); v1 = Math.max(v1, v);
        }
      });
    });
    if (!isFinite(u0)) return false;
    const centre = [f[0] + right[0] * (u0 + u1) / 2 + frame.up[0] * (v0 + v1) / 2,
                    f[1] + right[1] * (u0 + u1) / 2 + frame.up[1] * (v0 + v1) / 2,
                    f[2] + right[2] * (u0 + u1) / 2 + frame.up[2] * (v0 + v1) / 2];
    camera.setFocalPoint(centre[0], centre[1], centre[2]);
    camera.setPosition(centre[0] + d[0] * frame.distance, centre[1] + d[1] * frame.distance,
                       centre[2] + d[2] * frame.distance);
    const aspect = size[0] / size[1];
    camera.setParallelScale(Math.max((v1 - v0) / 2, (u1 - u0) / (2 * aspect)) / FILL_SHARE);
    drawn.forEach(function (r) { r.resetCameraClippingRange(); });
    win.render();
    return true;
  }
  // framed again whenever the view changes shape or the scene's own camera state arrives
  // late, until the reader first turns or zooms the view
  let framed = "", scale = null, touched = false;
  ["mousedown", "wheel", "touchstart", "keydown"].forEach(function (name) {
    window.addEventListener(name, function () { touched = true; }, true);
  });
  setInterval(function () {
    const win = window.global && window.global.renderWindow;
    if (touched || !win || !win.getViews().length) return;
    const shape = String(win.getViews()[0].getSize());
    const drawn = win.getRenderers().filter(function (r) { return r.getActors().length > 0; });
    const now = drawn.length ? drawn[0].getActiveCamera().getParallelScale() : null;
    if ((shape !== framed || now !== scale) && fit()) {
      framed = shape;
      scale = drawn[0].getActiveCamera().getParallelScale();
    }
  }, 100);
})();
</script>
""".replace("FILL_SHARE", str(FILL))


def check_writable(path: str) -> None:
    """A SceneError, not a traceback, when the output's folder is missing."""
    folder = Path(path).resolve().parent
    if not folder.is_dir():
        raise SceneError(f"cannot write {path}: the folder {folder} does not exist; make it "
                         "first or choose another path.")


def format_of(path: str) -> str:
    suffix = Path(path).suffix.lower()
    if suffix not in FORMATS:
        raise SceneError(f"export: {path!r} has no known extension; write -o OUT.vti (field), "
                         "OUT.vtp or OUT.stl (geometry) or OUT.html (interactive view).")
    return suffix


def _stamp(ctx, dataset) -> None:
    dataset.field_data["length_unit"] = np.array([ctx.unit])
    dataset.field_data["metres_per_length_unit"] = np.array([ctx.scale])
    dataset.field_data["trapscape_version"] = np.array([tool_version()])
    dataset.field_data["scene_sha256"] = np.array([ctx.scene.digest or ""])


# -- field grid --------------------------------------------------------------------------------

def grid_spacing(ctx, spacing=None, resolution=None) -> tuple[float, str | None]:
    """(spacing in scene unit, note or None): the scene's search-box spacing unless told, made
    coarser when the grid would pass MAX_GRID_POINTS."""
    lower, upper = ctx.box_bounds
    extent = upper - lower
    if spacing is not None and spacing <= 0:
        raise SceneError("export: --spacing must be positive.")
    if resolution is not None and resolution < 2:
        raise SceneError("export: --resolution must be at least 2.")
    if spacing is None:
        spacing = (float(extent.max()) / (resolution - 1) if resolution
                   else float(ctx.to_units(ctx.scene.search_box.spacing)))
    count = np.prod(np.floor(extent / spacing) + 1)
    note = None
    if count > MAX_GRID_POINTS:
        coarser = spacing * (count / MAX_GRID_POINTS) ** (1.0 / 3.0)
        note = (f"export: {int(count)} grid points at spacing {spacing:g} {ctx.unit} is too many; "
                f"using {coarser:.4g} {ctx.unit} (set --spacing to choose).")
        spacing = coarser
    return spacing, note


def field_grid(ctx, spacing: float):
    """ImageData over the search box (scene unit) with the field and probe arrays."""
    lower, upper = ctx.box_bounds
    grid = ctx.sample_grid(lower, upper, spacing)
    del grid.point_data["B_abs_mT"]
    energy, _, ok = probe_energy_and_force(ctx.analysis, np.asarray(grid.points, float) * ctx.scale)
    grid.point_data["probe_energy_J"] = energy
    grid.point_data["probe_fits"] = ok.astype(np.uint8)
    _stamp(ctx, grid)
    return grid


def export_vti(ctx, path: str, spacing=None, resolution=None) -> list:
    step, note = grid_spacing(ctx, spacing, resolution)
    if note:
        ctx.note(note)
    grid = field_grid(ctx, step)
    with atomic_path(path) as temporary:
        grid.save(temporary)
    return [path]


# -- geometry ------------------------------------------------------------------------------------

def layer_geometry(ctx, layers) -> list:
    """[(layer, object name, PolyData)] of every chosen layer that has geometry."""
    pieces = []
    for layer in layers:
        for name, mesh in layer_module(layer).meshes(ctx).items():
            surface = mesh if hasattr(mesh, "faces") else mesh.extract_surface(algorithm=None)
            if surface.n_points:
                pieces.append((layer, name, surface))
    return pieces


def export_vtp(ctx, path: str, layers) -> list:
    import pyvista as pv

    pieces = layer_geometry(ctx, layers)
    if not pieces:
        raise SceneError(f"export: the layers {', '.join(layers)} have nothing to export here.")
    layer_names = list(dict.fromkeys(layer for layer, _, _ in pieces))
    tagged = []
    for object_id, (layer, name, mesh) in enumerate(pieces):
        polarity = np.asarray(mesh.cell_data["polarity"]) if "polarity" in mesh.cell_data else None
        piece = mesh.copy()
        piece.clear_data()
        piece.cell_data["layer_id"] = np.full(piece.n_cells, layer_names.index(layer), np.int32)
        piece.cell_data["object_id"] = np.full(piece.n_cells, object_id, np.int32)
        piece.cell_data["polarity"] = (polarity if polarity is not None
                                       else np.zeros(piece.n_cells, np.int8)).astype(np.int8)
        tagged.append(piece)
    merged = pv.merge(tagged, merge_points=False) if len(tagged) > 1 else tagged[0]
    merged = merged if isinstance(merged, pv.PolyData) else merged.extract_surface(algorithm=None)
    merged.field_data["layer_names"] = np.array(layer_names)
    merged.field_data["object_names"] = np.array([name for _, name, _ in pieces])
    _stamp(ctx, merged)
    with atomic_path(path) as temporary:
        merged.save(temporary)
    return [path]


def export_stl(ctx, path: str, layers) -> list:
    """One STL per layer (OUT-wells.stl, ...); a single layer goes to OUT.stl itself."""
    import pyvista as pv

    pieces = layer_geometry(ctx, layers)
    if not pieces:
        raise SceneError(f"export: the layers {', '.join(layers)} have nothing to export here.")
    by_layer = {}
    for layer, _, mesh in pieces:
        by_layer.setdefault(layer, []).append(mesh.triangulate())
    target = Path(path)
    written = []
    for layer, meshes in by_layer.items():
        out = target if len(by_layer) == 1 else target.with_name(f"{target.stem}-{layer}.stl")
        merged = pv.merge(meshes, merge_points=False) if len(meshes) > 1 else meshes[0]
        merged = merged.extract_surface(algorithm=None).triangulate()
        merged.clear_data()
        with atomic_path(out) as temporary:
            merged.save(temporary, binary=True)
        written.append(str(out))
    return written


# -- interactive view ----------------------------------------------------------------------------

def export_html(ctx, path: str, options) -> list:
    """The scene view as one HTML file (vtk.js inside, no server, nothing fetched)."""
    try:
        import trame_pyvista  # noqa: F401  (pyvista's HTML export goes through it)
    except ImportError:
        raise SceneError("export: an .html view needs the optional packages of the html extra; "
                         "install them with pip install 'trapscape[html]'.") from None
    picture = build_picture(ctx, options, off_screen=True, overlay=False, annotations="html")
    plotter, legend = picture.plotter, picture.legend
    with atomic_path(path) as temporary, _without_wasm_download():
        try:
            exporter = getattr(plotter, "trame", None)
            if exporter is not None and hasattr(exporter, "export_html"):
                exporter.export_html(temporary)
            else:
                plotter.export_html(temporary)
        finally:
            plotter.close()
        _add_page_text(ctx, temporary, options, legend, picture.layout.frame)
    return [path]


@contextlib.contextmanager
def _without_wasm_download():
    """The export's helper server skips trame's VTK WebAssembly module: our page is vtk.js
    only, and that module would fetch its bundle from the network on first use."""
    try:
        from trame.widgets import vtklocal
    except ImportError:
        yield
        return
    initialize = vtklocal.initialize
    vtklocal.initialize = lambda server: None
    try:
        yield
    finally:
        vtklocal.initialize = initialize


def _add_page_text(ctx, path: str, options, legend, frame=None) -> None:
    """Title, legend and equilibria as plain HTML beside the 3D view (vtk.js draws no text),
    and the camera framed to fill the view once the scene has loaded."""
    import html
    import json


    title, subtitle = title_lines(ctx.scene, ctx.section, ctx)
    title = options.title or title
    swatches = "".join(
        f'<div><span style="display:inline-block;width:1.6em;height:0.8em;margin-right:0.5em;'
        f'border:1px solid #444;background:{_css(colour)}"></span>{html.escape(label)}</div>'
        for label, colour, _ in legend.entries)
    rows = "".join(f"<div>{html.escape(row)}</div>" for row in table_rows(ctx)[:12])
    bar = _css_colour_bar(ctx, options) if ctx.section is not None else ""
    panel = (  # a sidebar beside the view, not over it
        f'<div style="position:absolute;top:0;left:0;bottom:0;width:{SIDEBAR_EM}em;overflow:auto;'
        'box-sizing:border-box;font:13px sans-serif;color:#1c1c1c;background:#f7f7f7;'
        'border-right:1px solid #ccc;padding:0.6em 0.8em"><div style="font-size:16px;font-weight:600">'
        f"{html.escape(title)}</div><div>{html.escape(subtitle)}</div>"
        f'<div style="margin-top:0.5em">{swatches}</div>{bar}'
        + (f'<div style="margin-top:0.5em"><b>Equilibria</b>{rows}</div>' if rows else "")
        + "<div style=\"margin-top:0.5em;color:#555\">drag to turn, wheel to zoom; lengths in "
        f"{html.escape(ctx.unit)}</div></div>")
    page = Path(path).read_text(encoding="utf-8")
    page = page.replace("<title>VTK.js | Example - OfflineLocalView</title>",
                        f"<title>{html.escape(title)} (trapscape)</title>", 1)
    # the viewer empties the element it draws in (the first `.content`, else <body>): give it
    # its own, so that the panel stays
    viewport = (f'<div class="content" style="position:absolute;top:0;left:{SIDEBAR_EM}em;right:0;'
                'bottom:0;font-size:13px"></div>')  # the panel's em: no gap between the two
    page = page.replace("<body>", "<body>" + viewport + panel, 1)
    if frame is not None:
        page = page.replace("</body>", FRAME_SCRIPT.replace("FRAME", json.dumps(frame)) + "</body>", 1)
    Path(path).write_text(page, encoding="utf-8")


def _css_colour_bar(ctx, options) -> str:
    """The |B| colour scale as a CSS gradient with five labelled stops (vtk.js's own bar shows
    a log scale's ticks wrongly)."""
    scale = colour_scale(ctx, options)
    low, high = scale.clim
    t = np.linspace(0.0, 1.0, 5)
    values = low * (high / low) ** t if scale.log else low + (high - low) * t
    stops = ", ".join(f"{_css(scale.colour_of(v))} {100 * f:.0f}%" for v, f in
                      zip(np.concatenate([values, [high]]), np.concatenate([t, [1.0]])))
    # the end labels are aligned inward, so the first and last are not cut by the panel's edges
    shifts = ["0%"] + ["-50%"] * (len(t) - 2) + ["-100%"]
    from trapscape.physics.analysis.display_units import plain_number

    shown = ctx.shown  # the stops are in mT; their labels in the reader's field unit
    labels = "".join(f'<span style="position:absolute;left:{100 * f:.0f}%;transform:translateX({shift})">'
                     f"{plain_number(shown.B(v * 1e-3)) if ctx.display else f'{v:.3g}'}</span>"
                     for v, f, shift in zip(values, t, shifts))
    kind = "log scale" if scale.log else "linear"
    return ('<div style="margin-top:0.6em">field strength B on the section, '
            f'{shown.field_label} (' + kind + ')'
            f'<div style="height:0.9em;width:18em;margin-top:0.2em;border:1px solid #444;'
            f'background:linear-gradient(to right, {stops})"></div>'
            f'<div style="position:relative;width:18em;height:1.2em;font-size:12px">{labels}</div></div>')


def _css(colour) -> str:
    import matplotlib.colors

    return matplotlib.colors.to_hex(colour)


def export(ctx, path: str, layers=None, options=None, spacing=None, resolution=None) -> list:
    """Write `path` in the format its extension names; returns the files written."""
    kind = format_of(path)
    check_writable(path)
    if kind == ".vti":
        return export_vti(ctx, path, spacing, resolution)
    layers = tuple(layers) if layers else GEOMETRY_DEFAULTS
    if kind != ".html":
        prepare(ctx, options or RenderOptions(layers=layers))
    if kind == ".vtp":
        return export_vtp(ctx, path, layers)
    if kind == ".stl":
        return export_stl(ctx, path, layers)
    return export_html(ctx, path, options)
