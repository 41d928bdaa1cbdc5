"""The prism (scene.shapes.prism): outline checks, triangulation, volume, moment, distances, and
loading from a scene file with rotation and patterns."""
from __future__ import annotations

import math
import re

import numpy as np
import pytest
import trimesh

from scene_factory import shape_part
from trapscape.scene.errors import SceneError
from trapscape.scene.loader import load_scene_text
from trapscape.scene.measures import moment_world, volume
from trapscape.scene.shapes import SHAPES, DimError
from trapscape.scene.shapes.meshops import mesh_sdf, mesh_volume
from trapscape.scene.shapes.polygon import ear_clip, signed_area
from trapscape.scene.units import MU0

PRISM = SHAPES["prism"]
SIDE = 0.004  # m
HEXAGON = [[SIDE * math.cos(k * math.pi / 3), SIDE * math.sin(k * math.pi / 3)] for k in range(6)]
# an L: a 6 x 2 bar along x and a 2 x 4 upright on its left end (mm -> m), concave at (2, 2)
L_SHAPE = [[x * 1e-3, y * 1e-3] for x, y in [(0, 0), (6, 0), (6, 2), (2, 2), (2, 6), (0, 6)]]
L_AREA = (6 * 2 + 2 * 4) * 1e-6  # two rectangles, by hand


def prism(outline, height=0.003, **kwargs):
    return shape_part("prism", PRISM.make_dims([outline, height]), **kwargs)


def test_volume_is_the_shoelace_area_times_the_height():
    # regular hexagon: 3 sqrt(3) / 2 s^2 (textbook); the L: two rectangles counted by hand
    assert volume(prism(HEXAGON)) == pytest.approx(1.5 * math.sqrt(3) * SIDE**2 * 0.003, rel=1e-14)
    assert volume(prism(L_SHAPE)) == pytest.approx(L_AREA * 0.003, rel=1e-14)


def test_moment_is_remanence_over_mu0_times_the_volume():
    part = prism(L_SHAPE, north=(1, 0, 0), remanence=1.2)
    expected = 1.2 / MU0 * L_AREA * 0.003  # m = Br V / mu0 (DESIGN.md, Physics definitions)
    np.testing.assert_allclose(moment_world(part), [expected, 0, 0], rtol=1e-14)


@pytest.mark.parametrize("outline", [HEXAGON, L_SHAPE, L_SHAPE[::-1]])
def test_tessellation_is_closed_outward_and_holds_the_volume(outline):
    part = prism(outline)
    V, F = PRISM.tessellation(part)
    mesh = trimesh.Trimesh(V, F, process=False)
    assert mesh.is_watertight and mesh.is_winding_consistent
    assert mesh_volume(V, F) == pytest.approx(volume(part), rel=1e-13)


def test_ear_clipping_covers_a_concave_outline_with_counter_clockwise_triangles():
    corners = np.array(PRISM.make_dims([L_SHAPE, 1.0])[0])
    triangles = ear_clip(corners)
    areas = [signed_area(corners[t]) for t in triangles]
    assert len(triangles) == len(corners) - 2 and min(areas) > 0
    assert sum(areas) == pytest.approx(L_AREA, rel=1e-13)


def test_either_winding_gives_the_same_part():
    assert PRISM.make_dims([L_SHAPE, 1.0]) == PRISM.make_dims([L_SHAPE[::-1], 1.0])


def test_distance_is_exact_against_the_brute_force_distance_to_its_mesh():
    part = prism(L_SHAPE)
    p = np.random.default_rng(3).uniform(-0.003, 0.009, size=(2000, 3)) * [1, 1, 0.5]
    # independent: closest point on each triangle (Ericson 2005, 5.1.5) with ray-parity sign
    np.testing.assert_allclose(PRISM.sdf(part, p), mesh_sdf(p, *PRISM.tessellation(part)), atol=1e-15)
    assert (PRISM.sdf(part, p) < 0).any()


def test_bounds_and_smallest_dimension():
    lower, upper = PRISM.bounds(prism(L_SHAPE))
    np.testing.assert_allclose(lower, [0, 0, -0.0015], atol=1e-18)
    np.testing.assert_allclose(upper, [0.006, 0.006, 0.0015], atol=1e-18)


@pytest.mark.parametrize("outline, words", [
    ([[0, 0], [1, 0]], "at least 3"),
    ([[0, 0], [1, 1], [1, 0], [0, 1]], "crosses itself"),
    ([[0, 0], [1, 0], [2, 0]], "no area"),
    ([[0, 0], [1, 0], [1, 0], [0, 1]], "same point"),
])
def test_bad_outlines_are_refused(outline, words):
    with pytest.raises(DimError, match=words):
        PRISM.validate([outline, 1.0], "mm")


MAGNET = '''units = "mm"
[[magnet]]
name = "bar"
shape = "prism"
outline = {outline}
height = 3
position = [20, 0, 0]
rotation = [0, 0, 90]
north = "+z"
grade = "N42"
{extra}
'''


def test_loads_with_rotation_and_a_circular_pattern():
    text = MAGNET.format(outline="[[0, 0], [0, 6], [2, 6], [2, 2], [6, 2], [6, 0]]",  # clockwise
                         extra='pattern = { kind = "circular", count = 4, axis = [0, 0, 1] }')
    scene = load_scene_text(text)
    assert [m.name for m in scene.magnets] == ["bar-1", "bar-2", "bar-3", "bar-4"]
    first = scene.magnets[0]
    assert first.shape == "prism" and first.dims[1] == pytest.approx(0.003)
    assert signed_area(first.dims[0]) == pytest.approx(L_AREA, rel=1e-12)  # made counter-clockwise
    # the corner (6, 0) mm of the body turns by 90 degrees about z to (0, 6) mm from the position
    lower, upper = PRISM.bounds(first)
    world = first.rotation @ np.array([0.006, 0.0, 0.0]) + first.position
    np.testing.assert_allclose(world, [0.020, 0.006, 0.0], atol=1e-15)
    assert np.all(upper > lower)
    second = scene.magnets[1]  # a quarter turn further about the origin
    np.testing.assert_allclose(second.position, [0.0, 0.020, 0.0], atol=1e-15)


@pytest.mark.parametrize("outline, message", [
    ("[[0, 0], [6, 0]]", "bar', outline: the outline is not a simple polygon: it has 2 corner(s)"),
    ("[[0, 0], [6, 6], [6, 0], [0, 6]]", "bar', outline: the outline is not a simple polygon: it crosses itself"),
    ("[0, 0, 6, 6]", "bar', outline: write the corners of the cross-section as a list of [x, y] pairs"),
])
def test_bad_outlines_in_a_scene_name_the_file_table_part_and_key(outline, message):
    with pytest.raises(SceneError, match=re.escape("scene.toml, [[magnet]] 1 '" + message)):
        load_scene_text(MAGNET.format(outline=outline, extra=""))


def test_a_prism_without_height_says_so():
    text = MAGNET.format(outline="[[0, 0], [6, 0], [0, 6]]", extra="").replace("height = 3\n", "")
    with pytest.raises(SceneError, match="the key 'height' is missing; give the dimensions as outline"):
        load_scene_text(text)
