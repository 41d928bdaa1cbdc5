"""A mesh part whose size is implausible for a magnet: most likely a unit mix-up between the CAD
export and the scene (a part exported in metres read as millimetres comes out 1000 times too
small). Warned about by default; an error with mesh_size_check = "error"; silent with "off"."""
from __future__ import annotations

import math
import warnings

import numpy as np

from trapscape.scene.errors import SceneError, SceneWarning
from trapscape.scene.units import METRES_PER_UNIT

PLAUSIBLE_M = (0.5e-3, 2.0)  # largest dimension of a magnet part, m (common practice)
TYPICAL_M = 0.01  # the size a unit guess aims for, m (common practice: magnets of mm to cm)
MODES = ("warn", "error", "off")
UNIT_WORDS = {"mm": "millimetres", "cm": "centimetres", "m": "metres", "in": "inches"}


def likely_unit(largest_m: float, read_as: str) -> str | None:
    """The file unit that makes the part a plausible size (closest to TYPICAL_M), or None."""
    raw = largest_m / METRES_PER_UNIT[read_as]
    fits = [u for u in METRES_PER_UNIT
            if u != read_as and PLAUSIBLE_M[0] <= raw * METRES_PER_UNIT[u] <= PLAUSIBLE_M[1]]
    if not fits:
        return None
    return min(fits, key=lambda u: abs(math.log10(raw * METRES_PER_UNIT[u] / TYPICAL_M)))


def check_mesh_size(vertices, where: str, shown: str, read_as: str | None, scene_units: str,
                    mode: str) -> None:
    """Warn (or raise SceneError, mode "error") when a mesh's largest extent is implausible.

    read_as: the unit word the file was read in (None: the unit a 3MF file declares).
    """
    if mode == "off":
        return
    largest = float(np.ptp(np.asarray(vertices, float), axis=0).max())
    if PLAUSIBLE_M[0] <= largest <= PLAUSIBLE_M[1]:
        return
    shown_size = f"{largest / METRES_PER_UNIT[scene_units]:.3g} {scene_units}"
    guess = likely_unit(largest, read_as) if read_as else None
    if guess:
        cause = (f"it looks like {UNIT_WORDS[guess]} read as {UNIT_WORDS[read_as]}; add "
                 f"file_units = \"{guess}\" to this [[magnet]]")
    else:
        cause = ("check the unit the file was exported in and give it as file_units = \"mm\" "
                 "(or cm, m, in) in this [[magnet]]")
    message = (f"{where}: {shown} is {shown_size} across at its largest, implausible for a magnet "
               f"(0.5 mm to 2 m expected); {cause}, or set mesh_size_check = \"off\" at the top "
               f"of the scene if the size is right.")
    if mode == "error":
        raise SceneError(message)
    warnings.warn(SceneWarning(message), stacklevel=4)
