"""The clearance skips parts whose bounding box is beyond reach; its value must be the plain
minimum over every part's signed distance and every plate, bit for bit (the reference is that
minimum, computed here part by part)."""
from __future__ import annotations

import numpy as np

from trapscape.physics.field.model import FieldModel
from trapscape.scene.loader import load_scene

SAMPLES = __import__("pathlib").Path(__file__).resolve().parents[3] / "samples"


def plain_clearance(model, points):
    both = np.concatenate([model.part_distances(points), model.plate_distances(points)], axis=1)
    return both.min(axis=1)


def test_pruned_clearance_is_the_plain_minimum_on_every_sample():
    rng = np.random.default_rng(3)
    for name in ("arc_rotor", "holding_plate", "bead_pair", "graphite_stage", "separator_grate"):
        scene = load_scene(SAMPLES / f"{name}.toml")
        model = FieldModel.from_scene(scene)
        box = scene.search_box
        span = box.max - box.min
        # the search box, a margin around it, and points inside the parts (negative distances)
        points = np.concatenate([rng.uniform(box.min - 0.3 * span, box.max + 0.3 * span, (3000, 3)),
                                 np.array([m.position for m in scene.magnets])])
        assert np.array_equal(model.clearance(points), plain_clearance(model, points)), name
