"""`traps` opens with the headline `demo` prints (one function, physics.analysis.trap_words):
where the probe is caught, how firmly and as a multiple of its weight, where it escapes; and it
warns when a stable trap holds with a small margin over gravity (issue 13)."""
from __future__ import annotations

import re

from repo_paths import SAMPLES
from test_terminal import at_terminal, in_pipe

from trapscape.physics.analysis.run import load_analysis
from trapscape.physics.analysis.trap_words import FORCE_MARGIN, headline_sentence

GAUGE = str(SAMPLES / "level_gauge.toml")


def _expected(overrides=()):
    analysis = load_analysis(GAUGE, list(overrides))
    return headline_sentence(analysis.traps(), analysis.scene), analysis


def test_the_headline_leads_at_a_terminal_and_in_a_pipe(tmp_path):
    expected, analysis = _expected()
    code, screen = at_terminal(["traps", GAUGE], tmp_path)
    assert code == 0
    assert expected in screen
    code, out, _ = in_pipe(["traps", GAUGE], tmp_path)
    assert code == 0
    first = out.splitlines()[0]
    assert first == expected
    # where, how firmly (the escape force, and over the bead's weight m g) and where it escapes
    stable = next(e for e in analysis.traps().equilibria if e.classification == "stable")
    weight = analysis.scene.probe.mass * 9.81  # the sample's gravity is 9.81 m/s^2 down
    ratio = float(re.search(r"\(([\d.]+) x its weight\)", first).group(1))
    assert abs(ratio - stable.escape.force_N / weight) < 0.01 * ratio
    assert "caught on its guide line at (21.0, 0, -0.2) mm" in first
    assert "escapes to box face -z" in first
    assert "Warning" not in out


def test_a_small_margin_over_gravity_is_warned_with_its_threshold(tmp_path):
    code, out, _ = in_pipe(["traps", GAUGE, "--set", "gap=4"], tmp_path)
    assert code == 0
    warnings = [line for line in out.splitlines() if line.startswith("Warning")]
    assert len(warnings) == 1
    # escape force / weight = 1.07 for this gap (issue 13), under the common-practice 2 x
    assert "1.07 x the probe's weight" in warnings[0]
    assert f"below {FORCE_MARGIN:g} x (common practice)" in warnings[0]
