"""Fits of large meshes kept on disk: the same part is fitted once, a damaged file is fitted
again, and the cache can be turned off."""
from __future__ import annotations

import numpy as np
import pytest
from repo_paths import SAMPLES

from trapscape.physics.field import parts
from trapscape.physics.field.fit_cache import cache_folder
from trapscape.scene.loader import load_scene


@pytest.fixture
def mesh_magnet(tmp_path, monkeypatch):
    monkeypatch.setenv("TRAPSCAPE_CACHE", str(tmp_path / "cache"))
    magnet = load_scene(SAMPLES / "arc_rotor.toml").magnets[0]
    assert len(parts.body_mesh(magnet)[1]) >= parts.EXACT_TRIANGLE_LIMIT  # it is fitted
    return magnet


def test_the_same_part_is_fitted_once_and_gives_the_same_dipoles(mesh_magnet, monkeypatch):
    first = parts.part_sources(mesh_magnet, 0)[0]
    assert len(list(cache_folder().glob("*.npz"))) == 1

    def no_fit(*args, **kwargs):
        raise AssertionError("fitted again although the fit was on disk")

    monkeypatch.setattr(parts, "fit_equivalent_dipoles", no_fit)
    second = parts.part_sources(mesh_magnet, 0)[0]
    np.testing.assert_array_equal(first.dipole_positions, second.dipole_positions)
    np.testing.assert_array_equal(first.dipole_moments, second.dipole_moments)


def test_a_damaged_file_is_fitted_again(mesh_magnet):
    first = parts.part_sources(mesh_magnet, 0)[0]
    (stored,) = cache_folder().glob("*.npz")
    stored.write_bytes(b"not a fit")
    again = parts.part_sources(mesh_magnet, 0)[0]
    np.testing.assert_array_equal(first.dipole_moments, again.dipole_moments)
    assert stored.read_bytes() != b"not a fit"


def test_off_means_no_files(tmp_path, monkeypatch):
    monkeypatch.setenv("TRAPSCAPE_CACHE", "off")
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path))  # where it would go otherwise
    magnet = load_scene(SAMPLES / "arc_rotor.toml").magnets[0]
    parts.part_sources(magnet, 0)
    assert cache_folder() is None and not list(tmp_path.rglob("*.npz"))
