"""The offline HTML view colours the section as the PNG does: a top view of the section alone,
exported to HTML, screenshot in headless Chromium, and compared pixel by pixel with the PNG at
the same places on the section (the section is an axis-aligned rectangle in a top view, so its
bounding box in each image maps one onto the other). The page is screenshot inside an iframe
of a fixed size: headless Chromium lays a page out shorter than the window it captures."""
from __future__ import annotations

import shutil
import subprocess
import tempfile

import numpy as np
import pytest

from trapscape.viewers.render import prefer_egl

prefer_egl()

from repo_paths import SAMPLES  # noqa: E402

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
VIEW = (800, 600)  # the iframe the page is shown in, pixels
SIDEBAR_PX = 22 * 13  # viewers.export.SIDEBAR_EM at the panel's 13 px


def _html_extra_missing() -> bool:
    try:
        import trame_pyvista  # noqa: F401
    except ImportError:
        return True
    return False


def screenshot_page(page, shot, view=VIEW):
    """Screenshot `page` shown in a fixed-size iframe (RGB array)."""
    from PIL import Image

    wrapper = page.with_name("frame.html")
    wrapper.write_text(f'<html><body style="margin:0"><iframe src="{page.name}" style="position:'
                       f'absolute;left:0;top:0;width:{view[0]}px;height:{view[1]}px;border:0">'
                       "</iframe></body></html>", encoding="utf-8")
    with tempfile.TemporaryDirectory() as profile:
        subprocess.run(
            [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
             "--no-first-run", "--disable-background-networking", "--disable-component-update",
             "--disable-sync", "--allow-file-access-from-files", f"--user-data-dir={profile}",
             "--virtual-time-budget=10000", f"--window-size={view[0] + 100},{view[1] + 200}",
             f"--screenshot={shot}", wrapper.as_uri()],
            check=True, capture_output=True, timeout=180)
    return np.asarray(Image.open(shot).convert("RGB")).astype(int)[:view[1], :view[0]]


def content_box(image, background=255, tolerance=12):
    """(row0, row1, col0, col1) of the pixels that are not background."""
    drawn = np.any(np.abs(image - background) > tolerance, axis=-1)
    rows, cols = np.flatnonzero(drawn.any(axis=1)), np.flatnonzero(drawn.any(axis=0))
    return rows[0], rows[-1], cols[0], cols[-1]


def sample(image, box, fractions, radius=2):
    """Median colour of a small square at each (fx, fy) of the box (fy down)."""
    r0, r1, c0, c1 = box
    result = []
    for fx, fy in fractions:
        r = int(round(r0 + fy * (r1 - r0)))
        c = int(round(c0 + fx * (c1 - c0)))
        patch = image[r - radius:r + radius + 1, c - radius:c + radius + 1].reshape(-1, 3)
        result.append(np.median(patch, axis=0))
    return np.array(result)


@pytest.mark.skipif(CHROMIUM is None, reason="Debian's chromium is not installed "
                    "(apt-get install chromium; .ci/run installs it)")
@pytest.mark.skipif(_html_extra_missing(), reason="the html extra is not installed "
                    "(pip install -e '.[html]')")
def test_html_section_colours_match_the_png(tmp_path):
    from PIL import Image

    from trapscape.scene.loader import load_scene
    from trapscape.viewers.export import export
    from trapscape.viewers.layers.context import ViewContext
    from trapscape.viewers.render import RenderOptions, render_png

    scene = load_scene(str(SAMPLES / "level_gauge.toml"))
    ctx = ViewContext.of(scene, traps=False, grid_resolution=20, section_resolution=120)
    options = RenderOptions(layers=("section",), size=(600, 450), camera="front",
                            section_axis=1, section_level=0.0, title="", legend=False,
                            scale_bar=False)
    png = tmp_path / "view.png"
    render_png(ctx, options, str(png))
    picture = np.asarray(Image.open(png).convert("RGB")).astype(int)
    page = tmp_path / "view.html"
    export(ctx, str(page), options=options)
    web = screenshot_page(page, tmp_path / "shot.png")[:, SIDEBAR_PX + 2:]

    box_png, box_web = content_box(picture), content_box(web)
    # framed to fill the view: the section spans most of the width or height of the page's view
    height, width = web.shape[:2]
    assert max((box_web[1] - box_web[0]) / height, (box_web[3] - box_web[2]) / width) > 0.8
    grid = [(fx, fy) for fx in np.linspace(0.06, 0.94, 12) for fy in np.linspace(0.06, 0.94, 9)]
    a, b = sample(picture, box_png, grid), sample(web, box_web, grid)
    difference = np.abs(a - b).max(axis=1)
    # tolerance chosen before looking: 40 of 255 per channel (shading and resampling), at 80 %
    # of the places (a white field line may cross a place in one image and not the other)
    assert np.mean(difference <= 40) >= 0.8, (np.median(difference), a[:5], b[:5])
