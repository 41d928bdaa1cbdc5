"""Property tests: random valid scenes round-trip to SI; random corruptions only raise SceneError."""
from __future__ import annotations

import math
import warnings

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from trapscape.scene.errors import SceneError
from trapscape.scene.loader import load_scene_text
from trapscape.scene.measures import bounding_box
from trapscape.scene.model import Scene

from repo_paths import SAMPLES  # noqa: E402
METRES = {"mm": 1e-3, "cm": 1e-2, "m": 1.0, "in": 0.0254}
SHAPE_SIZES = {"box": 3, "cylinder": 2, "ring": 3, "arc": 4, "sphere": 1}

sizes = st.floats(min_value=0.1, max_value=50.0, allow_nan=False)
coordinates = st.floats(min_value=-100.0, max_value=100.0, allow_nan=False)
angles = st.floats(min_value=-360.0, max_value=360.0, allow_nan=False)


@st.composite
def valid_scenes(draw):
    units = draw(st.sampled_from(sorted(METRES)))
    shape = draw(st.sampled_from(sorted(SHAPE_SIZES)))
    dims = [draw(sizes) for _ in range(SHAPE_SIZES[shape])]
    if shape in ("ring", "arc"):
        dims[1] = dims[0] * draw(st.floats(min_value=0.05, max_value=0.95))
    if shape == "arc":
        dims[3] = draw(st.floats(min_value=1.0, max_value=360.0))
    position = [draw(coordinates) for _ in range(3)]
    rotation = [draw(angles) for _ in range(3)]
    north = draw(st.lists(st.floats(min_value=-1, max_value=1), min_size=3, max_size=3)
                 .filter(lambda v: np.linalg.norm(v) > 1e-3))
    remanence = draw(st.floats(min_value=0.05, max_value=1.5))
    diameter = draw(sizes)
    text = (f'units = "{units}"\n[[magnet]]\nshape = "{shape}"\nsize = {dims!r}\n'
            f"position = {position!r}\nrotation = {rotation!r}\nnorth = {north!r}\n"
            f'remanence = {remanence!r}\n[probe]\nkind = "soft"\ndiameter = {diameter!r}\n')
    return text, units, shape, dims, position, rotation, north, remanence, diameter


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(valid_scenes())
def test_random_valid_scenes_round_trip_to_si(case):
    text, units, shape, dims, position, rotation, north, remanence, diameter = case
    scene = load_scene_text(text)
    metres = METRES[units]
    magnet = scene.magnets[0]
    expected = [d * metres for d in dims]
    if shape == "arc":
        expected[3] = math.radians(dims[3])
    np.testing.assert_allclose(magnet.dims, expected, rtol=1e-13)
    np.testing.assert_allclose(magnet.position, np.array(position) * metres, rtol=1e-13,
                               atol=1e-15)
    np.testing.assert_allclose(magnet.north, np.array(north) / np.linalg.norm(north), rtol=1e-12,
                               atol=1e-15)
    np.testing.assert_allclose(magnet.rotation @ magnet.rotation.T, np.eye(3), atol=1e-12)
    assert np.linalg.det(magnet.rotation) == pytest_approx(1.0)
    assert magnet.remanence == remanence
    assert scene.probe.diameter == pytest_approx(diameter * metres)
    low, high = bounding_box(magnet)  # the default search box holds the part with a margin
    assert np.all(scene.search_box.min < low) and np.all(high < scene.search_box.max)


def pytest_approx(value):
    import pytest

    return pytest.approx(value, rel=1e-12)


BASE_TEXTS = {name: (SAMPLES / name).read_text() for name in
              ("level_gauge.toml", "bead_chip.toml", "holding_plate.toml", "arc_rotor.toml",
               "graphite_stage.toml", "separator_grate.toml")}
REPLACEMENTS = ["0", "-1", "nan", "inf", "-inf", '"x"', "[]", "{}", "true", "1e400", '"1/0"',
                "9999999", '"gap"', "[0, 0, 0]", '"radial-out"', "[[1]]", "1e-300", '""',
                '"sqrt(-1)"', "[1, 2]"]


@st.composite
def corruptions(draw):
    name = draw(st.sampled_from(sorted(BASE_TEXTS)))
    data = bytearray(BASE_TEXTS[name].encode())
    for _ in range(draw(st.integers(min_value=1, max_value=3))):
        how = draw(st.sampled_from(["flip", "delete line", "replace value", "duplicate line"]))
        lines = bytes(data).split(b"\n")
        if how == "flip":
            where = draw(st.integers(min_value=0, max_value=len(data) - 1))
            data[where] = draw(st.integers(min_value=0, max_value=255))
            continue
        k = draw(st.integers(min_value=0, max_value=len(lines) - 1))
        if how == "delete line":
            del lines[k]
        elif how == "duplicate line":
            lines.insert(k, lines[k])
        else:
            replacement = draw(st.sampled_from(REPLACEMENTS)).encode()
            lines[k] = _replace(lines[k], replacement)
        data = bytearray(b"\n".join(lines))
    return bytes(data)


def _replace(line: bytes, replacement: bytes) -> bytes:
    head, sep, _ = line.partition(b"=")
    return head + sep + b" " + replacement if sep else line


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(corruptions())
def test_corrupted_files_raise_only_scene_errors(raw):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            scene = load_scene_text(raw, base_dir=SAMPLES)
        except SceneError as error:
            message = str(error)
            assert message and "\n" not in message
            return
    assert isinstance(scene, Scene)
    assert all(np.all(np.isfinite(m.position)) for m in scene.magnets)
    assert all(m.remanence > 0 for m in scene.magnets)
