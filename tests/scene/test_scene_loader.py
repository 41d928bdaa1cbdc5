"""Scene files -> Scene objects: shapes, units, rotations, patterns, parameters, defaults."""
from __future__ import annotations

import warnings

import numpy as np
import pytest
import trimesh

from trapscape.scene.errors import SceneError, SceneWarning
from trapscape.scene.loader import DEFAULT_PROBE, load_scene, load_scene_text, parse_overrides


def scene_text(magnets: str, units: str = "mm", head: str = "", tail: str = "") -> str:
    return f'units = "{units}"\n{head}\n{magnets}\n{tail}\n'


def one(magnet_body: str, **kwargs):
    scene = load_scene_text(scene_text(f"[[magnet]]\n{magnet_body}\n", **kwargs))
    assert len(scene.magnets) == 1
    return scene.magnets[0]


def corners_world(magnet) -> set:
    half = np.asarray(magnet.dims) / 2
    signs = np.array([[x, y, z] for x in (-1, 1) for y in (-1, 1) for z in (-1, 1)])
    world = (signs * half) @ magnet.rotation.T + magnet.position
    return {tuple(np.round(c, 12) + 0.0) for c in world}


@pytest.mark.parametrize("body, shape, dims", [
    ('shape = "box"\nsize = [10, 20, 5]', "box", (0.010, 0.020, 0.005)),
    ('shape = "cylinder"\nsize = [10, 5]', "cylinder", (0.010, 0.005)),
    ('shape = "cylinder"\ndiameter = 10\nheight = 5', "cylinder", (0.010, 0.005)),
    ('shape = "ring"\nsize = [20, 10, 5]', "ring", (0.020, 0.010, 0.005)),
    ('shape = "ring"\nouter_diameter = 20\ninner_diameter = 10\nheight = 5', "ring",
     (0.020, 0.010, 0.005)),
    ('shape = "arc"\nsize = [40, 30, 10, 90]', "arc", (0.040, 0.030, 0.010, np.pi / 2)),
    ('shape = "arc"\nsize = [40, 0, 10, 30]', "arc", (0.040, 0.0, 0.010, np.pi / 6)),  # a pie
    ('shape = "sphere"\nsize = 8', "sphere", (0.008,)),
    ('shape = "sphere"\ndiameter = 8', "sphere", (0.008,)),
])
def test_each_primitive_shape_loads_in_metres(body, shape, dims):
    magnet = one(body + '\ngrade = "N42"')
    assert magnet.shape == shape
    np.testing.assert_allclose(magnet.dims, dims, rtol=1e-15)
    assert magnet.remanence == pytest.approx(1.30)  # middle of N42's 1.28-1.32 T (scene/grades.py)


def test_mesh_shape_loads_with_the_file_origin_as_body_frame(tmp_path):
    box = trimesh.creation.box(extents=[4, 6, 2])
    box.apply_translation([10, 0, 0])  # exported in assembly coordinates, off the origin
    box.export(tmp_path / "part.stl")
    text = scene_text('[[magnet]]\nshape = "mesh"\nfile = "part.stl"\nremanence = 1.2')
    magnet = load_scene_text(text, base_dir=tmp_path).magnets[0]
    assert magnet.shape == "mesh" and magnet.dims == ()
    np.testing.assert_allclose(magnet.position, 0.0)
    np.testing.assert_allclose(magnet.mesh_vertices.min(axis=0), [0.008, -0.003, -0.001])
    np.testing.assert_allclose(magnet.mesh_vertices.max(axis=0), [0.012, 0.003, 0.001])
    assert magnet.mesh_faces.shape[1] == 3


@pytest.mark.parametrize("units, metres", [("mm", 1e-3), ("cm", 1e-2), ("m", 1.0),
                                           ("in", 0.0254)])  # inch = 25.4 mm exactly (1959)
def test_units_convert_every_length(units, metres):
    scene = load_scene_text(scene_text(
        '[[magnet]]\nshape = "box"\nsize = [2, 3, 4]\nposition = [1, -2, 3]\nremanence = 1.2',
        units=units, tail='[probe]\nkind = "soft"\ndiameter = 0.5\n'
                          '[search_box]\nmin = [-10, -10, -10]\nmax = [10, 10, 10]\nspacing = 1'))
    magnet = scene.magnets[0]
    np.testing.assert_allclose(magnet.dims, np.array([2, 3, 4]) * metres, rtol=1e-15)
    np.testing.assert_allclose(magnet.position, np.array([1, -2, 3]) * metres, rtol=1e-15)
    assert scene.probe.diameter == pytest.approx(0.5 * metres)
    np.testing.assert_allclose(scene.search_box.min, -10 * metres)
    assert scene.search_box.spacing == pytest.approx(metres)
    assert scene.unit_scale == metres


def test_mesh_file_units_override_the_scene_units(tmp_path):
    trimesh.creation.box(extents=[1, 1, 1]).export(tmp_path / "cube.stl")  # 1 cm cube
    text = scene_text('[[magnet]]\nshape = "mesh"\nfile = "cube.stl"\nfile_units = "cm"\n'
                      'remanence = 1')
    magnet = load_scene_text(text, base_dir=tmp_path).magnets[0]
    np.testing.assert_allclose(np.ptp(magnet.mesh_vertices, axis=0), 0.01)


def test_box_turned_90_degrees_about_z_equals_box_with_x_and_y_swapped():
    turned = one('shape = "box"\nsize = [10, 4, 2]\nposition = [1, 2, 3]\nrotation = [0, 0, 90]\n'
                 'remanence = 1')
    swapped = one('shape = "box"\nsize = [4, 10, 2]\nposition = [1, 2, 3]\nremanence = 1')
    assert corners_world(turned) == corners_world(swapped)


def test_rotation_is_extrinsic_x_then_y_then_z():
    # By hand: Rx(90) keeps x and sends y to z; Ry(90) then sends x to -z and z to +x.
    magnet = one('shape = "box"\nsize = [1, 1, 1]\nrotation = [90, 90, 0]\nnorth = "+x"\n'
                 'remanence = 1')
    np.testing.assert_allclose(magnet.north_world, [0, 0, -1], atol=1e-15)
    np.testing.assert_allclose(magnet.rotation @ [0, 1, 0], [1, 0, 0], atol=1e-15)
    assert np.linalg.det(magnet.rotation) == pytest.approx(1.0)


def test_north_words_vectors_and_radial():
    assert one('shape = "box"\nsize = [1, 1, 1]\nnorth = "-y"\nremanence = 1').north.tolist() \
        == [0, -1, 0]
    tilted = one('shape = "box"\nsize = [1, 1, 1]\nnorth = [3, 0, 4]\nremanence = 1')
    np.testing.assert_allclose(tilted.north, [0.6, 0, 0.8])
    ring = one('shape = "ring"\nsize = [20, 10, 5]\nnorth = "radial-in"\nremanence = 1')
    assert ring.north is None and ring.radial == "radial-in"
    assert one('shape = "cylinder"\nsize = [2, 2]\nremanence = 1').north.tolist() == [0, 0, 1]


def test_circular_pattern_of_six_is_six_parts_on_the_circle_with_turned_north():
    scene = load_scene_text(scene_text(
        '[[magnet]]\nname = "b"\nshape = "box"\nsize = [2, 2, 2]\nposition = [15, 0, 5]\n'
        'north = "+x"\nremanence = 1\n'
        'pattern = { kind = "circular", count = 6, axis = [0, 0, 1], center = [0, 0, 5] }'))
    assert [m.name for m in scene.magnets] == [f"b-{k}" for k in range(1, 7)]
    for k, magnet in enumerate(scene.magnets):
        angle = np.radians(60 * k)
        np.testing.assert_allclose(magnet.position, [0.015 * np.cos(angle),
                                                     0.015 * np.sin(angle), 0.005], atol=1e-15)
        np.testing.assert_allclose(magnet.north_world, [np.cos(angle), np.sin(angle), 0],
                                   atol=1e-15)


def test_alternating_grid_flips_north_on_neighbours():
    scene = load_scene_text(scene_text(
        '[[magnet]]\nname = "c"\nshape = "box"\nsize = [5, 5, 5]\nremanence = 1\n'
        'pattern = { kind = "grid", counts = [3, 2], steps = [[5, 0, 0], [0, 5, 0]], '
        'polarity = "alternate" }'))
    assert len(scene.magnets) == 6
    by_place = {tuple(np.round(m.position / 0.005).astype(int)): m.north_world[2]
                for m in scene.magnets}
    for (i, j, _), north in by_place.items():
        assert north == (1 if (i + j) % 2 == 0 else -1)
        for di, dj in ((1, 0), (0, 1)):
            if (i + di, j + dj, 0) in by_place:
                assert by_place[(i + di, j + dj, 0)] == -north
    assert scene.magnets[0].name == "c-1"
    np.testing.assert_allclose(scene.magnets[0].position, 0.0)  # first copy is the part as placed


def test_linear_alternate_flips_radial_parts_too():
    scene = load_scene_text(scene_text(
        '[[magnet]]\nshape = "ring"\nsize = [20, 10, 5]\nnorth = "radial-out"\nremanence = 1\n'
        'pattern = { kind = "linear", count = 3, step = [0, 0, 5], polarity = "alternate" }'))
    assert [m.radial for m in scene.magnets] == ["radial-out", "radial-in", "radial-out"]


def test_expressions_and_set_change_derived_positions():
    text = scene_text('[[magnet]]\nshape = "box"\nsize = ["t", "t", "t"]\n'
                      'position = ["r + t/2", 0, "2 * sqrt(gap)"]\nremanence = 1',
                      head='[params]\ngap = 4\nt = 2\nr = "10 + gap"')
    default = load_scene_text(text).magnets[0]
    np.testing.assert_allclose(default.position, [0.015, 0, 0.004])
    changed = load_scene_text(text, overrides=parse_overrides(["gap=9", "t=2*3"]))
    np.testing.assert_allclose(changed.magnets[0].position, [0.022, 0, 0.006])
    np.testing.assert_allclose(changed.magnets[0].dims, [0.006] * 3)
    assert changed.params == {"gap": 9.0, "t": 6.0, "r": 19.0}
    assert changed.digest != load_scene_text(text).digest


def test_parse_overrides_needs_name_equals_value():
    assert parse_overrides(["gap=4", " t = 2*gap "]) == {"gap": "4", "t": "2*gap"}
    with pytest.raises(SceneError, match="NAME=VALUE"):
        parse_overrides(["gap4"])


def test_defaults_probe_gravity_and_search_box():
    scene = load_scene_text(scene_text('[[magnet]]\nshape = "box"\nsize = [10, 4, 2]\n'
                                       'remanence = 1'))
    assert scene.probe is DEFAULT_PROBE and scene.constraint.kind == "free"
    np.testing.assert_allclose(scene.gravity, [0, 0, -9.81])
    # bounding box +- 5, 2, 1 mm plus a margin of the largest dimension (10 mm)
    np.testing.assert_allclose(scene.search_box.min, [-0.015, -0.012, -0.011])
    np.testing.assert_allclose(scene.search_box.max, [0.015, 0.012, 0.011])
    assert scene.search_box.shape()[0] == 80  # default resolution on the longest side


def test_probe_constraint_and_plate_are_read_and_normalised():
    scene = load_scene_text(scene_text(
        '[[magnet]]\nshape = "box"\nsize = [10, 10, 5]\nposition = [0, 0, 5]\ngrade = "N35"',
        tail='[[steel_plate]]\npoint = [0, 0, 0]\nnormal = [0, 0, 2]\nthickness = 5\n'
             '[probe]\nkind = "magnet"\ndiameter = 2\nremanence = 1.2\norientation = [0, 3, 4]\n'
             '[probe.constraint]\nkind = "line"\npoint = [1, 2, 3]\ndirection = [0, 0, 7]\n'))
    plate = scene.plates[0]
    assert plate.name == "plate-1" and plate.saturation == 2.0 and plate.thickness == 0.005
    np.testing.assert_allclose(plate.normal, [0, 0, 1])
    np.testing.assert_allclose(scene.probe.orientation, [0, 0.6, 0.8])
    assert scene.probe.density == 7500.0
    np.testing.assert_allclose(scene.constraint.direction, [0, 0, 1])
    np.testing.assert_allclose(scene.constraint.point, [0.001, 0.002, 0.003])


def test_scene_objects_are_frozen_and_read_only():
    magnet = one('shape = "box"\nsize = [1, 1, 1]\nremanence = 1')
    with pytest.raises(ValueError):
        magnet.position[0] = 1.0
    with pytest.raises(AttributeError):
        magnet.name = "other"


def test_digest_covers_mesh_bytes(tmp_path):
    trimesh.creation.box(extents=[1, 1, 1]).export(tmp_path / "a.stl")
    text = scene_text('[[magnet]]\nshape = "mesh"\nfile = "a.stl"\nremanence = 1')
    first = load_scene_text(text, base_dir=tmp_path).digest
    trimesh.creation.box(extents=[1, 1, 2]).export(tmp_path / "a.stl")
    assert load_scene_text(text, base_dir=tmp_path).digest != first


def test_load_scene_reads_a_file_and_records_its_path(tmp_path):
    path = tmp_path / "s.toml"
    path.write_text(scene_text('[[magnet]]\nshape = "sphere"\nsize = 4\nremanence = 1'))
    scene = load_scene(path)
    assert scene.path == str(path) and scene.title == "s" and len(scene.digest) == 64


def test_touching_cubes_pass_but_overlapping_ones_stop_unless_allowed():
    touching = scene_text('[[magnet]]\nshape = "box"\nsize = [5, 5, 5]\nremanence = 1\n'
                          'pattern = { kind = "linear", count = 2, step = [5, 0, 0] }')
    with warnings.catch_warnings():
        warnings.simplefilter("error", SceneWarning)
        load_scene_text(touching)
    overlapping = touching.replace("step = [5", "step = [4")
    with pytest.raises(SceneError, match=r"'box-1-1' and 'box-1-2' overlap by about 1 mm"):
        load_scene_text(overlapping)
    with pytest.warns(SceneWarning, match=r"'box-1-1' and 'box-1-2' overlap by about 1 mm"):
        load_scene_text("allow_overlap = true\n" + overlapping)


def test_spheres_overlap_depth_is_twice_radius_minus_distance():
    text = scene_text('[[magnet]]\nshape = "sphere"\nsize = 10\nremanence = 1\n'
                      '[[magnet]]\nshape = "sphere"\nsize = 10\nposition = [7, 0, 0]\n'
                      'remanence = 1', head="allow_overlap = true")
    with pytest.warns(SceneWarning) as caught:
        load_scene_text(text)
    # 2 r - d = 10 - 7 = 3 mm (derived in scene/overlaps.py); the lattice step is 3/20 mm
    depth = float(str(caught[0].message).split("by about ")[1].split(" mm")[0])
    assert depth == pytest.approx(3.0, abs=0.15)


def test_default_search_box_stops_at_a_plate_face():
    scene = load_scene_text(scene_text(
        '[[magnet]]\nshape = "box"\nsize = [10, 10, 4]\nposition = [0, 0, 3]\nremanence = 1',
        tail='[[steel_plate]]\npoint = [0, 0, 0]\nnormal = [0, 0, 1]\nthickness = 5\n'))
    assert scene.search_box.min[2] == 0.0  # the plate's face, not 1 - 10 mm below it
    assert scene.search_box.max[2] == pytest.approx(0.015)


def test_a_ring_with_no_hole_is_sent_to_the_cylinder():
    with pytest.raises(SceneError, match='inner diameter 0 is a solid cylinder; write shape = "cylinder"'):
        one('shape = "ring"\nsize = [20, 0, 5]\nremanence = 1')
