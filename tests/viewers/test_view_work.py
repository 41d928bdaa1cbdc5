"""A view computes only what its layers need: a picture of the magnets alone runs no trap
search; one with markers runs it once."""
from __future__ import annotations

from trapscape.viewers.render import prefer_egl

prefer_egl()

from repo_paths import SAMPLES  # noqa: E402


def _picture(layers):
    from trapscape.physics.analysis.run import Analysis
    from trapscape.scene.loader import load_scene
    from trapscape.viewers.layers.context import ViewContext
    from trapscape.viewers.render import RenderOptions, build_picture

    analysis = Analysis(load_scene(str(SAMPLES / "level_gauge.toml")))
    calls = []
    original = analysis.traps

    def counted(progress=None):
        calls.append(1)
        return original(progress=progress)

    analysis.traps = counted
    ctx = ViewContext.of(analysis, grid_resolution=12, section_resolution=40)
    picture = build_picture(ctx, RenderOptions(layers=layers, size=(320, 240)))
    picture.plotter.close()
    return calls


def test_magnets_only_view_runs_no_trap_search():
    assert _picture(("magnets",)) == []


def test_markers_view_runs_the_trap_search_once():
    assert _picture(("magnets", "section", "wells", "markers")) == [1]
