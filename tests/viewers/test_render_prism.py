"""A prism renders like any part: its drawn surface is its closed tessellation, its pole faces
are coloured, and the polarity map marks it."""
from __future__ import annotations

import numpy as np
import pytest

from trapscape.viewers.render import prefer_egl

prefer_egl()
pv = pytest.importorskip("pyvista")

from trapscape.scene.loader import load_scene_text  # noqa: E402
from trapscape.scene.measures import volume  # noqa: E402
from trapscape.viewers.layers import style  # noqa: E402
from trapscape.viewers.layers.context import ViewContext  # noqa: E402
from trapscape.viewers.layers.magnets import body_polydata, part_polydata  # noqa: E402
from trapscape.viewers.render import RenderOptions, build_picture  # noqa: E402

SCENE = '''units = "mm"
[[magnet]]
name = "el"
shape = "prism"
outline = [[0, 0], [12, 0], [12, 4], [4, 4], [4, 12], [0, 12]]
height = 5
rotation = [0, 0, 30]
north = "+z"
grade = "N42"
pattern = { kind = "linear", count = 2, step = [20, 0, 0], polarity = "alternate" }

[search_box]
margin = 8
resolution = 24
'''


@pytest.fixture(scope="module")
def ctx():
    return ViewContext.of(load_scene_text(SCENE), grid_resolution=16, section_resolution=40)


def test_drawn_surface_is_closed_and_holds_the_volume(ctx):
    magnet = ctx.scene.magnets[0]
    surface = body_polydata(magnet)
    assert surface.n_open_edges == 0
    assert surface.volume == pytest.approx(volume(magnet), rel=1e-12)  # (12*4 + 4*8) mm^2 x 5 mm


def test_its_top_face_is_a_pole_face(ctx):
    polarity = np.asarray(part_polydata(ctx, 0).cell_data["polarity"])
    assert (polarity == 1).any() and (polarity == -1).any() and (polarity == 0).any()


def test_it_renders_with_north_and_south_faces(ctx):
    plotter = build_picture(ctx, RenderOptions(layers=("magnets",), size=(320, 240),
                                               camera="top")).plotter
    try:
        image = plotter.screenshot(return_img=True)
    finally:
        plotter.close()
    colours = image[..., :3].astype(float)
    for colour, tolerance in ((style.NORTH_FACE, 40.0), (style.SOUTH_FACE, 25.0)):
        rgb = np.array([int(colour[i:i + 2], 16) for i in (1, 3, 5)], float)
        assert (np.linalg.norm(colours - rgb, axis=-1) < tolerance).sum() > 50, colour
