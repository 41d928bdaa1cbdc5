"""The views get one entry per family (its representative, numbered as `traps` numbers the
families, with the count it stands for), so a picture has one marker per family (issue 13)."""
from __future__ import annotations

from repo_paths import SAMPLES

from trapscape.physics.analysis.run import load_analysis
from trapscape.viewers.layers.context import ViewContext
from trapscape.viewers.layers.traps_data import family_entries


def test_one_marker_per_family_on_the_bead_chip():
    analysis = load_analysis(str(SAMPLES / "bead_chip.toml"), [])
    report = analysis.traps()
    entries = family_entries(report, analysis.scene)
    # the chip's two outer capture spots and its two saddles are mirror images
    assert len(report.equilibria) == 5 and len(entries) == len(report.families) == 3
    assert [e.number for e in entries] == [f.number for f in report.families]
    assert sum(e.count for e in entries) == len(report.equilibria)
    for entry, family in zip(entries, report.families):
        assert entry.source is report.equilibria[family.representative]
        assert entry.kind == family.classification
    assert len(ViewContext.of(analysis).equilibria) == 3
