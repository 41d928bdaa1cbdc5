"""The report's matplotlib plots: the probe's energy and force along the report's line (traps
and the probe's weight marked), and the pull on a steel plate against the gap. They draw the
numbers of physics.analysis.report_content as they are."""
from __future__ import annotations

import numpy as np

from trapscape.viewers.atomic import save_figure
from trapscape.viewers.layers import style

TRAP_COLOURS = {"stable": "#1b7837", "marginal": "#7f7f7f", "saddle": "#b35806",
                "unstable": "#b2182b"}
ENERGY_PREFIXES = ((1.0, "J"), (1e-3, "mJ"), (1e-6, "µJ"), (1e-9, "nJ"), (1e-12, "pJ"),
                   (1e-15, "fJ"), (1e-18, "aJ"))


def _pyplot():
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    return plt


def energy_scale(values) -> tuple:
    """(factor, unit) so that the largest |value| reads between 1 and 1000."""
    finite = np.abs(np.asarray(values, float))
    finite = finite[np.isfinite(finite)]
    top = float(finite.max()) if finite.size else 1.0
    for factor, unit in ENERGY_PREFIXES:
        if top >= factor:
            return factor, unit
    return ENERGY_PREFIXES[-1]


FORCE_PREFIXES = ((1.0, "N"), (1e-3, "mN"), (1e-6, "µN"), (1e-9, "nN"))


def force_scale(values, unit: str) -> tuple:
    """(factor, label): newtons read with a prefix (mN, µN) when small; kgf and lbf as they are."""
    if unit != "N":
        return 1.0, unit
    finite = np.abs(np.asarray(values, float))
    finite = finite[np.isfinite(finite)]
    top = float(finite.max()) if finite.size else 1.0
    for factor, label in FORCE_PREFIXES:
        if top >= factor:
            return factor, label
    return FORCE_PREFIXES[-1]


def draw_profile(profile, units, path: str, size=(1000, 760)) -> str:
    """Energy (top) and force along the line (bottom) against the position on the line.

    Parameters
    ----------
    profile : trapscape.physics.analysis.report_profile.Profile
    units : trapscape.physics.analysis.display_units.DisplayUnits
    path : str
        The PNG to write.
    size : tuple of int
        Pixels.

    Returns
    -------
    str
        The path written.
    """
    plt = _pyplot()
    dpi = 100
    figure, (top, bottom) = plt.subplots(2, 1, sharex=True, figsize=(size[0] / dpi, size[1] / dpi),
                                         dpi=dpi)
    factor, unit = energy_scale(profile.energy_J)
    top.plot(profile.s, profile.energy_J / factor, color=style.TEXT, linewidth=1.4)
    top.set_ylabel(f"energy ({unit})")
    top.set_title(profile.caption, fontsize=10, loc="left")
    scale, force_unit = force_scale(profile.force, units.force_label)
    bottom.plot(profile.s, profile.force / scale, color="#2166ac", linewidth=1.4,
                label="force on the probe along the line (field and gravity)")
    bottom.axhline(0.0, color="#555555", linewidth=0.8)
    if profile.weight > 0:
        for sign in (1, -1):
            bottom.axhline(sign * profile.weight / scale, color="#999999", linewidth=1.0,
                           linestyle="--", label="± the probe's weight" if sign > 0 else None)
    bottom.set_ylabel(f"force along +s ({force_unit})")
    bottom.set_xlabel(profile.axis_label)
    _mark_traps(top, bottom, profile)
    bottom.legend(loc="lower left", fontsize=8, framealpha=0.9)
    for axes in (top, bottom):
        axes.grid(True, color="#dddddd", linewidth=0.6)
    figure.tight_layout()
    try:
        save_figure(figure, path, dpi=dpi)
    finally:
        plt.close(figure)
    return path


def _mark_traps(top, bottom, profile) -> None:
    shown = set()
    for s, kind, number in profile.traps:
        colour = TRAP_COLOURS.get(kind, "#555555")
        for axes in (top, bottom):
            axes.axvline(s, color=colour, linewidth=1.0, linestyle=":",
                         label=(f"{kind} equilibrium" if axes is bottom and kind not in shown
                                else None))
        shown.add(kind)
        top.annotate(f"#{number} {kind}", xy=(s, 1.0), xycoords=("data", "axes fraction"),
                     xytext=(3, -12), textcoords="offset points", fontsize=8, color=colour)


def draw_pull(pull, units, path: str, size=(1000, 560)) -> str:
    """The pull on the steel plate against the gap.

    Parameters
    ----------
    pull : trapscape.physics.analysis.report_content.PullCurve
    units : trapscape.physics.analysis.display_units.DisplayUnits
    path : str
    size : tuple of int

    Returns
    -------
    str
    """
    plt = _pyplot()
    dpi = 100
    figure, axes = plt.subplots(figsize=(size[0] / dpi, size[1] / dpi), dpi=dpi)
    scale, force_unit = force_scale(pull.pull, units.force_label)
    axes.plot(pull.gaps, pull.pull / scale, marker="o", color="#2166ac", linewidth=1.4)
    axes.set_xlabel(f"air gap to plate {pull.plate} ({units.length_label})")
    axes.set_ylabel(f"pull towards the plate ({force_unit})")
    axes.set_title("Pull of the assembly on its steel plate against the gap", fontsize=10,
                   loc="left")
    axes.set_ylim(bottom=0.0)
    axes.grid(True, color="#dddddd", linewidth=0.6)
    figure.tight_layout()
    try:
        save_figure(figure, path, dpi=dpi)
    finally:
        plt.close(figure)
    return path
