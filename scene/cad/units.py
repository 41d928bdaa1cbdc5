"""The unit of a CAD file's numbers: what the file says (STEP, 3MF), else --units, else a guess
from plausible magnet sizes, with a warning whenever more than one unit would be plausible."""
from __future__ import annotations

import math

import numpy as np

from trapscape.scene.mesh_sizes import PLAUSIBLE_M, TYPICAL_M, UNIT_WORDS
from trapscape.scene.units import METRES_PER_UNIT


def decide_unit(raw_sizes, stated, stated_by: str, option: str | None, shown: str) -> tuple:
    """(metres per file unit, the sentence saying how it was decided, warning or None).

    raw_sizes: each body's largest extent in the file's numbers; stated: metres per unit the
    file declares (None when it declares none).
    """
    if stated is not None:
        note = f"{shown}: lengths in the unit of {stated_by}"
        if option:
            note += f" (--units {option} is for files that state no unit)"
        return stated, note + ".", None
    if option:
        return METRES_PER_UNIT[option], f"{shown}: lengths in {UNIT_WORDS[option]} (--units).", \
            None
    sizes = np.asarray(raw_sizes, float)
    fits = [u for u in METRES_PER_UNIT
            if np.all((sizes * METRES_PER_UNIT[u] >= PLAUSIBLE_M[0])
                      & (sizes * METRES_PER_UNIT[u] <= PLAUSIBLE_M[1]))]
    middle = float(np.median(sizes))
    ranked = sorted(fits or METRES_PER_UNIT,
                    key=lambda u: abs(math.log10(middle * METRES_PER_UNIT[u] / TYPICAL_M)))
    unit = ranked[0]
    note = (f"{shown}: the file states no unit; guessed {UNIT_WORDS[unit]} from the sizes of its "
            f"bodies (median {middle * METRES_PER_UNIT[unit] * 1e3:.3g} mm).")
    if len(fits) == 1:
        return METRES_PER_UNIT[unit], note, None
    others = ", ".join(f"{UNIT_WORDS[u]} ({middle * METRES_PER_UNIT[u] * 1e3:.3g} mm)"
                       for u in ranked[1:] if u in fits)
    warning = (f"UNIT GUESSED for {shown}: it states no unit; read as {UNIT_WORDS[unit]}, its "
               f"median body is {middle * METRES_PER_UNIT[unit] * 1e3:.3g} mm across"
               + (f", but {others} would be plausible too" if others else
                  ", yet no unit makes every body a plausible magnet size")
               + f"; give --units {unit} (or the right unit) to be sure.")
    return METRES_PER_UNIT[unit], note, warning
