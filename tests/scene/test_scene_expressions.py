"""Safe arithmetic in scene files: what it computes and what it refuses."""
from __future__ import annotations

import math

import pytest

from trapscape.scene.errors import SceneError
from trapscape.scene.expressions import evaluate, evaluate_params


@pytest.mark.parametrize("text, expected", [
    ("1 + 2 * 3", 7.0),
    ("(1 + 2) * 3", 9.0),
    ("-2 ** 2", -4.0),  # Python precedence: unary minus binds looser than **
    ("2 ** -1", 0.5),
    ("7 % 4", 3.0),
    ("gap / 2 + t", 4.5),
    ("sqrt(16) + cos(0) + sin(0) + tan(0)", 5.0),
    ("degrees(pi)", 180.0),
    ("radians(180)", math.pi),
    ("hypot(3, 4) + max(1, 2) - min(1, 2) + abs(-1)", 7.0),
    ("atan2(1, 1) * 4", math.pi),
])
def test_arithmetic(text, expected):
    assert evaluate(text, {"gap": 5.0, "t": 2.0}, "here") == pytest.approx(expected, rel=1e-15)


@pytest.mark.parametrize("text, fragment", [
    ("__import__('os').system('true')", "not plain arithmetic"),
    ("__import__('os')", "not an allowed function"),
    ("open('x')", "not an allowed function"),
    ("gap.real", "not plain arithmetic"),
    ("[1, 2]", "not plain arithmetic"),
    ("'text'", "not a number"),
    ("lambda: 1", "not plain arithmetic"),
    ("1 if gap else 2", "not plain arithmetic"),
    ("gap +* 2", "cannot read the expression"),
    ("1 / (gap - 5)", "divides by zero"),
    ("sqrt(-1)", "cannot be computed"),
    ("10 ** 10 ** 10", "cannot be computed"),
    ("(-8) ** (1/3)", "finite real number"),
    ("", "empty"),
    ("1" * 600, "longer than"),
])
def test_refused(text, fragment):
    with pytest.raises(SceneError, match=fragment):
        evaluate(text, {"gap": 5.0}, "f.toml, size")


def test_unknown_name_suggests_the_closest_parameter():
    with pytest.raises(SceneError, match=r"unknown parameter 'gapp' \(did you mean \"gap\"\?\)"):
        evaluate("gapp + 1", {"gap": 1.0, "thickness": 2.0}, "f.toml")


def test_params_refer_to_earlier_ones_and_overrides_propagate():
    raw = {"a": 2, "b": "a * 3", "c": "a + b"}
    assert evaluate_params(raw, {}, "f.toml") == {"a": 2.0, "b": 6.0, "c": 8.0}
    assert evaluate_params(raw, {"a": "10"}, "f.toml") == {"a": 10.0, "b": 30.0, "c": 40.0}
    assert evaluate_params(raw, {"b": "a"}, "f.toml")["c"] == 4.0


def test_a_parameter_defined_further_down_is_named_as_such():
    with pytest.raises(SceneError, match="defined further down"):
        evaluate_params({"a": "b + 1", "b": 2}, {}, "f.toml")


def test_override_of_an_unknown_parameter():
    with pytest.raises(SceneError, match=r"--set gp=.*did you mean \"gap\""):
        evaluate_params({"gap": 1}, {"gp": "2"}, "f.toml")
