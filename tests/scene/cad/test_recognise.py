"""Primitive recognition: each primitive, tessellated and placed at an odd pose, comes back with
its exact dims, position and axis; shapes that are no primitive stay meshes."""
from __future__ import annotations

import math
import sys

import numpy as np
import pytest
import trimesh
from repo_paths import SAMPLES

from trapscape.scene.cad.recognise import recognise
from trapscape.scene.patterns import rotation_from_degrees

sys.path.insert(0, str(SAMPLES))
from make_meshes import arc_segment  # noqa: E402

TURN = rotation_from_degrees([20.0, 35.0, -50.0])
SHIFT = np.array([0.01, -0.02, 0.03])


def placed(mesh):
    return np.asarray(mesh.vertices) @ TURN.T + SHIFT, np.asarray(mesh.faces)


@pytest.mark.parametrize("mesh, shape, dims", [
    (trimesh.creation.cylinder(radius=0.003, height=0.004, sections=64), "cylinder",
     (0.006, 0.004)),
    (trimesh.creation.annulus(r_min=0.002, r_max=0.005, height=0.003, sections=64), "ring",
     (0.01, 0.004, 0.003)),
    (trimesh.creation.box([0.01, 0.004, 0.006]), "box", None),
    (trimesh.creation.box([0.005, 0.005, 0.005]), "box", (0.005, 0.005, 0.005)),
    (trimesh.creation.icosphere(4, radius=0.004), "sphere", (0.008,)),
])
def test_each_primitive_is_found_with_its_dims_and_place(mesh, shape, dims):
    found = recognise(*placed(mesh))
    assert found is not None and found.shape == shape
    if dims is None:  # a block: its edges in some order along the found frame
        assert sorted(found.dims) == pytest.approx([0.004, 0.006, 0.01], abs=1e-12)
    else:
        assert found.dims == pytest.approx(dims, rel=1e-9)
    assert found.position == pytest.approx(SHIFT, abs=1e-12)
    assert found.surface_deviation < 1e-12
    if shape in ("cylinder", "ring"):  # body z along the turned axis
        assert abs(found.rotation[:, 2] @ TURN[:, 2]) == pytest.approx(1.0, abs=1e-12)


def test_an_arc_segment_is_found_with_its_centre_off_the_centroid():
    segment = arc_segment(30.0)  # samples/make_meshes.py: radii 18 and 13 mm, 8 mm, 54 degrees
    segment.apply_scale(1e-3)
    found = recognise(*placed(segment))
    assert found is not None and found.shape == "arc"
    assert found.dims[:3] == pytest.approx((0.036, 0.026, 0.008), rel=1e-6)
    assert math.degrees(found.dims[3]) == pytest.approx(54.0, abs=1e-5)
    centre = TURN @ np.array([0.0, 0.0, 0.004]) + SHIFT  # the axis, at mid-height
    assert found.position == pytest.approx(centre, abs=1e-9)
    middle = TURN @ np.array([math.cos(math.radians(30)), math.sin(math.radians(30)), 0.0])
    assert found.rotation[:, 0] == pytest.approx(middle, abs=1e-6)  # body x through its middle


@pytest.mark.parametrize("mesh", [
    trimesh.creation.cylinder(radius=0.003, height=0.004, sections=12),  # a 12-sided prism
    trimesh.creation.capsule(height=0.004, radius=0.002),
    trimesh.creation.cone(radius=0.003, height=0.005, sections=64),
])
def test_shapes_that_are_no_primitive_stay_meshes(mesh):
    assert recognise(*placed(mesh)) is None


def test_a_disc_with_a_flat_is_no_cylinder():
    """Its vertices all lie on a cylinder's surface or caps; the flat shows only from the
    cylinder's side (the primitive's surface is far from the facets there)."""
    disc = trimesh.creation.cylinder(radius=0.003, height=0.004, sections=64)
    keep = disc.vertices[:, 0] < 0.0029
    # the 64-gon's vertices beyond x = 2.9 mm dropped: rebuild the hull of the rest
    flat = trimesh.convex.convex_hull(disc.vertices[keep])
    assert recognise(*placed(flat)) is None
