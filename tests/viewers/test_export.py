"""Exports: the .vti grid reads back with the same values in the scene's unit, the .vtp tags
every object with its layer, and an exported STL well is a closed surface around its trap."""
from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from trapscape.viewers.render import prefer_egl

prefer_egl()

import pyvista as pv  # noqa: E402
from repo_paths import SAMPLES  # noqa: E402

from trapscape.scene.loader import load_scene  # noqa: E402
from trapscape.viewers.export import export  # noqa: E402
from trapscape.viewers.layers.context import ViewContext  # noqa: E402


@pytest.fixture(scope="module")
def chip():
    return ViewContext.of(load_scene(str(SAMPLES / "bead_chip.toml")), grid_resolution=24,
                       section_resolution=60)


@pytest.fixture(scope="module")
def gauge():
    return ViewContext.of(load_scene(str(SAMPLES / "level_gauge.toml")), grid_resolution=24,
                       section_resolution=60)


def test_vti_round_trip_keeps_values_and_unit(gauge, tmp_path):
    # the gauge's box holds the magnets, so some points are not open to the probe
    path = tmp_path / "field.vti"
    export(gauge, str(path), resolution=14)
    grid = pv.read(path)
    assert str(grid.field_data["length_unit"][0]) == gauge.unit
    assert float(grid.field_data["metres_per_length_unit"][0]) == gauge.scale
    # the points are in the scene's unit: at them (in metres) the model gives the stored B
    points_m = np.asarray(grid.points) * gauge.scale
    B = gauge.analysis.model.B(points_m)
    np.testing.assert_allclose(grid["B_T"], B, rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(grid["B_abs_T"], np.linalg.norm(B, axis=1), rtol=1e-12)
    # u = B^2 / (2 mu0), vacuum energy density (Jackson, Classical Electrodynamics, eq. 5.148)
    np.testing.assert_allclose(grid["energy_density_J_per_m3"],
                               np.linalg.norm(B, axis=1) ** 2 / (2 * 4e-7 * np.pi), rtol=1e-9)
    fits = grid["probe_fits"].astype(bool)
    assert fits.any() and not fits.all()
    assert np.all(grid["probe_energy_J"][~fits] == 0.0)


def test_vtp_tags_objects_with_their_layer(chip, tmp_path):
    path = tmp_path / "scene.vtp"
    export(chip, str(path), layers=("magnets", "markers", "wells"))
    mesh = pv.read(path)
    names = [str(n) for n in mesh.field_data["layer_names"]]
    assert names == ["magnets", "markers", "wells"]
    objects = [str(n) for n in mesh.field_data["object_names"]]
    assert len(objects) == len(chip.scene.magnets) + len(chip.equilibria) + sum(
        getattr(e.source, "well", None) is not None for e in chip.equilibria)
    assert set(np.unique(mesh.cell_data["layer_id"])) == {0, 1, 2}


def winding_number(vertices, faces, point) -> float:
    """Solid angle of a closed triangle mesh seen from a point over 4 pi: 1 inside, 0 outside
    (Van Oosterom & Strackee, IEEE Trans. Biomed. Eng. 30, 125 (1983))."""
    a, b, c = (vertices[faces[:, k]] - point for k in range(3))
    la, lb, lc = (np.linalg.norm(v, axis=1) for v in (a, b, c))
    numerator = np.einsum("ij,ij->i", a, np.cross(b, c))
    denominator = (la * lb * lc + np.einsum("ij,ij->i", a, b) * lc
                   + np.einsum("ij,ij->i", b, c) * la + np.einsum("ij,ij->i", c, a) * lb)
    return float(2.0 * np.arctan2(numerator, denominator).sum() / (4.0 * np.pi))


@pytest.mark.parametrize("which", ["gauge", "chip"])
def test_stl_well_is_closed_and_holds_its_trap(which, gauge, chip, tmp_path):
    import trimesh

    ctx = {"gauge": gauge, "chip": chip}[which]
    path = tmp_path / "wells.stl"
    written = export(ctx, str(path), layers=("wells",))
    assert written == [str(path)]
    mesh = trimesh.load(path, force="mesh")
    assert mesh.is_watertight, "an exported well must be a closed surface"
    parts = mesh.split(only_watertight=True)
    stable = [e for e in ctx.equilibria if e.kind == "stable"]
    assert stable and len(parts) >= 1
    for equilibrium in stable:
        inside = [winding_number(p.vertices, p.faces, equilibrium.position) for p in parts]
        # every stable trap lies in one of the wells (its winding number is 1 there, 0 elsewhere)
        assert max(inside) == pytest.approx(1.0, abs=1e-6)


def test_stl_per_layer_files(gauge, tmp_path):
    written = export(gauge, str(tmp_path / "out.stl"), layers=("magnets", "wells"))
    assert [Path(p).name for p in written] == ["out-magnets.stl", "out-wells.stl"]
    magnets = pv.read(written[0])
    lower, upper = np.array(magnets.bounds).reshape(3, 2).T
    # the ring of blocks in the scene's unit (mm): 14 mm to each block's centre, 5 mm blocks
    # (samples/level_gauge.toml)
    assert upper[0] == pytest.approx(14.0 + 2.5, abs=1e-6)
    assert lower[2] == pytest.approx(-1.5, abs=1e-6)
