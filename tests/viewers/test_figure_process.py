"""The screening's figure drawn by the forked figure process is the file this process draws; its
errors reach the caller, and closing ends it."""
from __future__ import annotations

import pytest
from repo_paths import SAMPLES

from trapscape.physics.analysis.forking import fork_is_safe
from trapscape.physics.analysis.spec import load_spec
from trapscape.scene.errors import SceneError
from trapscape.viewers.figure_process import FigureProcess
from trapscape.viewers.screen_plot import save_screen_figure

PLOTS = "trapscape.viewers.screen_plot"


def _rows(spec):
    keys = [r.key for r in spec.requirements]
    return [{"overrides": [f"gap={gap!r}"], "passed": gap < 3.5,
             "figures": {key: (i + 1) * gap for i, key in enumerate(keys)}}
            for gap in (2.0, 3.0, 4.0, 5.0)]


@pytest.fixture
def figures():
    if not fork_is_safe():
        pytest.skip("this test process may not fork (threads running)")
    with FigureProcess(PLOTS) as process:
        assert process.process is not None and process.process.is_alive()
        yield process
    assert process.process.exitcode is not None  # ended on leaving the block


def test_the_figure_process_writes_the_png_this_process_writes(tmp_path, figures):
    spec = load_spec(SAMPLES / "level_gauge.spec.toml")
    rows = _rows(spec)
    there, here = tmp_path / "there.png", tmp_path / "here.png"
    assert figures.call("save_screen_figure", rows, spec, str(there)) is True
    assert save_screen_figure(rows, spec, str(here)) is True
    assert there.read_bytes() == here.read_bytes()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["here.png", "there.png"]


def test_an_error_in_the_figure_process_is_raised_in_the_caller(tmp_path, figures):
    spec = load_spec(SAMPLES / "level_gauge.spec.toml")
    with pytest.raises(SceneError, match="cannot write"):
        figures.call("save_screen_figure", _rows(spec), spec, str(tmp_path / "no" / "f.png"))
    assert figures.process.is_alive()  # and it goes on serving


def test_after_closing_the_figure_is_drawn_in_this_process(tmp_path, figures):
    spec = load_spec(SAMPLES / "level_gauge.spec.toml")
    figures.close()
    assert figures.call("save_screen_figure", _rows(spec), spec, str(tmp_path / "f.png"))
    assert (tmp_path / "f.png").is_file()
