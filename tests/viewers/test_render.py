"""Off-screen renders: every sample draws, the known trap's marker shows where the camera
projects it, the legend is there, and the polarity map marks the north faces."""
from __future__ import annotations

import numpy as np
import pytest

from trapscape.viewers.render import prefer_egl

prefer_egl()

from repo_paths import SAMPLES, sample_scenes  # noqa: E402

from trapscape.scene.errors import SceneError  # noqa: E402
from trapscape.scene.loader import load_scene  # noqa: E402
from trapscape.viewers.layers import (  # noqa: E402
    default_layers,
    parse_layers,
    style,  # noqa: E402
)
from trapscape.viewers.layers.context import ViewContext  # noqa: E402
from trapscape.viewers.layers.screen import world_to_pixels  # noqa: E402
from trapscape.viewers.render import RenderOptions, build_picture  # noqa: E402

SMALL = (400, 300)


def rgb(hex_colour):
    return np.array([int(hex_colour[i:i + 2], 16) for i in (1, 3, 5)], float)


def screenshot(ctx, options):
    picture = build_picture(ctx, options)
    plotter = picture.plotter
    try:
        image = plotter.screenshot(return_img=True)
        return plotter, image
    finally:
        plotter.close()


def near_colour(image, colour, tolerance=40.0):
    """(H, W) bool: pixels within `tolerance` (RGB distance) of a colour."""
    return np.linalg.norm(image[..., :3].astype(float) - rgb(colour), axis=-1) < tolerance


def same_hue(image, colour, degrees=4.0):
    """(H, W) bool: saturated pixels of the colour's hue (shading changes lightness, not hue)."""
    import matplotlib.colors

    hsv = matplotlib.colors.rgb_to_hsv(image[..., :3] / 255.0)
    target = matplotlib.colors.rgb_to_hsv(rgb(colour) / 255.0)
    gap = np.abs(hsv[..., 0] - target[0])
    gap = np.minimum(gap, 1.0 - gap) * 360.0
    return (gap < degrees) & (hsv[..., 1] > 0.6) & (hsv[..., 2] > 0.25)


def not_blank(image) -> float:
    """Share of pixels that differ from the white background."""
    return float(np.mean(np.any(image[..., :3] < 235, axis=-1)))


@pytest.fixture(scope="module")
def gauge():
    scene = load_scene(str(SAMPLES / "level_gauge.toml"))
    return ViewContext.of(scene, grid_resolution=28, section_resolution=90)


@pytest.fixture(scope="module", params=["level_gauge", "bead_chip"])
def gauge_picture(request, gauge):
    if request.param == "level_gauge":
        ctx = gauge
    else:
        ctx = ViewContext.of(load_scene(str(SAMPLES / f"{request.param}.toml")), grid_resolution=24,
                          section_resolution=90)
    options = RenderOptions(layers=default_layers(ctx.scene), size=SMALL)
    picture = build_picture(ctx, options)
    plotter = picture.plotter
    try:
        image = plotter.screenshot(return_img=True)
        stable = [e for e in ctx.equilibria if e.kind == "stable"]
        projected = world_to_pixels(plotter, [e.position for e in stable])
        layout = picture.layout
    finally:
        plotter.close()
    return image, stable, projected, layout


def test_the_known_trap_marker_is_where_the_camera_projects_it(gauge_picture):
    image, stable, projected, layout = gauge_picture
    # the gauge's bead rests on its tube at the ring's height, the chip's beads in its wells
    # (the samples' comments)
    assert stable, "the sample must have a stable equilibrium to mark"
    marker = same_hue(image, style.MARKER["stable"])
    marker[:, int(layout.legend_left):] = False  # the legend's own swatch
    rows, cols = np.nonzero(marker)
    assert len(rows) > 10
    for column, row in projected:
        distance = np.hypot(cols - column, rows - row)
        assert np.sum(distance < 8) >= 5, "no stable-marker pixels at the projected position"
    # and the marker colour is not smeared over the picture: most of it sits at the markers
    near_any = np.min([np.hypot(cols - c, rows - r) for c, r in projected], axis=0) < 12
    assert near_any.mean() > 0.8


def test_picture_is_not_blank_and_has_a_legend(gauge_picture):
    image, _, _, layout = gauge_picture
    assert not_blank(image) > 0.1  # the same floor as every sample's render below
    height = image.shape[0]
    left = int(layout.legend_left)
    top = int(height - (layout.height - layout.title_band))  # display y is up, rows go down
    panel = image[top:top + int(0.3 * height), left:]
    assert near_colour(panel, style.NORTH_FACE, 30).sum() >= 4, "legend swatch for north faces"
    assert np.any(panel[..., :3].max(axis=-1) < 80), "legend text"


@pytest.mark.parametrize("sample", [p.stem for p in sample_scenes()])
def test_every_sample_renders_off_screen(sample):
    scene = load_scene(str(SAMPLES / f"{sample}.toml"))
    ctx = ViewContext.of(scene, grid_resolution=20, section_resolution=48)
    centre = ctx.box_bounds.mean(axis=0)
    options = RenderOptions(layers=("magnets", "plates", "section", "guide"), size=(320, 240),
                            section_axis=1, section_level=float(centre[1]))
    _, image = screenshot(ctx, options)
    assert image.shape[:2] == (240, 320)
    assert not_blank(image) > 0.1
    grey_or_pole = (near_colour(image, style.MAGNET_BODY, 60) | near_colour(image, style.NORTH_FACE, 40)
                    | near_colour(image, style.SOUTH_FACE, 25))
    assert grey_or_pole.sum() > 20, "the magnets are drawn"


def test_cameras_differ_and_transparent_background(gauge, tmp_path):
    from trapscape.viewers.render import render_png

    images = {}
    for camera in ("front", "top"):
        options = RenderOptions(layers=("magnets",), size=(200, 150), camera=camera, title="",
                                legend=False, scale_bar=False)
        images[camera] = screenshot(gauge, options)[1]
    assert np.abs(images["front"].astype(int) - images["top"].astype(int)).mean() > 1.0
    path = tmp_path / "clear.png"
    render_png(gauge, RenderOptions(layers=("magnets",), size=(200, 150), transparent=True), str(path))
    from PIL import Image

    alpha = np.asarray(Image.open(path).convert("RGBA"))[..., 3]
    assert alpha.min() == 0 and alpha.max() == 255


def test_layer_options():
    scene = load_scene(str(SAMPLES / "level_gauge.toml"))
    defaults = default_layers(scene)
    assert "magnets" in defaults and "section" in defaults and "markers" in defaults
    assert "fieldlines" not in defaults
    changed = parse_layers("+fieldlines,-section", scene)
    assert "fieldlines" in changed and "section" not in changed and "magnets" in changed
    assert parse_layers("magnets,markers", scene) == ("magnets", "markers")
    with pytest.raises(SceneError, match="fieldlines"):
        parse_layers("+feildlines", scene)


def test_polarity_map_marks_north_faces(tmp_path):
    from PIL import Image

    from trapscape.viewers.polarity import draw_polarity_map, part_mark

    scene = load_scene(str(SAMPLES / "graphite_stage.toml"))
    ctx = ViewContext.of(scene)
    path = draw_polarity_map(ctx, str(tmp_path / "polarity.png"), size=(500, 400))
    image = np.asarray(Image.open(path).convert("RGB"))
    ups = [part_mark(m)[1] for m in scene.magnets]
    # a checkerboard: as many parts show N as show S from above
    assert ups.count("N") == ups.count("S") == len(scene.magnets) // 2
    assert near_colour(image, style.NORTH_FACE, 20).sum() > 500
    assert near_colour(image, style.SOUTH_FACE, 12).sum() > 500
