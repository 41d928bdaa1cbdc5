"""The screening's figure: each required figure against the first swept parameter, passing and
failing layouts marked, the spec's bounds drawn (from the rows; nothing computed here)."""
from __future__ import annotations

import io
import math

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt

from trapscape.viewers.atomic import save_figure


def swept_value(row, name):
    """The value a row's overrides give `name` (None when it is not swept there)."""
    for text in row["overrides"]:
        key, _, value = text.partition("=")
        if key == name:
            try:
                return float(value)
            except ValueError:
                return None
    return None


def swept_names(rows) -> list:
    """The parameters the rows' overrides vary, in the order they first appear."""
    names = {}
    for row in rows:
        for text in row["overrides"]:
            names.setdefault(text.partition("=")[0], set()).add(text.partition("=")[2])
    return [n for n, values in names.items() if len(values) > 1]


def screen_figure(rows, spec, title):
    """One panel per requirement against the first swept parameter.

    Parameters
    ----------
    rows : list of dict
        The screening's rows (with passed, figures, overrides).
    spec : Spec
    title : str

    Returns
    -------
    matplotlib.figure.Figure or None
        None when no parameter is swept.
    """
    names = swept_names(rows)
    if not names:
        return None
    name = names[0]
    requirements = spec.requirements
    figure, axes = plt.subplots(len(requirements), 1, figsize=(7.5, 2.6 * len(requirements) + 1),
                                sharex=True, squeeze=False)
    for axis, r in zip(axes[:, 0], requirements):
        for passed, colour, marker, label in ((True, "tab:green", "o", "passes"),
                                              (False, "tab:red", "x", "fails")):
            points = [(swept_value(row, name), row["figures"].get(r.key)) for row in rows
                      if bool(row["passed"]) == passed]
            points = [(x, y) for x, y in points if x is not None and y is not None]
            if points:
                axis.plot(*zip(*points), marker, color=colour, label=label, markersize=6,
                          linestyle="none")
        for bound in (r.low, r.high):
            if math.isfinite(bound):
                axis.axhline(bound, color="grey", ls="--", lw=1)
        axis.set_ylabel(r.key, fontsize=9)
        axis.set_title(r.name, fontsize=9, loc="left")
        axis.grid(alpha=0.3)
    axes[0, 0].legend(fontsize=8, loc="best")
    axes[-1, 0].set_xlabel(f"{name} (as in the scene's [params]); dashed: the spec's bounds")
    figure.suptitle(title, fontsize=11)
    figure.tight_layout()
    return figure


def save_screen_figure(rows, spec, path) -> bool:
    """`screen_figure` with the spec's title, saved whole to `path`.

    Parameters
    ----------
    rows : list of dict
    spec : Spec
    path : str

    Returns
    -------
    bool
        False when no parameter is swept (no figure).
    """
    figure = screen_figure(rows, spec, spec.title or "screening")
    if figure is None:
        return False
    try:
        save_figure(figure, path, dpi=150)
    finally:
        plt.close(figure)
    return True


def warm_up() -> None:
    """Draw a throwaway figure to memory: the fonts and the text layout's caches are loaded
    before the figure that counts (viewers.figure_process). It changes no setting."""
    figure, axis = plt.subplots(figsize=(2, 2))
    axis.plot([0, 1], [0, 1], "o", label="passes")
    axis.axhline(0.5, color="grey", ls="--", lw=1)
    axis.legend(fontsize=8)
    axis.set_title("warm-up", fontsize=9, loc="left")
    figure.tight_layout()
    figure.savefig(io.BytesIO(), format="png", dpi=150, bbox_inches="tight")
    plt.close(figure)
