"""Words for the trap markers: a holding force and a position as a reader takes them in. The
markers themselves come from physics.analysis.views."""
from __future__ import annotations

import numpy as np


def describe_force(newtons) -> str:
    """A force in the unit a reader grasps: 3.2 mN, 0.41 N, 12 uN."""
    if newtons is None:
        return "no finite holding force"
    magnitude = abs(newtons)
    for factor, unit in ((1.0, "N"), (1e-3, "mN"), (1e-6, "µN"), (1e-9, "nN")):
        if magnitude >= factor or unit == "nN":
            return f"{newtons / factor:.2g} {unit}" if newtons / factor < 10 else f"{newtons / factor:.0f} {unit}"
    return f"{newtons:.2g} N"


def describe_position(position, unit: str, scale: float | None = None) -> str:
    """'(21.0, 0, -0.2) mm': decimals enough for a thousandth of `scale` (the scene's size)."""
    decimals = 1 if not scale else int(np.clip(np.ceil(2.0 - np.log10(scale)), 0, 4))
    tiny = 0.5 * 10.0**-decimals
    text = ", ".join(f"{v:.{decimals}f}" if abs(v) >= tiny else "0" for v in position)
    return f"({text}) {unit}"
