"""Length units of scene and mesh files, converted to metres at load time."""
from __future__ import annotations

import math

from trapscape.scene.errors import SceneError
from trapscape.scene.names import did_you_mean, listing

# metres per unit; the inch is exactly 25.4 mm by definition (international yard and pound, 1959)
METRES_PER_UNIT = {"mm": 1e-3, "cm": 1e-2, "m": 1.0, "in": 0.0254}

# 3MF files carry their own unit (3MF Core Specification, <model unit="...">, default millimetre)
METRES_PER_3MF_UNIT = {
    "micron": 1e-6, "millimeter": 1e-3, "centimeter": 1e-2, "inch": 0.0254, "foot": 0.3048,
    "meter": 1.0,
}


def unit_scale(unit, where: str) -> float:
    """Metres per file unit for a unit word, or a SceneError saying which words are known."""
    if not isinstance(unit, str) or unit not in METRES_PER_UNIT:
        raise SceneError(
            f"{where}: unknown length unit {unit!r}{did_you_mean(unit, METRES_PER_UNIT)}; "
            f"use one of {listing(sorted(METRES_PER_UNIT))}."
        )
    return METRES_PER_UNIT[unit]

MU0 = 4e-7 * math.pi  # vacuum permeability, T m / A (CODATA 2018 value differs by < 1e-9 relative)
