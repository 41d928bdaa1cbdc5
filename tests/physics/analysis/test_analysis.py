"""physics.analysis: one analysis computes each result once; the JSON of the commands comes from
it; user mistakes in a hold request are one-sentence SceneErrors naming the part, plate or flag."""
from __future__ import annotations

import numpy as np
import pytest

from forces_factory import magnet, plate, scene
from repo_paths import SAMPLES
from trapscape.physics.analysis.run import Analysis, load_analysis
from trapscape.physics.analysis.views import headline_of, trap_markers
from trapscape.scene.errors import SceneError


def test_traps_are_found_once_and_shared(monkeypatch):
    import trapscape.physics.analysis.run as run

    calls = []
    real = run.find_traps
    monkeypatch.setattr(run, "find_traps", lambda *a, **k: calls.append(1) or real(*a, **k))
    analysis = load_analysis(SAMPLES / "bead_chip.toml")
    first = analysis.traps()
    assert analysis.traps() is first and analysis.traps_result() == analysis.traps_result()
    assert calls == [1]


def test_overrides_reach_the_scene():
    wide = load_analysis(SAMPLES / "level_gauge.toml", ["gap=5"])
    assert wide.scene.params["gap"] == 5.0
    assert wide.check_result()["params"]["gap"] == 5.0
    with pytest.raises(SceneError, match="--set"):
        load_analysis(SAMPLES / "level_gauge.toml", ["gap"])


def test_field_values_are_B_equal_mu0_H_plus_M():
    analysis = load_analysis(SAMPLES / "bead_chip.toml")
    points = np.array([[0.0, 0.0, 0.0005], [0.0, 0.0, 0.004]])
    values = analysis.field_at(points)
    np.testing.assert_allclose(values.B, analysis.model.B(points), rtol=1e-12, atol=1e-15)
    assert values.in_model.all()


def test_markers_follow_the_report():
    analysis = load_analysis(SAMPLES / "level_gauge.toml")
    report = analysis.traps()
    markers = trap_markers(report, analysis.scene)
    assert [m.number for m in markers] == list(range(1, len(report.equilibria) + 1))
    for marker, eq in zip(markers, report.equilibria):
        np.testing.assert_allclose(marker.position * analysis.scene.unit_scale, eq.position)
        assert marker.kind == eq.classification
    assert headline_of(markers).kind == "stable"  # the gauge's bead has a stable rest point
    assert trap_markers(None, analysis.scene) == [] and headline_of([]) is None


DISC = [magnet("cylinder", (0.012, 0.004), (0, 0, 0.003), name="disc")]


@pytest.mark.parametrize("plates, request_, words", [
    ((), {}, "has no [[steel_plate]]; add one"),
    ((plate(),), {"part": "lid"}, "--part 'lid': no magnet of that name"),
    ((plate(),), {"plate": "bench"}, "no steel plate named 'bench'"),
    ((plate(),), {"gaps_m": [-0.001]}, "--gap 0..5@11"),
    ((plate(),), {"friction": -0.5}, "--friction -0.5"),
])
def test_hold_mistakes_are_one_sentence_scene_errors(plates, request_, words):
    request_ = {"gaps_m": [0.0], **request_}
    with pytest.raises(SceneError) as caught:
        Analysis(scene(DISC, plates)).hold(**request_)
    message = str(caught.value)
    assert words in message and "\n" not in message and message.endswith(".")


def test_the_same_hold_request_is_computed_once():
    analysis = Analysis(scene(DISC, (plate(),)))
    first = analysis.hold([0.0, 0.001], friction=0.2)
    assert analysis.hold(np.array([0.0, 0.001]), friction=0.2) is first
    assert first.plate.name == "plate" and len(first.rows) == 2
    assert first.rows[0].pull > first.rows[1].pull > 0  # closer pulls harder
