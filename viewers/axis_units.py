"""Axes drawn in the scene's unit, read in the reader's display unit: the ticks are put at round
values of the display unit and labelled in it, so a figure whose geometry is in millimetres reads
in inches without redrawing a single part."""
from __future__ import annotations

import numpy as np

TICK_STEPS = (1, 2, 2.5, 5, 10)  # the round steps a reader expects between ticks


def relabel_ticks(axis, low: float, high: float, factor: float, bins: int = 8) -> None:
    """Ticks of a matplotlib `axis` spanning low..high (drawing unit) at round values of the
    display unit, `factor` display units per drawing unit; nothing changes when it is 1.

    Parameters
    ----------
    axis : matplotlib.axis.Axis
        ``axes.xaxis`` or ``axes.yaxis``.
    low, high : float
        The axis limits, drawing unit.
    factor : float
        Display units per drawing unit (e.g. 1 / 25.4 for millimetres shown as inches).
    bins : int
        At most this many intervals between ticks.
    """
    if factor == 1.0:
        return
    from matplotlib.ticker import MaxNLocator

    shown_low, shown_high = sorted((low * factor, high * factor))
    ticks = MaxNLocator(nbins=bins, steps=list(TICK_STEPS)).tick_values(shown_low, shown_high)
    ticks = ticks[(ticks >= shown_low) & (ticks <= shown_high)]
    axis.set_ticks(np.asarray(ticks) / factor, labels=[f"{t + 0.0:g}" for t in ticks])
