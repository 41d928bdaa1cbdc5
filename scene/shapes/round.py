"""Shared behaviour of the shapes made of an extruded annular sector (cylinder, ring, arc):
the part's sector is (r_in, r_out, height, angle) with the axis along body z."""
from __future__ import annotations

import math

import numpy as np

from trapscape.scene.shapes.base import BaseShape, as_points
from trapscape.scene.shapes.patches import sector_surfaces, sector_volume
from trapscape.scene.shapes.sector import annular_sector_sdf, extrude, sector_mesh, sector_support

FULL_TURN = 2.0 * math.pi


class RoundShape(BaseShape):
    """Subclasses give sector(part) -> (r_in, r_out, height, angle in rad)."""

    radial_closed_form = "radial_sector"

    def sector(self, part) -> tuple:
        raise NotImplementedError

    def radial_field_params(self, part) -> tuple:
        """(outer diameter, inner diameter, height, angle): m, m, m, rad (a full turn for a ring)."""
        r_in, r_out, height, angle = self.sector(part)
        return 2.0 * float(r_out), 2.0 * float(r_in), float(height), float(angle)

    def support(self, part, directions) -> np.ndarray:
        r_in, r_out, height, angle = self.sector(part)
        return sector_support(r_in, r_out, height, angle, directions)

    def sdf(self, part, points) -> np.ndarray:
        r_in, r_out, height, angle = self.sector(part)
        p = as_points(points)
        if angle >= FULL_TURN - 1e-9:
            rho = np.hypot(p[:, 0], p[:, 1])
            d2 = rho - r_out if r_in == 0.0 else np.maximum(r_in - rho, rho - r_out)
        else:
            d2 = annular_sector_sdf(p[:, 0], p[:, 1], r_out, r_in, 0.5 * angle)
        return extrude(d2, p[:, 2], height)

    def intent_axes(self, part) -> dict:
        """Axial is body z (the axis), diametral body x (through an arc's middle), thickness
        the axis when the height is below the outer diameter, else body x."""
        _, r_out, height, _ = self.sector(part)
        z, x = np.array([0.0, 0.0, 1.0]), np.array([1.0, 0.0, 0.0])
        return {"axial": z, "diametral": x, "thickness": z if height <= 2.0 * r_out else x}

    def smallest(self, part) -> float:
        """The smaller of the wall thickness and the height, m."""
        r_in, r_out, height, _ = self.sector(part)
        return float(min(r_out - r_in, height))

    def tessellation(self, part, segments=None) -> tuple:
        """segments: per full turn (a drawing's resolution); None: within the sag tolerance."""
        r_in, r_out, height, angle = self.sector(part)
        if segments is not None:
            segments = max(math.ceil(segments * angle / FULL_TURN), math.ceil(angle / (0.5 * math.pi) - 1e-9),
                           3 if angle >= FULL_TURN else 1)
        return sector_mesh(2.0 * r_out, 2.0 * r_in, height, angle, segments)

    def mid_wall(self, part, count: int) -> tuple:
        """(points (K, 3), radial unit vectors (K, 3)), body frame: K = count points equally
        spaced on the mid-wall circle of a full turn, or the middle of an arc (K = 1)."""
        r_in, r_out, _, angle = self.sector(part)
        phi = np.linspace(0.0, FULL_TURN, count, endpoint=False) if angle >= FULL_TURN else np.zeros(1)
        radial = np.column_stack([np.cos(phi), np.sin(phi), np.zeros_like(phi)])
        return radial * (r_in + r_out) / 2.0, radial

    def patches(self, part, volume_charge=False) -> list:
        r_in, r_out, height, angle = self.sector(part)
        phi0, phi1 = (0.0, FULL_TURN) if angle >= FULL_TURN else (-angle / 2.0, angle / 2.0)
        families = sector_surfaces(r_in, r_out, height, phi0, phi1, angle < FULL_TURN - 1e-12)
        if volume_charge:
            families.append(sector_volume(r_in, r_out, height, phi0, phi1))
        return families
