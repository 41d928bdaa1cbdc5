"""`trapscape report` below the command: the content (physics.analysis.report_content), the
pictures and plots, then report.html (self-contained) and report.pdf from the same page. The PDF
is typeset by WeasyPrint (HTML and CSS to PDF, no browser)."""
from __future__ import annotations

from pathlib import Path

from trapscape.physics.analysis.report_content import report_content
from trapscape.scene.errors import SceneError
from trapscape.viewers.atomic import atomic_path, replaced_atomically
from trapscape.viewers.layers.context import ViewContext
from trapscape.viewers.report import pictures as views
from trapscape.viewers.report.page import report_page
from trapscape.viewers.report.plots import draw_profile, draw_pull


def weasyprint_html():
    """WeasyPrint's HTML class, or a SceneError saying how to install it."""
    try:
        from weasyprint import HTML
    except ImportError:
        raise SceneError("report: the PDF needs WeasyPrint; install the report extra with "
                         "pip install 'trapscape[report]'.") from None
    except OSError as error:  # its system libraries (Pango) are missing
        raise SceneError(f"report: WeasyPrint cannot load its system libraries ({error}); "
                         "install Pango (apt-get install libpango-1.0-0 libpangoft2-1.0-0).") \
            from None
    return HTML


def write_report(analysis, folder, units, sizes=views.PictureSizes(), interactive=True,
                 grid_resolution=64, progress=None, overview_name="overview.png") -> dict:
    """Every file of the report in `folder`.

    Parameters
    ----------
    analysis : trapscape.physics.analysis.run.Analysis
    folder : str or os.PathLike
        Made if missing.
    units : trapscape.physics.analysis.display_units.DisplayUnits
    sizes : viewers.report.pictures.PictureSizes
    interactive : bool
        Put the interactive 3D view in the HTML.
    grid_resolution : int
        Points on the longest side of the renders' 3D field grid.
    progress : callable, optional
        ``progress(done, total, stage)`` during the trap search.
    overview_name : str
        The overview picture's file name (`demo` calls it view.png).

    Returns
    -------
    dict of str to pathlib.Path
        report.html, report.pdf and the pictures, by name.
    """
    HTML = weasyprint_html()  # before any work: a missing library is said at once
    out = Path(folder)
    out.mkdir(parents=True, exist_ok=True)
    content = report_content(analysis, units, progress=progress)
    ctx = ViewContext.of(analysis, grid_resolution=grid_resolution, display=units)
    pictures = {"overview": out / overview_name, "section": out / "section.png",
                "polarity": out / "polarity.png"}
    views.overview(ctx, str(pictures["overview"]), sizes.render)
    views.section_view(ctx, str(pictures["section"]), sizes.render)
    views.polarity(ctx, str(pictures["polarity"]), sizes.polarity, units)
    if content.profile is not None:
        pictures["profile"] = Path(draw_profile(content.profile, units, str(out / "profile.png"),
                                                sizes.plot))
    if content.pull is not None:
        pictures["pull"] = Path(draw_pull(content.pull, units, str(out / "pull.png"),
                                          (sizes.plot[0], sizes.plot[1] * 3 // 4)))
    page_3d = views.interactive_page(ctx, sizes.interactive, out) if interactive else None
    written = dict(pictures)
    written["report.html"] = out / "report.html"
    with replaced_atomically(written["report.html"]) as stream:
        stream.write(report_page(content, pictures, page_3d))
    written["report.pdf"] = out / "report.pdf"
    with atomic_path(written["report.pdf"]) as temporary:
        HTML(string=report_page(content, pictures), base_url=str(out)).write_pdf(temporary)
    return written
