"""report.html opens in headless Chromium from the file alone: its pictures (inline data URIs)
and its interactive 3D view (vtk.js in an iframe's srcdoc, nothing fetched) are drawn. Each is
shown alone (the other sections hidden by a style added to a copy of the page) and the
screenshot's pixels are checked."""
from __future__ import annotations

import shutil
import subprocess
import tempfile

import numpy as np
import pytest
from repo_paths import SAMPLES

from trapscape.viewers.render import prefer_egl

prefer_egl()

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")


def _missing(module) -> bool:
    try:
        __import__(module)
    except (ImportError, OSError):
        return True
    return False


def screenshot(page, shot, size="900,700"):
    with tempfile.TemporaryDirectory() as profile:
        subprocess.run(
            [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
             "--no-first-run", "--disable-background-networking", "--disable-component-update",
             "--disable-sync", f"--user-data-dir={profile}", "--virtual-time-budget=10000",
             f"--window-size={size}", f"--screenshot={shot}", page.as_uri()],
            check=True, capture_output=True, timeout=180)
    from PIL import Image

    return np.asarray(Image.open(shot).convert("RGB")).astype(int)


def only(page, section, tmp_path):
    """A copy of the report showing one section alone."""
    text = page.read_text(encoding="utf-8").replace(
        "</style>", f"section{{display:none}} #{section}{{display:block}}</style>", 1)
    copy = tmp_path / f"only-{section}.html"
    copy.write_text(text, encoding="utf-8")
    return copy


@pytest.mark.skipif(CHROMIUM is None, reason="Debian's chromium is not installed "
                    "(apt-get install chromium; .ci/run installs it)")
@pytest.mark.skipif(_missing("trame_pyvista"), reason="the html extra is not installed "
                    "(pip install -e '.[html]')")
@pytest.mark.skipif(_missing("weasyprint"), reason="the report extra is not installed "
                    "(pip install -e '.[report]')")
def test_report_html_draws_its_pictures_and_3d_view(tmp_path):
    from trapscape.physics.analysis.display_units import parse_units
    from trapscape.physics.analysis.run import load_analysis
    from trapscape.viewers.report.build import write_report
    from trapscape.viewers.report.pictures import SMALL

    analysis = load_analysis(SAMPLES / "bead_chip.toml")
    written = write_report(analysis, tmp_path / "report", parse_units(None), sizes=SMALL,
                           interactive=True, grid_resolution=16)
    page = written["report.html"]
    text = page.read_text(encoding="utf-8")
    assert "<iframe" in text and 'src="http' not in text  # nothing fetched up front

    pictures = screenshot(only(page, "pictures", tmp_path), tmp_path / "pictures.png")
    drawn = np.any(np.abs(pictures - 255) > 20, axis=-1)
    assert drawn.mean() > 0.05, "the pictures section drew (almost) nothing"
    # the renders' field map: cividis, blue-dominant dark pixels at its low end
    bluish = (pictures[..., 2] > pictures[..., 0] + 30) & (pictures[..., 2] > 60)
    assert bluish.sum() > 500, "the overview picture is not drawn"

    view = screenshot(only(page, "view3d", tmp_path), tmp_path / "view3d.png")
    # the iframe's canvas: right of the 3D page's text column (22em of 13px), below the heading
    canvas = view[120:560, 140 + 22 * 13 + 10:860]
    drawn = np.any(np.abs(canvas - 255) > 20, axis=-1)
    assert drawn.mean() > 0.01, "the 3D view drew nothing"
    bluish = (canvas[..., 2] > canvas[..., 0] + 30) & (canvas[..., 2] > 60)
    assert bluish.sum() > 100, "the 3D view's field map is not drawn"
