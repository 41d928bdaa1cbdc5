"""Restructuring the code must not change a number: every sample's `check`, `traps`, `hold` JSON
and `field` CSV equal the stored ones (tests/golden/, written by tests/golden_outputs.py before
the restructuring) within 1e-12 relative, apart from the version string and the scene's folder.
A JSON list of numbers (a position, a stiffness per direction) is compared relative to its
largest entry: a coordinate that is zero to rounding (3e-16 m on a symmetry plane) has no digits
of its own to keep. Lengths (keys naming a position or coordinate, in the scene's unit) are
also equal within LENGTH of that unit: an equilibrium at the origin has no other scale."""
from __future__ import annotations

import csv
import json
import math
from pathlib import Path

import pytest

from golden_outputs import GOLDEN, kinds, produce, sample_names

RTOL = 1e-12
LENGTH = 1e-12  # of the scene's unit (1e-15 m for mm): far below any solver's precision
IGNORED = {"trapscape_version"}


def assert_same(new, old, where="$", vectors=True):
    if isinstance(old, dict):
        assert isinstance(new, dict) and set(new) == set(old), f"{where}: keys {set(new) ^ set(old)}"
        for key in old:
            if key in IGNORED:
                continue
            if key == "scene":  # an absolute path: the clone may live in another folder
                assert Path(new[key]).name == Path(old[key]).name, where
                continue
            if _is_length(key):
                _assert_lengths(new[key], old[key], f"{where}.{key}")
            else:
                assert_same(new[key], old[key], f"{where}.{key}")
    elif isinstance(old, list):
        assert isinstance(new, list) and len(new) == len(old), f"{where}: length {len(new)} != {len(old)}"
        scale = _vector_scale(old) if vectors else 0.0
        for i, (a, b) in enumerate(zip(new, old)):
            assert_same(a, b, f"{where}[{i}]", vectors) if scale == 0.0 else \
                _assert_close(a, b, RTOL * scale, f"{where}[{i}]")
    elif isinstance(old, float) and not isinstance(old, bool):
        _assert_close(new, old, 0.0, where)
    else:
        assert new == old, f"{where}: {new!r} != {old!r}"


def _is_length(key) -> bool:
    return "position" in key or key == "coordinate"


def _assert_lengths(new, old, where):
    if isinstance(old, list):
        assert isinstance(new, list) and len(new) == len(old), where
        scale = max(_vector_scale(old), LENGTH / RTOL)
        for i, (a, b) in enumerate(zip(new, old)):
            _assert_lengths(a, b, f"{where}[{i}]") if isinstance(b, list) else \
                _assert_close(a, b, RTOL * scale, f"{where}[{i}]")
    elif isinstance(old, float):
        _assert_close(new, old, LENGTH, where)
    else:
        assert new == old, f"{where}: {new!r} != {old!r}"


def _vector_scale(values) -> float:
    """The largest magnitude of a list of numbers; 0 when anything else is in it."""
    if not values or not all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in values):
        return 0.0
    return max(abs(v) for v in values)


def _assert_close(new, old, abs_tol, where):
    assert isinstance(new, (int, float)) and math.isclose(new, old, rel_tol=RTOL, abs_tol=abs_tol), \
        f"{where}: {new!r} != {old!r}"


def read_csv(path: Path):
    with open(path, newline="") as handle:
        rows = list(csv.reader(handle))
    return rows[0], [[_cell(v) for v in row] for row in rows[1:]]


def _cell(text: str):
    """A number as float; text columns (a magnet's name, empty in air) as they are."""
    try:
        return float(text)
    except ValueError:
        return text


@pytest.mark.parametrize("sample", sample_names())
def test_outputs_unchanged(sample, tmp_path):
    for path in produce(sample, tmp_path):
        old = GOLDEN / path.name
        assert old.is_file(), f"no stored output {old.name}: run python tests/golden_outputs.py"
        if path.suffix == ".json":
            assert_same(json.loads(path.read_text()), json.loads(old.read_text()), path.name)
        else:
            (new_header, new_rows), (old_header, old_rows) = read_csv(path), read_csv(old)
            assert new_header == old_header
            assert_same(new_rows, old_rows, path.name, vectors=False)  # a row mixes units


def test_every_command_has_stored_outputs():
    for sample in sample_names():
        for kind in kinds(sample):
            assert (GOLDEN / f"{sample}.{kind}").is_file()


def test_the_comparison_can_fail():
    with pytest.raises(AssertionError):
        assert_same({"a": [1.0, 2.0]}, {"a": [1.0, 2.0 * (1 + 1e-11)]})
    with pytest.raises(AssertionError):  # a small entry is held to its vector's scale, not freed
        assert_same({"a": [1e-3, 2.0]}, {"a": [1e-3 + 1e-11, 2.0]})
    with pytest.raises(AssertionError):  # a CSV row mixes units: each cell on its own
        assert_same([[3.2e-16, 1.0]], [[3.0e-16, 1.0]], vectors=False)


def test_a_coordinate_zero_to_rounding_compares_to_its_vector():
    assert_same({"position": [3.2e-16, 0.0, 1.2e-2]}, {"position": [3.0e-16, 0.0, 1.2e-2]})
    assert_same({"coordinate": 3.2e-16, "pass_position": [3.2e-16, 0.0, 0.0]},
                {"coordinate": 2.9e-16, "pass_position": [2.9e-16, 0.0, 0.0]})
    with pytest.raises(AssertionError):  # a length off by more than LENGTH of the unit
        assert_same({"position": [3e-12, 0.0, 0.0]}, {"position": [0.0, 0.0, 0.0]})
