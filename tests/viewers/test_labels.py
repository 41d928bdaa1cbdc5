"""Marker labels never overlap each other, the title, the legend or any other text, and never
leave the picture: checked on the boxes of the text actors as the renderer placed them."""
from __future__ import annotations

import numpy as np
import pytest

from trapscape.viewers.render import prefer_egl

prefer_egl()

from repo_paths import SAMPLES  # noqa: E402


def _all_text_boxes(picture):
    from trapscape.viewers.layers.labels import text_boxes

    renderers = [picture.plotter.renderer] + ([picture.overlay] if picture.overlay else [])
    labels, others = [], []
    for renderer in renderers:
        labels += text_boxes(renderer, labels=True)
        others += text_boxes(renderer, labels=False)
    return labels, others


@pytest.mark.parametrize("sample, size", [("bead_chip", (900, 675)), ("level_gauge", (640, 480)),
                                          ("bead_chip", (400, 300))])
def test_labels_do_not_overlap_or_leave_the_picture(sample, size):
    from trapscape.scene.loader import load_scene
    from trapscape.viewers.layers import default_layers
    from trapscape.viewers.layers.context import ViewContext
    from trapscape.viewers.layers.labels import overlaps
    from trapscape.viewers.render import RenderOptions, build_picture

    scene = load_scene(str(SAMPLES / f"{sample}.toml"))
    ctx = ViewContext.of(scene, grid_resolution=20, section_resolution=60)
    picture = build_picture(ctx, RenderOptions(layers=default_layers(scene), size=size))
    try:
        picture.plotter.render()
        labels, others = _all_text_boxes(picture)
        width, height = size
        assert labels, "no marker carries a label"
        for text, box in labels:
            assert box[0] >= 0 and box[1] >= 0 and box[2] <= width and box[3] <= height, \
                f"label {text!r} at {box} leaves the {width}x{height} picture"
        for i, (text, box) in enumerate(labels):
            for other, other_box in labels[i + 1:] + others:
                assert not overlaps(box, other_box), f"label {text!r} overlaps {other!r}"
    finally:
        picture.plotter.close()


def test_crowded_markers_get_labels_that_do_not_overlap():
    """Twelve markers within a few pixels: every label placed is clear of the others and of
    every marker, and inside the area."""
    import pyvista as pv

    from trapscape.viewers.layers.labels import overlaps, place_labels

    plotter = pv.Plotter(off_screen=True, window_size=[500, 400])
    try:
        anchors = [(250 + 3 * i, 200 + 2 * (i % 3)) for i in range(12)]
        items = [(a, [f"{i + 1} stable\n(1.0, 2.0, 3.0) mm", f"{i + 1}"]) for i, a in enumerate(anchors)]
        area = (10, 10, 490, 390)
        placed = place_labels(plotter, items, 8, area, [], marker_px=4.0, markers=anchors)
        assert len(placed) >= 6
        boxes = [box for _, _, box in placed]
        for i, box in enumerate(boxes):
            assert area[0] <= box[0] and area[1] <= box[1] and box[2] <= area[2] and box[3] <= area[3]
            assert not any(overlaps(box, other) for other in boxes[i + 1:])
            assert not any(overlaps(box, np.array([x - 4, y - 4, x + 4, y + 4])) for x, y in anchors)
    finally:
        plotter.close()
