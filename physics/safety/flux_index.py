"""The flux index of a loose magnet (toy-safety standards; limit and source in limits.toml):
B_max^2 in kG^2 times the pole area in mm^2.

B_max: the largest |B| of the part alone on the planes that touch its north and south poles (a
flat probe laid on the pole face), sampled on a GRID x GRID raster over its footprint and lifted
by LIFT (a gauss-meter probe's sensor sits a fraction of a millimetre behind its tip: common
practice; the field's edge terms are logarithmic, so the rim value depends on the lift). Pole area: the part's
surface projected along M (the faces that face north, each by n . M_hat). A part that fits the
small-parts cylinder (its two smaller extents within its diameter, its largest within its depth)
can be swallowed.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trapscape.scene.shapes import shape_of
from trapscape.scene.shapes.frames import perpendicular_pair

GRID = 17
LIFT = 0.25e-3  # m
TESLA_TO_KG = 10.0  # 1 T = 10 kG
M2_TO_MM2 = 1e6


@dataclass(frozen=True)
class FluxIndex:
    """One loose part's flux index (None for radially magnetised parts)."""

    name: str
    B_max_T: float | None
    pole_area_m2: float | None
    index_kG2_mm2: float | None
    small_part: bool
    over_limit: bool


def pole_area(magnet) -> float:
    """The part's surface projected along its magnetisation, m^2.

    Parameters
    ----------
    magnet : trapscape.scene.model.Magnet
        A uniformly magnetised part.

    Returns
    -------
    float
        sum over the tessellation of max(n . M_hat, 0) times the triangle's area.
    """
    vertices, faces = shape_of(magnet).tessellation(magnet)
    a, b, c = (vertices[faces[:, k]] for k in range(3))
    doubled = np.cross(b - a, c - a)  # outward normal times twice the area
    north = np.asarray(magnet.north, float)
    return float(np.maximum(doubled @ north, 0.0).sum() / 2.0)


def pole_samples(magnet) -> np.ndarray:
    """World points (2 GRID^2, 3) on the planes touching the north and south poles, m.

    Parameters
    ----------
    magnet : trapscape.scene.model.Magnet
        A uniformly magnetised part.

    Returns
    -------
    numpy.ndarray, shape (2 GRID^2, 3)
    """
    shape = shape_of(magnet)
    north = np.asarray(magnet.north, float)
    u, v = perpendicular_pair(north)
    low, high = shape.bounds(magnet)
    corners = np.array([[x, y, z] for x in (low[0], high[0]) for y in (low[1], high[1])
                        for z in (low[2], high[2])])
    su, sv = corners @ u, corners @ v
    t = np.linspace(0.0, 1.0, GRID)
    gu, gv = np.meshgrid(su.min() + t * np.ptp(su), sv.min() + t * np.ptp(sv), indexing="ij")
    raster = gu.reshape(-1, 1) * u + gv.reshape(-1, 1) * v
    lift = LIFT
    rows = []
    for sense in (1.0, -1.0):
        reach = float(shape.support(magnet, (sense * north)[None])[0])
        rows.append(raster + sense * (reach + lift) * north)
    body = np.concatenate(rows)
    return body @ np.asarray(magnet.rotation, float).T + magnet.position


def is_small_part(magnet, diameter: float, length: float) -> bool:
    """Whether the part fits the small-parts cylinder (conservatively: by its body extents).

    Parameters
    ----------
    magnet : trapscape.scene.model.Magnet
        The part.
    diameter, length : float
        The cylinder's, m.

    Returns
    -------
    bool
    """
    low, high = shape_of(magnet).bounds(magnet)
    extents = np.sort(high - low)
    return bool(extents[1] <= diameter and extents[2] <= length)


def flux_index(field, index: int, rules: dict) -> FluxIndex:
    """The flux index of part `index` on its own.

    Parameters
    ----------
    field : trapscape.physics.safety.assembly.AssemblyField
        The magnets.
    index : int
        The part.
    rules : dict
        The [flux_index] table of limits.toml.

    Returns
    -------
    FluxIndex
    """
    magnet = field.magnets[index]
    small = is_small_part(magnet, rules["small_part_diameter_m"], rules["small_part_length_m"])
    if magnet.radial is not None:
        return FluxIndex(magnet.name, None, None, None, small, False)
    B = np.linalg.norm(field.B(pole_samples(magnet), parts=[index]), axis=1).max()
    area = pole_area(magnet)
    value = (B * TESLA_TO_KG) ** 2 * area * M2_TO_MM2
    return FluxIndex(magnet.name, float(B), area, float(value), small,
                     bool(value > rules["limit_kG2_mm2"]))
