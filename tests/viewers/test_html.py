"""The offline HTML view loads in headless Chromium (no server, no network) and draws a
non-blank canvas."""
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


def _html_extra_missing() -> bool:
    try:
        import trame_pyvista  # noqa: F401
    except ImportError:
        return True
    return False


@pytest.mark.skipif(CHROMIUM is None, reason="Debian's chromium is not installed "
                    "(apt-get install chromium; .ci/run installs it)")
@pytest.mark.skipif(_html_extra_missing(), reason="the html extra is not installed "
                    "(pip install -e '.[html]': trame, trame-vtk, trame-vuetify, trame-pyvista)")
def test_html_view_draws_in_headless_chromium(tmp_path):
    from PIL import Image

    from trapscape.scene.loader import load_scene
    from trapscape.viewers.export import export
    from trapscape.viewers.layers import default_layers
    from trapscape.viewers.layers.context import ViewContext
    from trapscape.viewers.render import RenderOptions

    scene = load_scene(str(SAMPLES / "bead_chip.toml"))
    ctx = ViewContext.of(scene, grid_resolution=20, section_resolution=60)
    page = tmp_path / "view.html"
    export(ctx, str(page), options=RenderOptions(layers=default_layers(scene), size=(600, 450)))
    text = page.read_text(encoding="utf-8")
    assert "<script" in text and "http://" not in text.split("<script")[0]  # nothing fetched up front
    shot = tmp_path / "shot.png"
    with tempfile.TemporaryDirectory() as profile:
        subprocess.run(
            [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
             "--no-first-run", "--disable-background-networking", "--disable-component-update",
             "--disable-sync", f"--user-data-dir={profile}", "--virtual-time-budget=8000",
             "--window-size=800,600", f"--screenshot={shot}", page.as_uri()],
            check=True, capture_output=True, timeout=120)
    image = np.asarray(Image.open(shot).convert("RGB")).astype(int)
    # right of the text column (22em of 13px) is the 3D canvas alone
    canvas = image[:, 22 * 13 + 10:]
    drawn = np.any(np.abs(canvas - 255) > 20, axis=-1)
    assert drawn.mean() > 0.01, "the 3D view drew nothing"
    # the field map's cividis colours are there: blue-dominant dark pixels of the low end
    bluish = (canvas[..., 2] > canvas[..., 0] + 30) & (canvas[..., 2] > 60)
    assert bluish.sum() > 100
