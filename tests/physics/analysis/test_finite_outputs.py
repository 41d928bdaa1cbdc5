"""No accepted input makes a command write NaN or infinity: every number of the `traps` and
`check` results is finite (the JSON writer would turn a NaN into null and hide it, so the check
runs on the results before that), for random scenes within the documented limits."""
from __future__ import annotations

import math

from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from trapscape.physics.analysis.results import check_json, traps_json
from trapscape.physics.analysis.run import Analysis
from trapscape.scene.errors import SceneError
from trapscape.scene.loader import load_scene_text

SCENE = """units = "mm"
gravity = [0, 0, {gravity}]
[[magnet]]
shape = "{shape}"
size = {size}
north = "{north}"
remanence = {remanence}
[probe]
kind = "{probe}"
diameter = {diameter}
{probe_keys}
[search_box]
min = [-{box}, -{box}, -{box}]
max = [{box}, {box}, {box}]
resolution = 24
"""
PROBE_KEYS = {"soft": "susceptibility = 1000\nsaturation = 2.0\ndensity = 7850",
              "weak": "susceptibility = -4.5e-4\ndensity = 2200",
              "magnet": "remanence = 1.2\ndensity = 7500"}


def _numbers(value, path="result"):
    """(path, number) of every number in nested dicts and lists."""
    if isinstance(value, dict):
        for key, item in value.items():
            yield from _numbers(item, f"{path}.{key}")
    elif isinstance(value, (list, tuple)):
        for i, item in enumerate(value):
            yield from _numbers(item, f"{path}[{i}]")
    elif isinstance(value, float) or hasattr(value, "dtype"):
        try:
            yield path, float(value)
        except TypeError:  # an array: its elements
            for i, item in enumerate(value.tolist()):
                yield from _numbers(item, f"{path}[{i}]")


@settings(max_examples=8, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(shape=st.sampled_from(["sphere", "cylinder", "box"]),
       size=st.floats(0.5, 20.0), remanence=st.floats(0.05, 1.5),
       north=st.sampled_from(["+z", "-x", "+y"]), probe=st.sampled_from(sorted(PROBE_KEYS)),
       diameter=st.floats(0.05, 5.0), gravity=st.floats(-100.0, 0.0),
       box_factor=st.floats(1.5, 6.0))
def test_traps_and_check_numbers_are_finite_for_any_accepted_scene(shape, size, remanence, north,
                                                                   probe, diameter, gravity,
                                                                   box_factor):
    dims = {"sphere": f"{size}", "cylinder": f"[{size}, {size / 2}]",
            "box": f"[{size}, {size / 2}, {size / 3}]"}[shape]
    text = SCENE.format(shape=shape, size=dims, north=north, remanence=remanence, probe=probe,
                        diameter=diameter, probe_keys=PROBE_KEYS[probe], gravity=gravity,
                        box=box_factor * size)
    try:
        analysis = Analysis(load_scene_text(text))
        results = (("traps", traps_json(analysis.traps(), analysis.scene)),
                   ("check", check_json(analysis.scene)))
    except SceneError:  # refused with a sentence: not an accepted input
        assume(False)
    for name, result in results:
        bad = [(p, v) for p, v in _numbers(result, name) if not math.isfinite(v)]
        assert not bad, bad[:5]
