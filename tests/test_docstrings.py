"""Every public function of field, probe, traps and analysis documents its arguments (DEVELOPERS.md,
Conventions): read with `ast`, a public function or a public method of a public class that takes
arguments besides self/cls needs a numpydoc `Parameters` section, and a `Returns` section too when
its body returns a value."""
from __future__ import annotations

import ast
import re
import textwrap
from pathlib import Path

import pytest

from repo_paths import REPO

ROOMS = ("physics/field", "physics/probe", "physics/traps", "physics/analysis")
_FUNCTIONS = (ast.FunctionDef, ast.AsyncFunctionDef)


def _has_section(docstring: str, title: str) -> bool:
    return re.search(rf"^\s*{title}\s*\n\s*-{{3,}}\s*$", docstring, re.MULTILINE) is not None


def _takes_arguments(function) -> bool:
    a = function.args
    named = [x.arg for x in a.posonlyargs + a.args + a.kwonlyargs]
    return bool([n for n in named if n not in ("self", "cls")] or a.vararg or a.kwarg)


def _returns_a_value(function) -> bool:
    """A `return <value>` in the function's own body (not in a nested function or class)."""
    stack = list(function.body)
    while stack:
        node = stack.pop()
        if isinstance(node, (*_FUNCTIONS, ast.Lambda, ast.ClassDef)):
            continue
        if isinstance(node, ast.Return) and node.value is not None:
            return True
        stack.extend(ast.iter_child_nodes(node))
    return False


def _public_functions(tree):
    """(qualified name, node) of the module's public functions and public classes' methods."""
    for node in tree.body:
        if isinstance(node, _FUNCTIONS) and not node.name.startswith("_"):
            yield node.name, node
        elif isinstance(node, ast.ClassDef) and not node.name.startswith("_"):
            for member in node.body:
                if isinstance(member, _FUNCTIONS) and not member.name.startswith("_"):
                    yield f"{node.name}.{member.name}", member


def undocumented(path: Path) -> list[str]:
    """'file:line name: missing Section' for each public function of the file that lacks one."""
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    problems = []
    for name, function in _public_functions(tree):
        if not _takes_arguments(function):
            continue
        docstring = ast.get_docstring(function) or ""
        missing = [] if _has_section(docstring, "Parameters") else ["Parameters"]
        if _returns_a_value(function) and not (_has_section(docstring, "Returns")
                                               or _has_section(docstring, "Yields")):
            missing.append("Returns")
        if missing:
            problems.append(f"{path}:{function.lineno} {name}: missing {', '.join(missing)}")
    return problems


@pytest.mark.parametrize("room", ROOMS)
def test_public_functions_have_numpydoc_sections(room):
    files = sorted((REPO / room).rglob("*.py"))
    assert files, f"no modules found under {room}"
    problems = [p for f in files for p in undocumented(f)]
    assert not problems, "public functions without numpydoc sections:\n" + "\n".join(problems)


def test_the_checker_flags_a_function_without_sections(tmp_path):
    module = tmp_path / "toy.py"
    module.write_text(textwrap.dedent('''
        def bare(points):
            """Only a summary."""
            return points

        def no_returns(points):
            """A summary.

            Parameters
            ----------
            points : array_like, shape (N, 3)
                m.
            """
            return points

        def documented(points):
            """A summary.

            Parameters
            ----------
            points : array_like, shape (N, 3)
                m.

            Returns
            -------
            numpy.ndarray, shape (N, 3)
                m.
            """
            def helper():
                return 1
            return points

        def no_arguments():
            return 1

        def _private(points):
            return points

        class Public:
            def method(self, x):
                return x

            @property
            def value(self):
                return 1

        class _Private:
            def method(self, x):
                return x
    '''))
    problems = undocumented(module)
    names = [p.split(" ", 1)[1] for p in problems]
    assert names == ["bare: missing Parameters, Returns", "no_returns: missing Returns",
                     "Public.method: missing Parameters, Returns"]
