"""A solid cylinder: dims (diameter, height), axis body z, centred at the origin."""
from __future__ import annotations

import numpy as np

from trapscape.scene.shapes.base import Dim
from trapscape.scene.shapes.round import FULL_TURN, RoundShape


class Cylinder(RoundShape):
    name = "cylinder"
    dims = (Dim("diameter", "length"), Dim("height", "length"))
    keys = ("size", "diameter", "height")
    size_example = "size = [10, 5] (diameter, height) or diameter = 10 and height = 5"
    closed_form = "cylinder"

    def sector(self, part) -> tuple:
        return 0.0, part.dims[0] / 2.0, part.dims[1], FULL_TURN

    def volume(self, part) -> float:
        """pi D^2 h / 4, m^3 (textbook)."""
        d = part.dims
        return float(np.pi * d[0] ** 2 * d[1] / 4.0)

    def smallest(self, part) -> float:
        return float(min(part.dims))

    def field_params(self, part) -> tuple:
        return tuple(float(v) for v in part.dims)


CYLINDER = Cylinder()
