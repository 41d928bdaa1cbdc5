"""Checked meshes kept on disk (scene/mesh_cache.py): a file read again gives the same arrays and
the same warnings without trimesh or the checks, a damaged entry is read again, a file that fails
a check is not stored, and TRAPSCAPE_CACHE=off stores nothing."""
from __future__ import annotations

import numpy as np
import pytest
import trimesh

import trapscape.scene.meshes as meshes
from trapscape.scene.errors import SceneError, SceneWarning
from trapscape.scene.loader import load_scene_text
from trapscape.scene.mesh_cache import cache_root


def _scene(folder, file_name):
    text = f'units = "mm"\n[[magnet]]\nname = "part"\nshape = "mesh"\nfile = "{file_name}"\n' \
           f'remanence = 1.2\n'
    return load_scene_text(text, base_dir=folder)


@pytest.fixture
def cache(tmp_path, monkeypatch):
    monkeypatch.setenv("TRAPSCAPE_CACHE", str(tmp_path / "cache"))
    return tmp_path / "cache" / "meshes"


def _inverted_box(folder):
    box = trimesh.creation.box(extents=[2, 3, 4])
    box.invert()
    box.export(folder / "inverted.stl")


def test_a_file_read_again_comes_from_the_cache_with_its_warning(tmp_path, cache, monkeypatch):
    _inverted_box(tmp_path)
    with pytest.warns(SceneWarning, match="inside-out"):
        first = _scene(tmp_path, "inverted.stl").magnets[0]
    assert len(list(cache.glob("*.npz"))) == 1

    def no_reading(*args, **kwargs):
        raise AssertionError("read and checked again although it was on disk")

    monkeypatch.setattr(meshes, "_checked_mesh", no_reading)
    with pytest.warns(SceneWarning, match="inside-out"):
        second = _scene(tmp_path, "inverted.stl").magnets[0]
    np.testing.assert_array_equal(first.mesh_vertices, second.mesh_vertices)
    np.testing.assert_array_equal(first.mesh_faces, second.mesh_faces)
    assert second.mesh_faces.dtype == np.int64 and not second.mesh_vertices.flags.writeable


def test_changed_bytes_are_read_again(tmp_path, cache):
    trimesh.creation.box(extents=[2, 2, 2]).export(tmp_path / "box.stl")
    small = _scene(tmp_path, "box.stl").magnets[0]
    trimesh.creation.box(extents=[4, 2, 2]).export(tmp_path / "box.stl")
    large = _scene(tmp_path, "box.stl").magnets[0]
    assert np.ptp(large.mesh_vertices[:, 0]) == pytest.approx(2 * np.ptp(small.mesh_vertices[:, 0]))
    assert len(list(cache.glob("*.npz"))) == 2


def test_a_damaged_entry_is_read_again(tmp_path, cache):
    trimesh.creation.box(extents=[2, 2, 2]).export(tmp_path / "box.stl")
    first = _scene(tmp_path, "box.stl").magnets[0]
    (stored,) = cache.glob("*.npz")
    stored.write_bytes(b"not a mesh")
    again = _scene(tmp_path, "box.stl").magnets[0]
    np.testing.assert_array_equal(first.mesh_vertices, again.mesh_vertices)
    assert stored.read_bytes() != b"not a mesh"


def test_a_refused_file_is_not_stored(tmp_path, cache):
    mesh = trimesh.creation.box(extents=[2, 2, 2])
    trimesh.Trimesh(mesh.vertices, mesh.faces[:-1], process=False).export(tmp_path / "open.stl")
    for _ in range(2):
        with pytest.raises(SceneError, match="is not closed"):
            _scene(tmp_path, "open.stl")
    assert not list(cache.glob("*.npz"))


def test_off_means_no_files(tmp_path, monkeypatch):
    monkeypatch.setenv("TRAPSCAPE_CACHE", "off")
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path))  # where it would go otherwise
    trimesh.creation.box(extents=[2, 2, 2]).export(tmp_path / "box.stl")
    _scene(tmp_path, "box.stl")
    assert cache_root() is None and not list(tmp_path.rglob("*.npz"))
