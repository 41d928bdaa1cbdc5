"""The --points reader: numpy's fast reader where every cell is a number, the line-by-line reader
(with the line named) otherwise; both give the same points."""
from __future__ import annotations

import numpy as np
import pytest

from trapscape.scene.errors import SceneError
from trapscape.viewers.commands.field import _parsed_by_line, _read_points


def test_fast_and_line_by_line_readers_agree_on_blank_lines_crlf_and_extra_columns(tmp_path):
    rng = np.random.default_rng(3)
    points = rng.uniform(-1e3, 1e3, (500, 3))
    lines = ["x,y,z,label"] + [f"{x!r},{y!r},{z!r},p{i}" for i, (x, y, z) in enumerate(points.tolist())]
    lines.insert(100, "")
    path = tmp_path / "p.csv"
    path.write_bytes(("\r\n".join(lines) + "\r\n").encode())
    fast = _read_points(path)
    slow = _parsed_by_line(path, [line.split(",") for line in lines[1:]])
    assert fast.shape == (500, 3)
    np.testing.assert_array_equal(fast, points)
    np.testing.assert_array_equal(slow, points)


@pytest.mark.parametrize("body, message", [
    ("1,2,3\n4,5\n", "line 3: expected three numbers"),
    ("1,2,3\n4,inf,6\n", "line 3: 'inf' is not a finite number"),
    ("1,2,3\n4,x,6\n", "line 3"),
    ("", "no points below the header"),
])
def test_a_bad_cell_is_named_by_its_line(tmp_path, body, message):
    path = tmp_path / "p.csv"
    path.write_text("x,y,z\n" + body)
    with pytest.raises(SceneError, match=message):
        _read_points(path)
