"""Restructuring the code must not change a number: every sample's `check`, `traps`, `hold` JSON
and `field` CSV equal the stored ones (tests/golden/, written by tests/golden_outputs.py before
the restructuring) within 1e-12 relative, apart from the version string and the scene's folder."""
from __future__ import annotations

import csv
import json
import math
from pathlib import Path

import pytest

from golden_outputs import GOLDEN, kinds, produce, sample_names

RTOL = 1e-12
IGNORED = {"trapscape_version"}


def assert_same(new, old, where="$"):
    if isinstance(old, dict):
        assert isinstance(new, dict) and set(new) == set(old), f"{where}: keys {set(new) ^ set(old)}"
        for key in old:
            if key in IGNORED:
                continue
            if key == "scene":  # an absolute path: the clone may live in another folder
                assert Path(new[key]).name == Path(old[key]).name, where
                continue
            assert_same(new[key], old[key], f"{where}.{key}")
    elif isinstance(old, list):
        assert isinstance(new, list) and len(new) == len(old), f"{where}: length {len(new)} != {len(old)}"
        for i, (a, b) in enumerate(zip(new, old)):
            assert_same(a, b, f"{where}[{i}]")
    elif isinstance(old, float) and not isinstance(old, bool):
        assert isinstance(new, (int, float)) and math.isclose(new, old, rel_tol=RTOL, abs_tol=0.0), \
            f"{where}: {new!r} != {old!r}"
    else:
        assert new == old, f"{where}: {new!r} != {old!r}"


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
            assert_same(new_rows, old_rows, path.name)


def test_every_command_has_stored_outputs():
    for sample in sample_names():
        for kind in kinds(sample):
            assert (GOLDEN / f"{sample}.{kind}").is_file()


def test_the_comparison_can_fail():
    with pytest.raises(AssertionError):
        assert_same({"a": [1.0, 2.0]}, {"a": [1.0, 2.0 * (1 + 1e-11)]})
