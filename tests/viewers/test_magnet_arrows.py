"""Magnetisation arrows start on the part (its volume centroid), not at the body origin, which
for a mesh is the file's origin and for an arc its axis (issue 10, item 2). The anchor is checked
where the analysis computes it and in the arrow geometry the magnets layer draws, not in pixels."""
from __future__ import annotations

import math

import numpy as np
import pytest
import trimesh

from repo_paths import SAMPLES
from trapscape.physics.analysis.run import Analysis
from trapscape.physics.analysis.views import magnetisation_arrows
from trapscape.scene.loader import load_scene
from trapscape.viewers.layers.context import ViewContext
from trapscape.viewers.layers.magnets import part_arrows


def drawn_anchor(arrow, direction):
    """The centre of the arrow's base disc: its points furthest back along the direction."""
    points = np.asarray(arrow.points, dtype=float)
    along = points @ direction
    base = points[along <= along.min() + 1e-4 * np.ptp(along)]  # float32 points
    return base.mean(axis=0)


@pytest.fixture
def offset_cylinder(tmp_path):
    """A 10 x 5 mm cylinder exported as STL around x = 20 mm (the file's origin off the part)."""
    mesh = trimesh.creation.cylinder(radius=5.0, height=5.0, sections=48)
    mesh.apply_translation([20.0, 0.0, 0.0])
    mesh.export(tmp_path / "disc.stl")
    (tmp_path / "scene.toml").write_text(
        'units = "mm"\n[[magnet]]\nname = "disc"\nshape = "mesh"\nfile = "disc.stl"\n'
        'file_units = "mm"\nnorth = "+z"\ngrade = "N42"\n')
    return load_scene(str(tmp_path / "scene.toml"))


def test_mesh_arrow_starts_at_the_cylinder_axis(offset_cylinder):
    # by symmetry the centroid of the file's cylinder is on its axis, at (20, 0, 0) mm
    expected_m = np.array([0.02, 0.0, 0.0])
    ((start_m, direction),) = magnetisation_arrows(offset_cylinder, 0)
    assert np.allclose(start_m, expected_m, atol=1e-9)
    assert np.allclose(direction, [0, 0, 1])
    ctx = ViewContext.of(offset_cylinder, traps=False)
    (arrow,) = part_arrows(ctx, 0)
    assert np.allclose(drawn_anchor(arrow, direction), [20.0, 0.0, 0.0], atol=1e-4)


def test_arc_rotor_arrows_start_inside_their_own_segment():
    scene = load_scene(str(SAMPLES / "arc_rotor.toml"))
    model = Analysis(scene).model
    ctx = ViewContext.of(scene, traps=False)
    for index in range(len(scene.magnets)):
        ((start_m, direction),) = magnetisation_arrows(scene, index)
        assert model.inside_magnet(start_m[None])[0] == index
        (arrow,) = part_arrows(ctx, index)
        assert np.allclose(drawn_anchor(arrow, direction), ctx.to_units(start_m), atol=1e-4)


def test_arc_arrow_at_the_sector_centroid(tmp_path):
    """A primitive arc's body origin is its axis; the arrow starts at its centroid,
    x = (2/3) (Ro^3 - Ri^3) / (Ro^2 - Ri^2) sin(a/2) / (a/2) on its middle radius (centroid of a
    circular sector, 2 R sin(a/2) / (3 a/2) (Meriam & Kraige, Engineering Mechanics: Statics,
    table of centroids, from memory), the annulus by subtracting the inner sector, derived here)."""
    (tmp_path / "arc.toml").write_text(
        'units = "mm"\n[[magnet]]\nname = "arc"\nshape = "arc"\nsize = [40, 30, 10, 60]\n'
        'north = "+z"\nremanence = 1.2\n')
    scene = load_scene(str(tmp_path / "arc.toml"))
    ((start_m, _),) = magnetisation_arrows(scene, 0)
    ro, ri, half = 0.020, 0.015, math.radians(30.0)
    expected_x = 2.0 / 3.0 * (ro**3 - ri**3) / (ro**2 - ri**2) * math.sin(half) / half
    # chosen before running: the tessellation keeps the area within its sag tolerance, so its
    # centroid is within about 1e-3 of the true one
    assert start_m[0] == pytest.approx(expected_x, rel=1e-3)
    assert abs(start_m[1]) < 1e-9 and abs(start_m[2]) < 1e-9
