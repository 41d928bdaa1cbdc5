"""The screening's figure drawn by the forked figure process is the file this process draws; its
errors reach the caller, and closing ends it. Run in a fresh interpreter: a test process that
has started numba's threads (other tests do) may not fork, and draws in-process instead."""
from __future__ import annotations

import json
import subprocess
import sys

from repo_paths import SAMPLES

CHECKS = """
import json, sys
from pathlib import Path
from trapscape.physics.analysis.spec import load_spec
from trapscape.scene.errors import SceneError
from trapscape.viewers.figure_process import FigureProcess
from trapscape.viewers.screen_plot import save_screen_figure

spec, folder = load_spec(sys.argv[1]), Path(sys.argv[2])
keys = [r.key for r in spec.requirements]
rows = [{"overrides": [f"gap={gap!r}"], "passed": gap < 3.5,
         "figures": {key: (i + 1) * gap for i, key in enumerate(keys)}} for gap in (2.0, 3.0, 5.0)]
seen = {}
with FigureProcess("trapscape.viewers.screen_plot") as figures:
    seen["forked"] = figures.process is not None and figures.process.is_alive()
    seen["drawn"] = figures.call("save_screen_figure", rows, spec, str(folder / "there.png"))
    try:
        figures.call("save_screen_figure", rows, spec, str(folder / "no" / "f.png"))
    except SceneError as error:
        seen["error"] = str(error)
    seen["alive after the error"] = figures.process.is_alive()
seen["ended"] = figures.process.exitcode is not None
seen["drawn here after"] = figures.call("save_screen_figure", rows, spec, str(folder / "late.png"))
save_screen_figure(rows, spec, str(folder / "here.png"))
seen["same"] = (folder / "there.png").read_bytes() == (folder / "here.png").read_bytes()
seen["files"] = sorted(p.name for p in folder.iterdir())
print(json.dumps(seen))
"""


def test_the_figure_process_draws_this_process_figure_and_reports_its_errors(tmp_path):
    done = subprocess.run([sys.executable, "-c", CHECKS, str(SAMPLES / "level_gauge.spec.toml"),
                           str(tmp_path)], capture_output=True, text=True, timeout=300)
    assert done.returncode == 0, done.stderr[-2000:]
    seen = json.loads(done.stdout)
    assert seen["forked"] and seen["drawn"] is True
    assert seen["same"]
    assert "cannot write" in seen.get("error", ""), seen
    assert seen["alive after the error"] and seen["ended"]
    assert seen["drawn here after"] is True
    assert seen["files"] == ["here.png", "late.png", "there.png"]  # no temporary file left
