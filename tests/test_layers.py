"""The layer rule of DESIGN.md, read from the source with `ast`: every import (at module level or
inside a function) goes downwards or stays in its own room, and no modules import each other in a
cycle.

    scene.shapes <- scene <- physics.field <- physics.probe <- physics.traps, physics.holding
    <- physics.analysis <- viewers

Rooms on one level (physics.traps, physics.holding) do not import each other either."""
from __future__ import annotations

import ast
import tomllib
from pathlib import Path

import pytest

from repo_paths import REPO

PACKAGE_DIRS = {"trapscape.scene": "scene", "trapscape.physics": "physics",
                "trapscape.viewers": "viewers"}
# room -> level; a module belongs to the longest room that prefixes its name
LEVELS = {
    "trapscape.scene.shapes": 0,
    "trapscape.scene": 1,
    "trapscape.physics.field": 2,
    "trapscape.physics.probe": 3,
    "trapscape.physics.traps": 4,
    "trapscape.physics.holding": 4,
    "trapscape.physics.safety": 4,
    "trapscape.physics.analysis": 5,
    "trapscape.physics": 5,  # the package's own __init__
    "trapscape.viewers": 6,
}
DRAWING = ("pyvista", "vtk", "matplotlib")


def modules() -> dict[str, Path]:
    found = {}
    for package, folder in PACKAGE_DIRS.items():
        for path in sorted((REPO / folder).rglob("*.py")):
            parts = list(path.relative_to(REPO / folder).with_suffix("").parts)
            if parts[-1] == "__init__":
                parts.pop()
            found[".".join([package, *parts])] = path
    return found


def room(module: str) -> str:
    return max((r for r in LEVELS if module == r or module.startswith(r + ".")), key=len)


def imports(module: str, path: Path) -> set[str]:
    """Every module this one imports, absolute names (relative imports resolved)."""
    tree = ast.parse(path.read_text(), filename=str(path))
    is_package = path.name == "__init__.py"
    names = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            names.update(alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                anchor = module.split(".")
                anchor = anchor[:len(anchor) - node.level + (1 if is_package else 0)]
                base = ".".join(anchor + ([base] if base else []))
            submodules = {f"{base}.{alias.name}" for alias in node.names} & KNOWN
            # `from pkg import mod` needs mod, not pkg's other modules; `from mod import name` mod
            names.update(submodules or {base})
    return names


KNOWN = set(modules())


def project_graph() -> dict[str, set[str]]:
    found = modules()
    return {name: {other for other in imports(name, path) if other in found and other != name}
            for name, path in found.items()}


GRAPH = project_graph()


def test_every_room_has_modules():
    rooms = {room(name) for name in GRAPH}
    assert {"trapscape.scene", "trapscape.physics.field", "trapscape.physics.probe",
            "trapscape.physics.traps", "trapscape.physics.holding",
            "trapscape.viewers"} <= rooms


def allowed(module: str, other: str) -> bool:
    mine, theirs = room(module), room(other)
    return theirs == mine or LEVELS[theirs] < LEVELS[mine]


@pytest.mark.parametrize("module", sorted(GRAPH))
def test_imports_go_downwards(module):
    for other in GRAPH[module]:
        assert allowed(module, other), \
            f"{module} ({room(module)}) imports {other} ({room(other)}): upwards or sideways"


def test_no_import_cycles():
    """Depth-first search for a cycle among project modules (function-local imports count)."""
    state, stack = {}, []

    def visit(node):
        state[node] = "open"
        stack.append(node)
        for nxt in sorted(GRAPH[node]):
            if state.get(nxt) == "open":
                cycle = stack[stack.index(nxt):] + [nxt]
                raise AssertionError("import cycle: " + " -> ".join(cycle))
            if nxt not in state:
                visit(nxt)
        stack.pop()
        state[node] = "done"

    for node in sorted(GRAPH):
        if node not in state:
            visit(node)


@pytest.mark.parametrize("module", sorted(m for m in GRAPH if not m.startswith("trapscape.viewers")))
def test_engine_never_draws(module):
    drawn = {name for name in imports(module, modules()[module]) if name.split(".")[0] in DRAWING}
    assert not drawn, f"{module} imports {sorted(drawn)}: drawing belongs to viewers"


def test_every_package_is_installed():
    """A folder with an __init__.py that pyproject's package list misses is left out of a wheel."""
    listed = set(tomllib.loads((REPO / "pyproject.toml").read_text())["tool"]["setuptools"]["packages"])
    packages = {name for name, path in modules().items() if path.name == "__init__.py"}
    assert packages == listed


def test_the_rule_can_fail():
    assert room("trapscape.physics.field.model") == "trapscape.physics.field"
    assert not allowed("trapscape.scene.shapes.box", "trapscape.scene.errors")  # upwards
    assert not allowed("trapscape.physics.traps.scan", "trapscape.physics.holding.pull")  # sideways
    assert allowed("trapscape.viewers.render", "trapscape.physics.analysis.run")
    assert "trapscape.scene.units" in imports("trapscape.scene.measures",
                                              modules()["trapscape.scene.measures"])
