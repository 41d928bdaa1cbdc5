"""The implant layer draws and exports the shell the analysis computed."""
from __future__ import annotations

import numpy as np
import pytest
import trimesh

from repo_paths import REPO
from trapscape.physics.analysis.run import load_analysis
from trapscape.viewers.export import export
from trapscape.viewers.layers import implant
from trapscape.viewers.layers.context import ViewContext


def test_the_shell_mesh_is_the_analysis_shell_and_exports_as_stl(tmp_path):
    analysis = load_analysis(REPO / "samples" / "bead_chip.toml")
    ctx = ViewContext.of(analysis, traps=False)
    (name, mesh), = implant.meshes(ctx).items()
    assert "0.5 mT" in name
    result = analysis.check_result()["safety"]
    centre = np.asarray(result["implant_centre"])
    radii = np.linalg.norm(np.asarray(mesh.points) - centre, axis=1)
    # 640 rays, not refined between them, against the refined farthest point
    assert radii.max() == pytest.approx(result["implant_radius"], rel=2e-3)
    assert radii.max() <= result["implant_radius"] * (1 + 1e-9)
    written = export(ctx, str(tmp_path / "shell.stl"), layers=("implant",))
    solid = trimesh.load(written[0])
    assert solid.is_watertight and solid.volume > 0
