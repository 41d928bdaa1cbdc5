"""Mesh files: formats, units, and each problem with its own message."""
from __future__ import annotations

import warnings
import zipfile

import numpy as np
import pytest
import trimesh

from trapscape.scene.errors import SceneError, SceneWarning
from trapscape.scene.loader import load_scene_text
from trapscape.scene.measures import volume


def load_mesh_scene(folder, file_name, extra=""):
    text = f'units = "mm"\n[[magnet]]\nname = "part"\nshape = "mesh"\nfile = "{file_name}"\n' \
           f'remanence = 1.2\n{extra}'
    return load_scene_text(text, base_dir=folder)


def write_3mf(path, mesh, unit="millimeter", transform=None):
    """A minimal 3MF package by hand (3MF Core Specification: zip with 3D/3dmodel.model)."""
    vertices = "".join(f'<vertex x="{x}" y="{y}" z="{z}"/>' for x, y, z in mesh.vertices)
    triangles = "".join(f'<triangle v1="{a}" v2="{b}" v3="{c}"/>' for a, b, c in mesh.faces)
    item = f' transform="{transform}"' if transform else ""
    model = (f'<?xml version="1.0" encoding="UTF-8"?><model unit="{unit}" '
             f'xmlns="http://schemas.microsoft.com/3dmanufacturing/core/2015/02"><resources>'
             f'<object id="1" type="model"><mesh><vertices>{vertices}</vertices><triangles>'
             f'{triangles}</triangles></mesh></object></resources><build><item objectid="1"'
             f'{item}/></build></model>')
    with zipfile.ZipFile(path, "w") as package:
        package.writestr("3D/3dmodel.model", model)


@pytest.mark.parametrize("suffix", ["stl", "obj", "ply"])
def test_stl_obj_ply_give_the_same_solid(tmp_path, suffix):
    box = trimesh.creation.box(extents=[2, 3, 4])
    box.export(tmp_path / f"box.{suffix}")
    magnet = load_mesh_scene(tmp_path, f"box.{suffix}").magnets[0]
    assert volume(magnet) == pytest.approx(24e-9, rel=1e-6)
    np.testing.assert_allclose(np.ptp(magnet.mesh_vertices, axis=0), [2e-3, 3e-3, 4e-3], rtol=1e-6)


def test_3mf_uses_its_declared_unit_and_build_transform(tmp_path):
    write_3mf(tmp_path / "box.3mf", trimesh.creation.box(extents=[1, 2, 3]), unit="centimeter",
              transform="1 0 0 0 1 0 0 0 1 5 0 0")  # moved 5 cm along x
    magnet = load_mesh_scene(tmp_path, "box.3mf").magnets[0]
    assert volume(magnet) == pytest.approx(6e-6, rel=1e-9)
    np.testing.assert_allclose(magnet.mesh_vertices.mean(axis=0), [0.05, 0, 0], atol=1e-12)
    forced = load_mesh_scene(tmp_path, "box.3mf", 'file_units = "mm"').magnets[0]
    assert volume(forced) == pytest.approx(6e-9, rel=1e-9)


def test_inside_out_mesh_is_turned_with_a_warning(tmp_path):
    box = trimesh.creation.box(extents=[2, 2, 2])
    box.invert()
    box.export(tmp_path / "inverted.stl")
    with pytest.warns(SceneWarning, match="inside-out.*trimesh reversed every face"):
        magnet = load_mesh_scene(tmp_path, "inverted.stl").magnets[0]
    assert volume(magnet) == pytest.approx(8e-9, rel=1e-6)


def test_repeated_mesh_in_a_pattern_is_read_once_and_shared(tmp_path):
    trimesh.creation.box(extents=[1, 1, 1]).export(tmp_path / "b.stl")
    scene = load_mesh_scene(tmp_path, "b.stl",
                            'pattern = { kind = "linear", count = 3, step = [2, 0, 0] }')
    assert [m.name for m in scene.magnets] == ["part-1", "part-2", "part-3"]
    assert scene.magnets[0].mesh_vertices is scene.magnets[2].mesh_vertices
    np.testing.assert_allclose(scene.magnets[2].position, [0.004, 0, 0])


def _open_box(path):
    box = trimesh.creation.box()
    trimesh.Trimesh(box.vertices, box.faces[1:], process=False).export(path)


def _miswound_box(path):
    box = trimesh.creation.box()
    faces = box.faces.copy()
    faces[0] = faces[0][::-1]
    trimesh.Trimesh(box.vertices, faces, process=False).export(path)


def _flat(path):
    trimesh.Trimesh([[0, 0, 0], [1, 0, 0], [0, 1, 0]], [[0, 1, 2], [0, 2, 1]],
                    process=False).export(path)


@pytest.mark.parametrize("name, make, fragment", [
    ("missing.stl", None, "not found"),
    ("junk.stl", lambda p: p.write_bytes(b"this is no STL file at all " * 8), "cannot read"),
    ("empty.stl", lambda p: p.write_bytes(b""), "is empty"),
    ("broken.3mf", lambda p: p.write_bytes(b"PK not really a zip"), "cannot read broken.3mf as 3MF"),
    ("part.step", lambda p: p.write_text("ISO-10303-21;"), "not a mesh format"),
    ("open.stl", _open_box, "is not closed"),
    ("miswound.stl", _miswound_box, "winding is inconsistent"),
    ("flat.stl", _flat, "zero volume"),
])
def test_each_mesh_problem_has_its_own_sentence(tmp_path, name, make, fragment):
    if make:
        make(tmp_path / name)
    with pytest.raises(SceneError, match=fragment) as caught:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            load_mesh_scene(tmp_path, name)
    assert "[[magnet]] 1 'part'" in str(caught.value) and name in str(caught.value)


def test_overlapping_meshes_warn_with_the_depth(tmp_path):
    trimesh.creation.box(extents=[10, 10, 10]).export(tmp_path / "cube.stl")
    text = ('units = "mm"\nallow_overlap = true\n[[magnet]]\nname = "a"\nshape = "mesh"\n'
            'file = "cube.stl"\nremanence = 1\n[[magnet]]\nname = "b"\nshape = "mesh"\nfile = "cube.stl"\n'
            'position = [8, 0, 0]\nremanence = 1\n[[magnet]]\nname = "c"\nshape = "sphere"\n'
            'size = 4\nposition = [-6, 0, 0]\nremanence = 1\n')
    with pytest.warns(SceneWarning) as caught:
        load_scene_text(text, base_dir=tmp_path)
    messages = sorted(str(w.message) for w in caught)
    # face-to-face slab of 10 - 8 = 2 mm; the sphere reaches 1 mm into the cube (derived here)
    assert "'a' and 'b' overlap by about 2 mm" in messages[0]
    assert "'a' and 'c' overlap by about 1 mm" in messages[1]
    assert len(messages) == 2


def _two_boxes(tmp_path, shift):
    first = trimesh.creation.box(extents=[10, 10, 10])
    second = trimesh.creation.box(extents=[10, 10, 10])
    second.apply_translation([shift, 0, 0])
    trimesh.util.concatenate([first, second]).export(tmp_path / "two.stl")
    return 'units = "mm"\n[[magnet]]\nshape = "mesh"\nfile = "two.stl"\nremanence = 1\n'


def test_a_mesh_that_encloses_volume_twice_is_refused(tmp_path):
    # two 10 mm cubes overlapping by 6 mm: 1000 + 1000 mm^3 by the divergence theorem, 1400 solid
    with pytest.raises(SceneError, match="encloses some of its volume twice"):
        load_scene_text(_two_boxes(tmp_path, 4.0), base_dir=tmp_path)


def test_separate_bodies_in_one_file_are_one_part_with_a_warning(tmp_path):
    with pytest.warns(SceneWarning, match="holds 2 separate closed bodies"):
        scene = load_scene_text(_two_boxes(tmp_path, 14.0), base_dir=tmp_path)
    assert volume(scene.magnets[0]) == pytest.approx(2000e-9, rel=1e-9)  # 2 x 10^3 mm^3


def test_a_mesh_past_the_triangle_limit_is_refused_by_its_count(tmp_path, monkeypatch):
    import trapscape.scene.meshes as meshes

    sphere = trimesh.creation.icosphere(subdivisions=3, radius=2.0)  # 1,280 triangles
    sphere.export(tmp_path / "ball.stl")
    load_mesh_scene(tmp_path, "ball.stl")  # within the limit
    monkeypatch.setattr(meshes, "MAX_TRIANGLES", 1000)
    with pytest.raises(SceneError, match=r"ball.stl has 1,280 triangles, more than the 1,000 .*"
                                         r"coarser tolerance"):
        load_mesh_scene(tmp_path, "ball.stl")
