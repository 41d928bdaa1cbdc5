"""scene.shapes is the lowest layer: it imports numpy, scipy, numba, trimesh and itself only
(DESIGN.md, Data flow and layout)."""
from __future__ import annotations

import ast

from repo_paths import REPO

ALLOWED = {"numpy", "scipy", "numba", "trimesh", "math", "typing", "functools", "dataclasses",
           "weakref", "__future__"}


def imported_modules(path):
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.Import):
            yield from (alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom) and node.level == 0:
            yield node.module


def test_shapes_import_nothing_above_them():
    files = sorted((REPO / "scene" / "shapes").glob("*.py"))
    assert len(files) >= 8
    for path in files:
        for module in imported_modules(path):
            top = module.split(".")[0]
            assert module.startswith("trapscape.scene.shapes") or top in ALLOWED, (path.name, module)
