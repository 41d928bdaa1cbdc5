"""The boxes' distances in one kernel call (physics/field/box_distance.py) must be the per-part
shape calls' numbers bit for bit, and so must the clearance and the table of part distances built
on them (the reference: scene/shapes/box.py's sdf, one part at a time)."""
from __future__ import annotations

from dataclasses import replace

import numpy as np

from trapscape.physics.field.box_distance import Boxes
from trapscape.physics.field.model import FieldModel
from trapscape.physics.field.parts import part_sdf
from trapscape.scene.loader import load_scene

SAMPLES = __import__("pathlib").Path(__file__).resolve().parents[3] / "samples"

# signed permutations with det +1: body x, y, z along these world axes
TURNS = [np.eye(3), np.array([[0.0, -1, 0], [1, 0, 0], [0, 0, 1]]),
         np.array([[0.0, 0, 1], [1, 0, 0], [0, 1, 0]]), np.array([[-1.0, 0, 0], [0, 0, 1], [0, 1, 0]])]


def turned_board():
    """A 5 x 5 graphite board of unequal blocks, each turned by right angles (some by other
    angles, which stay on the per-part path)."""
    scene = load_scene(SAMPLES / "graphite_stage.toml", overrides={"count": "5"})
    magnets = []
    for k, m in enumerate(scene.magnets):
        rotation = TURNS[k % len(TURNS)]
        if k % 7 == 3:
            c, s = np.cos(0.3), np.sin(0.3)
            rotation = np.array([[c, -s, 0.0], [s, c, 0.0], [0.0, 0.0, 1.0]])
        magnets.append(replace(m, dims=(m.dims[0], 0.7 * m.dims[1], 0.4 * m.dims[2]),
                               rotation=rotation))
    return replace(scene, magnets=tuple(magnets))


def points_around(scene, rng, count=4000):
    box = scene.search_box
    span = box.max - box.min
    return np.concatenate([rng.uniform(box.min - 0.3 * span, box.max + 0.3 * span, (count, 3)),
                           np.array([m.position for m in scene.magnets]),
                           np.array([m.position + 0.5 * m.rotation @ m.dims for m in scene.magnets
                                     if m.shape == "box"]).reshape(-1, 3)])  # on corners


def test_box_table_and_clearance_are_the_per_part_numbers_bit_for_bit():
    rng = np.random.default_rng(5)
    for scene in (turned_board(), load_scene(SAMPLES / "graphite_stage.toml"),
                  load_scene(SAMPLES / "holding_plate.toml")):
        model = FieldModel.from_scene(scene)
        points = points_around(scene, rng)
        reference = np.stack([part_sdf(m, points) for m in scene.magnets], axis=1)
        assert np.array_equal(model.part_distances(points), reference)
        plates = model.plate_distances(points)
        plain = np.concatenate([reference, plates], axis=1).min(axis=1)
        assert np.array_equal(model.clearance(points), plain)


def test_the_turned_board_mixes_both_paths_and_threads_agree():
    scene = turned_board()
    boxes = Boxes.of(scene.magnets)
    assert 0 < len(boxes.index) < len(scene.magnets)  # the parts turned by 0.3 rad are left out
    points = points_around(scene, np.random.default_rng(8), count=20_000)  # above the thread bound
    reference = np.stack([part_sdf(scene.magnets[k], points) for k in boxes.index], axis=1)
    assert np.array_equal(boxes.lower(points, np.full(len(points), np.inf)), reference.min(axis=1))
    assert np.array_equal(boxes.lower(points[:50], np.zeros(50)),
                          np.minimum(reference[:50].min(axis=1), 0.0))
    nan = np.full((1, 3), np.nan)  # as the per-part minimum: NaN, not the starting value
    assert np.isnan(boxes.lower(nan, [np.inf])).all()
    assert np.isnan(FieldModel.from_scene(scene).clearance(nan)).all()
