"""The seams hold: no code outside its room branches on a magnet shape's name or a probe kind's
name. A shape is one module of scene/shapes (physics/field's closed-form table picks the kernel
that draws it); a probe kind is one law in physics/probe plus its key declaration in
scene/probe_kinds.py."""
from __future__ import annotations

import ast

import pytest

from test_layers import modules
from trapscape.physics.probe.registry import kinds
from trapscape.scene.shapes import SHAPES

SHAPE_NAMES = set(SHAPES)
KIND_NAMES = set(kinds())


def _strings(node) -> set:
    if isinstance(node, ast.Constant) and isinstance(node.value, str):
        return {node.value}
    if isinstance(node, (ast.Tuple, ast.List, ast.Set)):
        return set().union(*(_strings(e) for e in node.elts)) if node.elts else set()
    return set()


def compared_names(path) -> list[tuple[int, str]]:
    """(line, name) of every comparison (==, !=, in, not in, match case) against a literal."""
    found = []
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.Compare):
            for operand in [node.left, *node.comparators]:
                found += [(node.lineno, name) for name in _strings(operand)]
        elif isinstance(node, ast.match_case):
            pattern = node.pattern
            if isinstance(pattern, ast.MatchValue):
                found += [(node.pattern.lineno, name) for name in _strings(pattern.value)]
    return found


def _outside(prefixes):
    return sorted(name for name in modules() if not name.startswith(prefixes))


@pytest.mark.parametrize("module", _outside(("trapscape.scene.shapes",)))
def test_no_branch_on_a_shape_name_outside_the_shapes(module):
    hits = [(line, name) for line, name in compared_names(modules()[module]) if name in SHAPE_NAMES]
    assert not hits, f"{module} branches on shape names at {hits}: ask scene.shapes instead"


@pytest.mark.parametrize("module", _outside(("trapscape.physics.probe", "trapscape.scene.probe")))
def test_no_branch_on_a_probe_kind_outside_its_law(module):
    hits = [(line, name) for line, name in compared_names(modules()[module]) if name in KIND_NAMES]
    assert not hits, f"{module} branches on probe kinds at {hits}: ask the probe's law instead"


def test_the_check_sees_a_branch(tmp_path):
    sample = tmp_path / "branchy.py"
    sample.write_text('if part.shape == "box":\n    pass\nif kind in ("soft", "weak"):\n    pass\n')
    names = {name for _, name in compared_names(sample)}
    assert {"box", "soft", "weak"} <= names
    assert {"box", "ring", "mesh", "prism"} <= SHAPE_NAMES and {"soft", "magnet", "weak"} <= KIND_NAMES
