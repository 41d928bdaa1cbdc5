"""The sweep's figure: each trap's position, stiffness and escape margin against the swept
parameter, the folds shaded where a trap is lost or born (drawn from physics.analysis.sweep's
rows; nothing computed here)."""
from __future__ import annotations

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt
from matplotlib.ticker import MaxNLocator


def sweep_figure(rows, folds, varies, unit, units, title):
    """Three panels against the first swept parameter, one line per trap.

    Parameters
    ----------
    rows : list of dict
        The sweep's rows (one per step and trap).
    folds : list of (dict, Fold)
        Each fold with the other parameter's value it was found at.
    varies : list of Vary
    unit : str
        The scene's length unit (the rows' positions are in it).
    units : trapscape.physics.analysis.display_units.DisplayUnits
        The reader's units (--units): positions and stiffness are drawn in them.
    title : str

    Returns
    -------
    matplotlib.figure.Figure
    """
    name = varies[0].name
    along_line = any(r["coordinate"] is not None for r in rows)
    figure, axes = plt.subplots(3, 1, figsize=(9.0, 8.6), sharex=True)
    panels = [
        (lambda r: _shown(r["coordinate"] if along_line else r["position"][2],
                          lambda v: units.L_from(v, unit)),
         f"{'position along the line' if along_line else 'height z'} ({units.length_label})"),
        (lambda r: _shown(r["smallest_stiffness_N_per_m"], units.stiffness),
         f"smallest stiffness ({units.stiffness_label})"),
        (lambda r: r["escape_over_weight"], "escape force / probe's weight"),
    ]
    traps = sorted({r["trap"] for r in rows}, key=_label_order)
    colours = {t: f"C{i % 10}" for i, t in enumerate(traps)}  # one colour per trap in every panel
    for axis, (value, label) in zip(axes, panels):
        for trap in traps:
            mine = [r for r in rows if r["trap"] == trap]
            stable = mine[0]["class"] not in ("saddle", "unstable")
            points = [(r[name], value(r)) for r in mine if value(r) is not None]
            if not points:
                continue
            x, y = zip(*points)
            axis.plot(x, y, "-o" if stable else "--x", markersize=4, color=colours[trap],
                      label=f"trap {trap} ({'stable' if stable else 'unstable'})")
        for _fixed, fold in folds:
            axis.axvspan(*fold.between, color="tab:red", alpha=0.25, lw=0)
        axis.set_ylabel(label)
        axis.grid(alpha=0.3)
    axes[2].axhline(1.0, color="grey", lw=1, ls=":")
    axes[2].text(0.01, 1.0, " weight", color="grey", va="bottom",
                 transform=axes[2].get_yaxis_transform())
    if folds:
        axes[0].plot([], [], color="tab:red", alpha=0.4, lw=8, label="fold: trap lost or born")
    axes[0].legend(fontsize=8, loc="upper left", bbox_to_anchor=(1.01, 1.0))  # beside the data
    if all(float(r[name]).is_integer() for r in rows):  # a count: no ticks between whole values
        axes[-1].xaxis.set_major_locator(MaxNLocator(integer=True))
    axes[-1].set_xlabel(f"{name} (as in the scene's [params])")
    other = f", one line per {varies[1].name}" if len(varies) > 1 else ""
    figure.suptitle(f"{title}\ntraps against {name}{other}", fontsize=11)
    figure.tight_layout()
    return figure


def _shown(value, convert):
    return None if value is None else convert(value)


def _label_order(label: str):
    return tuple(int(p) for p in label.split("."))
