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


def test_forest_clearance_near_mesh_surfaces_is_the_plain_minimum():
    """Where the contact search asks: just off the mesh parts' surfaces (their vertices and
    face centres pushed out and in), between two parts, and the six finite-difference
    neighbours of each such point; the one search over the packed trees must give the
    per-part minimum bit for bit."""
    rng = np.random.default_rng(5)
    scene = load_scene(SAMPLES / "arc_rotor.toml")
    model = FieldModel.from_scene(scene)
    surface = []
    for magnet in scene.magnets:
        vertices, faces = np.asarray(magnet.mesh_vertices), np.asarray(magnet.mesh_faces)
        centres = vertices[faces].mean(axis=1)
        normals = np.cross(vertices[faces[:, 1]] - vertices[faces[:, 0]],
                           vertices[faces[:, 2]] - vertices[faces[:, 0]])
        normals /= np.linalg.norm(normals, axis=1, keepdims=True)
        for push in (1e-3, 1e-6, 0.0, -1e-6, -1e-4):
            surface.append(centres + push * normals)
        surface.append(vertices + rng.normal(scale=1e-4, size=vertices.shape))
    points = np.concatenate(surface)
    h = 1e-9
    offsets = np.concatenate([np.zeros((1, 3)), np.eye(3), -np.eye(3)]) * h
    points = (points[:, None, :] + offsets[None]).reshape(-1, 3)
    assert np.array_equal(model.clearance(points), plain_clearance(model, points))
    assert (model.clearance(points) < 0).any() and (model.clearance(points) > 0).any()
