"""Views draw what physics.analysis computed: nothing under viewers/ imports the physics but
through physics.analysis, names the trap search or the field model, or hides state on the
plotter or the context; and physics.analysis imports no drawing library."""
from __future__ import annotations

import ast
import re

from repo_paths import REPO

# tessellating a part for drawing (scene geometry, no field math); the shapes work owns it
ALLOWED_ELSEWHERE = {("viewers/layers/magnets.py", "trapscape.physics.field.parts")}


def imports(path):
    tree = ast.parse(path.read_text(), filename=str(path))
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom) and node.module:
            yield node.module
        elif isinstance(node, ast.Import):
            yield from (alias.name for alias in node.names)


def python_files(folder):
    return sorted((REPO / folder).rglob("*.py"))


def test_viewers_reach_the_physics_only_through_the_analysis():
    wrong = []
    for path in python_files("viewers"):
        name = str(path.relative_to(REPO))
        for module in imports(path):
            if (module.startswith("trapscape.physics") and not module.startswith(
                    "trapscape.physics.analysis") and (name, module) not in ALLOWED_ELSEWHERE):
                wrong.append(f"{name}: {module}")
    assert not wrong


def test_viewers_neither_run_the_physics_nor_hide_state():
    hidden = re.compile(r"\bfind_traps\b|\bFieldModel\b|__dict__|plotter\._|setattr\(\s*(ctx|plotter)"
                        r"|\bctx\._(?!notes)")
    found = [f"{path.relative_to(REPO)}:{number}: {line.strip()}"
             for path in python_files("viewers")
             for number, line in enumerate(path.read_text().splitlines(), 1)
             if hidden.search(line) and "magnets.py" not in path.name]
    assert not found


def test_the_analysis_layer_draws_nothing():
    for path in python_files("physics/analysis"):
        for module in imports(path):
            assert not module.startswith(("pyvista", "vtk", "matplotlib", "trapscape.viewers")), \
                f"{path.name} imports {module}"
