"""A ring: dims (outer_diameter, inner_diameter, height), axis body z, centred at the origin."""
from __future__ import annotations

import numpy as np

from trapscape.scene.shapes.base import BaseShape, Dim, DimError, check_positive
from trapscape.scene.shapes.round import FULL_TURN, RoundShape


def check_annulus(shape: BaseShape, values, unit: str, hollow_only: bool) -> None:
    """Raise DimError unless the dims are positive and the inner diameter is below the outer
    one; a ring's inner diameter may not be 0 (that is a cylinder), an arc's may (a pie slice).

    Parameters
    ----------
    shape : the ring or arc (its Dim names).
    values : sequence of float, file units (an arc's angle in degrees).
    unit : str, the file's length unit, for the message.
    hollow_only : bool, True for a ring.

    Returns
    -------
    None.

    References
    ----------
    DESIGN.md, Scene format.
    """
    solid = ("a ring with inner diameter 0 is a solid cylinder; write shape = \"cylinder\" with "
             "its diameter and height.")
    check_positive(shape, values, {"inner_diameter": solid if hollow_only else None})
    if values[1] >= values[0]:
        raise DimError(f"the inner diameter ({values[1]:g} {unit}) must be smaller than the "
                       f"outer diameter ({values[0]:g} {unit}); swap or correct them.")


class Ring(RoundShape):
    name = "ring"
    dims = (Dim("outer_diameter", "length"), Dim("inner_diameter", "length"),
            Dim("height", "length"))
    keys = ("size", "outer_diameter", "inner_diameter", "height")
    size_example = "size = [20, 10, 5] (outer diameter, inner diameter, height)"
    radial_ok = True
    closed_form = "ring"

    def validate(self, values, unit: str) -> None:
        check_annulus(self, values, unit, hollow_only=True)

    def sector(self, part) -> tuple:
        d = part.dims
        return d[1] / 2.0, d[0] / 2.0, d[2], FULL_TURN

    def volume(self, part) -> float:
        """pi (Do^2 - Di^2) h / 4, m^3 (textbook)."""
        d = part.dims
        return float(np.pi * (d[0] ** 2 - d[1] ** 2) * d[2] / 4.0)

    def field_params(self, part) -> tuple:
        return tuple(float(v) for v in part.dims)

    def radial_integral(self, part) -> np.ndarray:
        """The radial unit vector integrates to zero over a full turn."""
        return np.zeros(3)


RING = Ring()
