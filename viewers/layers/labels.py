"""Marker labels placed in screen space: each label's box is tried at places around its marker's
projection, nearest first, and kept at the first place that overlaps no other label, no marker,
no text already drawn (title, legend, table, scale bar) and stays inside the 3D content's box;
a label set away from its marker gets a leader line. A label that finds no place is shortened
to its number, and the number to nothing (its row in the table still says it all)."""
from __future__ import annotations

import numpy as np

from trapscape.viewers.layers import style

LABEL_NAME = "trapscape marker label"  # vtkTextActor objects that are marker labels carry it


def text_actor(text: str, font: int):
    """A 2D text actor on a translucent white box with a thin frame (pixels, y up)."""
    import vtk

    from trapscape.viewers.layers.annotations import _rgb

    actor = vtk.vtkTextActor()
    actor.SetInput(text)
    prop = actor.GetTextProperty()
    prop.SetFontSize(int(2 * font))  # the doubling pyvista's add_text applies
    prop.SetFontFamilyToArial()
    prop.SetColor(*_rgb(style.TEXT))
    prop.SetBackgroundColor(1.0, 1.0, 1.0)
    prop.SetBackgroundOpacity(0.88)
    prop.SetFrame(1)
    prop.SetFrameColor(0.55, 0.55, 0.55)
    actor.SetObjectName(LABEL_NAME)
    return actor


def actor_box(actor, renderer) -> np.ndarray:
    """(x0, y0, x1, y1) display pixels of a text actor as the renderer places it."""
    box = [0.0] * 4
    actor.GetBoundingBox(renderer, box)
    x, y = actor.GetPosition()
    return np.array([x + box[0], y + box[2], x + box[1], y + box[3]])


def text_boxes(renderer, labels: bool | None = None) -> list:
    """[(text, box)] of the 2D text actors drawn; labels True: marker labels only, False: the
    rest, None: all."""
    import vtk

    found = []
    props = renderer.GetViewProps()
    props.InitTraversal()
    for _ in range(props.GetNumberOfItems()):
        prop = props.GetNextProp()
        if not isinstance(prop, vtk.vtkTextActor) or not prop.GetVisibility():
            continue
        is_label = prop.GetObjectName() == LABEL_NAME
        if labels is None or labels == is_label:
            found.append((prop.GetInput(), actor_box(prop, renderer)))
    return found


def overlaps(a, b, margin: float = 0.0) -> bool:
    return (a[0] < b[2] + margin and b[0] < a[2] + margin and a[1] < b[3] + margin
            and b[1] < a[3] + margin)


def inside(box, area) -> bool:
    return box[0] >= area[0] and box[1] >= area[1] and box[2] <= area[2] and box[3] <= area[3]


def candidates(anchor, size, reach):
    """Lower-left corners of a (w, h) box around an anchor, nearest rings first: right, left,
    above, below, the four corners, then the same twice and three times as far."""
    x, y = anchor
    w, h = size
    for ring in (1.0, 2.2, 3.6, 5.2):
        d = reach * ring
        for dx, dy in ((1, 0), (-1, 0), (0, 1), (0, -1), (1, 1), (-1, 1), (1, -1), (-1, -1)):
            left = x + d if dx > 0 else (x - d - w if dx < 0 else x - w / 2)
            bottom = y + d if dy > 0 else (y - d - h if dy < 0 else y - h / 2)
            yield np.array([left, bottom])


def place_labels(plotter, items, font: int, area, obstacles, marker_px: float, markers=(),
                 renderer=None) -> list:
    """Put each (anchor (x, y) display pixels, [texts, longest first]) in a free place.

    area: (x0, y0, x1, y1) the labels must stay in; obstacles: boxes to keep clear of;
    markers: every marker's (x, y), labelled or not; renderer: where the labels go (the
    overlay the markers are drawn in, so no marker covers a label). Returns [(actor, anchor,
    box)] of the labels drawn."""
    renderer = renderer or plotter.renderer
    taken = [np.asarray(b, float) for b in obstacles]
    marker_boxes = [np.array([x - marker_px, y - marker_px, x + marker_px, y + marker_px])
                    for x, y in (list(markers) or [anchor for anchor, _ in items])]
    placed = []
    pad = 0.35 * font
    for anchor, texts in items:
        others = marker_boxes
        for text in texts:
            actor = text_actor(text, font)
            box = actor_box(actor, renderer)
            size = (box[2] - box[0], box[3] - box[1])
            spot = _free_spot(anchor, size, marker_px + pad, area, taken + others, pad)
            if spot is not None:
                actor.SetPosition(*(spot - box[:2]))
                final = np.array([spot[0], spot[1], spot[0] + size[0], spot[1] + size[1]])
                renderer.AddViewProp(actor)
                taken.append(final)
                placed.append((actor, anchor, final))
                break
    for actor, anchor, box in placed:
        _leader(renderer, anchor, box, marker_px, font)
    return placed


def _free_spot(anchor, size, reach, area, taken, pad):
    for corner in candidates(anchor, size, reach):
        box = np.array([corner[0], corner[1], corner[0] + size[0], corner[1] + size[1]])
        if inside(box, area) and not any(overlaps(box, other, pad) for other in taken):
            return corner
    return None


def _leader(renderer, anchor, box, marker_px, font) -> None:
    """A line from the marker's edge to the nearest point of a label set away from it."""
    from trapscape.viewers.layers.annotations import _actor_2d

    nearest = np.clip(anchor, box[:2], box[2:])
    gap = np.asarray(nearest, float) - np.asarray(anchor, float)
    distance = float(np.linalg.norm(gap))
    if distance < marker_px + 1.2 * font:
        return
    start = np.asarray(anchor, float) + gap / distance * marker_px
    renderer.AddViewProp(_actor_2d([start, nearest], lines=[[0, 1]], colour="#555555",
                                   width=max(1.5, font / 8)))
