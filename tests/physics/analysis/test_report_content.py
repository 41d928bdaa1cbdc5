"""The report's content: the push that dislodges a probe along its line (against closed forms and
against the trap search's own escape figure), display units applied to what a reader sees, and
the answer-first sentences."""
from __future__ import annotations

import numpy as np
import pytest
from repo_paths import SAMPLES

from trapscape.physics.analysis.display_units import DisplayUnits, parse_units
from trapscape.physics.analysis.report_content import report_content
from trapscape.physics.analysis.report_profile import LineSamples, push_out, report_line
from trapscape.physics.analysis.run import load_analysis
from trapscape.physics.analysis.trap_words import headline_sentence


def samples_of(force, s, fits=None) -> LineSamples:
    return LineSamples(origin=np.zeros(3), direction=np.array([0.0, 0.0, 1.0]), s=s,
                       energy=np.zeros_like(s), force=force,
                       fits=np.ones_like(s, bool) if fits is None else fits)


def test_push_is_the_largest_restoring_force_before_the_barrier_top():
    # closed form: F(s) = -sin(s) restores up to s = pi, its largest pull back is 1 at pi/2
    s = np.linspace(-4.0, 4.0, 8001)
    samples = samples_of(-np.sin(s), s)
    start = samples.index_of([0.0, 0.0, 0.0])
    for step in (1, -1):
        push = push_out(samples, start, step)
        assert push.force_N == pytest.approx(1.0, abs=1e-6)
        assert not push.blocked and not push.to_edge


def test_push_held_to_the_edge_or_blocked_by_a_part():
    s = np.linspace(-1.0, 1.0, 201)
    spring = samples_of(-2.0 * s, s)  # F = -k s restores everywhere: largest at the edge, k
    push = push_out(spring, spring.index_of([0, 0, 0]), 1)
    assert push.to_edge and push.force_N == pytest.approx(2.0)
    walled = samples_of(-2.0 * s, s, fits=s < 0.5)
    assert push_out(walled, walled.index_of([0, 0, 0]), 1).blocked


@pytest.fixture(scope="module")
def gauge():
    analysis = load_analysis(SAMPLES / "level_gauge.toml")
    return analysis, report_content(analysis, parse_units("gauss,lbf,in"))


def test_the_line_push_agrees_with_the_trap_search_escape_force(gauge):
    # two independent routes: the escape flood on the scan grid with the finite-size model, and
    # the point model sampled along the guide line; tolerance 3 % chosen before looking
    analysis, _ = gauge
    report = analysis.traps()
    stable = [e for e in report.equilibria if e.classification == "stable"][0]
    samples, _ = report_line(analysis, report)
    down = push_out(samples, samples.index_of(stable.position), -1)  # +s is up on this line
    assert down.force_N == pytest.approx(stable.escape.force_N, rel=0.03)


def test_display_units_reach_every_figure_a_reader_sees(gauge):
    analysis, content = gauge
    report = analysis.traps()
    row = [r for r in content.families if r.kind == "stable"][0]
    stable = report.equilibria[[f for f in report.families
                                if f.classification == "stable"][0].representative]
    assert float(row.field) == pytest.approx(1e4 * np.linalg.norm(stable.B_T), rel=2e-3)  # gauss
    assert float(row.escape_force) == pytest.approx(
        DisplayUnits(force="lbf").F(stable.escape.force_N), rel=2e-3)
    assert " in " in row.position + " " and "lbf" in content.answers[0]
    assert "G" in content.safety[0][0]  # the implant level in gauss: 0.5 mT = 5 G
    assert content.profile.axis_label.startswith("s, position along the line (in)")


def test_answer_first(gauge):
    analysis, content = gauge
    # the headline of `traps`, in the reader's units
    assert content.headline == headline_sentence(analysis.traps(), analysis.scene,
                                                 parse_units("gauss,lbf,in"))
    assert "lbf" in content.headline and " in," in content.headline
    answer = content.answers[0]
    assert "rests on its guide line" in answer and "nearest magnet face" in answer
    assert "dislodges it down" in answer and "up, it returns" in answer
    assert any("pinch" in c for c in content.cautions)
    assert any("recoil permeability 1" in u for u in content.uncertainty)
