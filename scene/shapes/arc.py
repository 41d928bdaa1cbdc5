"""An arc segment: dims (outer_diameter, inner_diameter, height, angle), the angle in radians
(degrees in a scene file), centred on body +x, axis body z. Its field is the exact polyhedron
field of its area-preserving tessellation (scene.shapes.sector)."""
from __future__ import annotations

import math

import numpy as np

from trapscape.scene.shapes.base import Dim, DimError
from trapscape.scene.shapes.ring import check_annulus
from trapscape.scene.shapes.round import RoundShape
from trapscape.scene.shapes.sector import ARC_SAG_TOLERANCE, arc_segments_for, sector_mesh

__all__ = ["ARC", "ARC_SAG_TOLERANCE", "arc_mesh", "arc_segments_for"]

arc_mesh = sector_mesh


class Arc(RoundShape):
    name = "arc"
    dims = (Dim("outer_diameter", "length"), Dim("inner_diameter", "length"),
            Dim("height", "length"), Dim("angle", "angle"))
    keys = ("size", "outer_diameter", "inner_diameter", "height", "angle")
    size_example = "size = [40, 30, 10, 45] (outer and inner diameter, height, angle in degrees)"
    radial_ok = True

    def validate(self, values, unit: str) -> None:
        check_annulus(self, values, unit, hollow_only=False)
        if values[3] > 360.0:
            raise DimError(f"the arc's angle must be at most 360 degrees, got {values[3]:g}; "
                           f"give the angle it spans in degrees.")

    def sector(self, part) -> tuple:
        d = part.dims
        return d[1] / 2.0, d[0] / 2.0, d[2], d[3]

    def volume(self, part) -> float:
        """Sector of an annulus: angle / 2 (Ro^2 - Ri^2) times the height, m^3 (textbook)."""
        d = part.dims
        return float(d[3] / 2.0 * ((d[0] / 2) ** 2 - (d[1] / 2) ** 2) * d[2])

    def radial_integral(self, part) -> np.ndarray:
        """Integral of the radial unit vector over the sector, m^3: h (Ro^2 - Ri^2) / 2 times
        2 sin(angle / 2) along +x (derived here)."""
        outer, inner, height, angle = part.dims
        along_x = height * ((outer / 2) ** 2 - (inner / 2) ** 2) * math.sin(angle / 2.0)
        return np.array([along_x, 0.0, 0.0])


ARC = Arc()
