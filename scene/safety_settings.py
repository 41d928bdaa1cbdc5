"""The scene's [safety] and [package] tables: what the safety and shipping figures need from
the user (the implant limit, the working temperatures, the shipping box).

    [safety]
    implant_limit_mT = 0.5        # |B| of the implant shell (default: ICNIRP 2009's 0.5 mT)
    max_temperature_C = 60        # highest working temperature (default 20)
    min_temperature_C = -10       # lowest (default 20; hard ferrite loses coercivity when cold)

    [package]
    size = [200, 150, 100]        # outer edges of the shipping box, centred on the magnets
    # or min = [...] and max = [...] in scene coordinates; default: the magnets' bounding box
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trapscape.scene import reading
from trapscape.scene.errors import SceneError

DEFAULT_IMPLANT_LIMIT = 0.5e-3  # T: ICNIRP, Health Physics 96(4):504-514 (2009)
ROOM_TEMPERATURE = 20.0  # degrees Celsius, where datasheets quote Br and HcJ


@dataclass(frozen=True, eq=False)
class SafetySettings:
    """What the safety and shipping figures read from the scene (SI, degrees Celsius)."""

    implant_limit: float = DEFAULT_IMPLANT_LIMIT  # T
    max_temperature: float = ROOM_TEMPERATURE  # C
    min_temperature: float = ROOM_TEMPERATURE  # C
    package_min: np.ndarray | None = None  # (3,) m, world; None: the magnets' bounding box
    package_max: np.ndarray | None = None


def read_safety(ctx, document: dict, bounding_box) -> SafetySettings:
    """The [safety] and [package] tables of a scene document.

    Parameters
    ----------
    ctx : trapscape.scene.reading.Context
        The file's name, params and length unit.
    document : dict
        The parsed scene file.
    bounding_box : tuple of numpy.ndarray
        The magnets' bounding box (low, high), m: a [package] size is centred on it.

    Returns
    -------
    SafetySettings
    """
    where = f"{ctx.shown}, [safety]"
    table = reading.sub_table(document.get("safety", {}), where, "[safety] with "
                              "max_temperature_C = 60")
    reading.check_keys(table, ("implant_limit_mT", "max_temperature_C", "min_temperature_C"),
                       where)
    limit = reading.number(ctx, table, "implant_limit_mT", where, default=0.5, positive=True)
    hot = reading.number(ctx, table, "max_temperature_C", where, default=ROOM_TEMPERATURE)
    cold = reading.number(ctx, table, "min_temperature_C", where, default=min(hot, 20.0))
    for key, value in (("max_temperature_C", hot), ("min_temperature_C", cold)):
        if not -273.15 < value < 1000.0:
            raise SceneError(f"{where}, {key}: {value:g} °C is outside any magnet's use; give "
                             f"it in degrees Celsius.")
    if cold > hot:
        raise SceneError(f"{where}: min_temperature_C {cold:g} is above max_temperature_C "
                         f"{hot:g}; swap them.")
    low, high = _package(ctx, document, bounding_box)
    return SafetySettings(implant_limit=limit * 1e-3, max_temperature=hot, min_temperature=cold,
                          package_min=low, package_max=high)


def _package(ctx, document, bounding_box):
    where = f"{ctx.shown}, [package]"
    if "package" not in document:
        return None, None
    table = reading.sub_table(document["package"], where, "[package] with size = [200, 150, 100]")
    reading.check_keys(table, ("size", "min", "max"), where)
    if "size" in table and ("min" in table or "max" in table):
        raise SceneError(f"{where}: give size, or min and max, not both.")
    if "size" in table:
        size = reading.vector(ctx, table, "size", where, length=True)
        centre = (np.asarray(bounding_box[0]) + np.asarray(bounding_box[1])) / 2
        low, high = centre - size / 2, centre + size / 2
    else:
        low = reading.vector(ctx, table, "min", where, length=True, example="min = [-100, -75, -50]")
        high = reading.vector(ctx, table, "max", where, length=True, example="max = [100, 75, 50]")
    if np.any(high <= low):
        raise SceneError(f"{where}: the box has no volume; every edge must be positive (size) "
                         f"or max above min on every axis.")
    if np.any(low > bounding_box[0] + 1e-12) or np.any(high < bounding_box[1] - 1e-12):
        raise SceneError(f"{where}: the package does not hold every magnet; make it at least "
                         f"as large as the magnets' bounding box (see trapscape check).")
    low.setflags(write=False)
    high.setflags(write=False)
    return low, high
