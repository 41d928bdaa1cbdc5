"""The trap data the views get: one entry per family (its representative member, numbered by
the family, with the count of members it stands for), and words for a holding force and a
position as a reader takes them in (from physics.analysis.trap_words, so views, `traps` and
`demo` say the same)."""
from __future__ import annotations

from trapscape.physics.analysis.trap_words import describe_force, describe_position
from trapscape.physics.analysis.views import family_markers

__all__ = ["describe_force", "describe_position", "family_entries"]


def family_entries(report, scene) -> list:
    """One marker per family: the representative member plus the count (ViewEquilibrium.count).

    Parameters
    ----------
    report : trapscape.physics.traps.search.TrapReport or None
    scene : trapscape.scene.model.Scene

    Returns
    -------
    list of physics.analysis.views.ViewEquilibrium
        Numbered by family, as `traps` prints them.
    """
    return family_markers(report, scene)
