"""Air transport of magnetised material: the strongest H at a distance from the package's surface
and the class of IATA packing instruction 953 (the regulation's limits and edition are in
physics/safety/limits.toml).

The package is a box; the points at a distance d from it are found along rays from its centre
(the distance to a convex box grows monotonically along such a ray once outside), the field of
the magnets there (their multipoles: every part is far away) is sampled over the directions and
its maximum refined between them. The regulation rests on a measurement: this is an estimate,
and a steel-lined package (which would lower the field) is not modelled.
"""
from __future__ import annotations

import numpy as np

from trapscape.physics.safety.directions import fibonacci_directions, refine_largest, with_axes

DIRECTIONS = 512
BISECTIONS = 60  # halvings of the ray parameter: far below a micrometre
CLASSES = ("not-restricted", "magnetized-material", "forbidden")


def distance_to_box(points, low, high) -> np.ndarray:
    """Euclidean distance from points to an axis-aligned box (0 inside).

    Parameters
    ----------
    points : numpy.ndarray, shape (N, 3)
        m.
    low, high : array_like, shape (3,)
        The box's corners, m.

    Returns
    -------
    numpy.ndarray, shape (N,)
        m.
    """
    excess = np.maximum(np.maximum(low - points, points - high), 0.0)
    return np.linalg.norm(excess, axis=1)


def points_at_distance(directions, low, high, distance: float) -> np.ndarray:
    """Where rays from the box's centre reach `distance` from the box.

    Parameters
    ----------
    directions : numpy.ndarray, shape (N, 3)
        Unit vectors.
    low, high : array_like, shape (3,)
        The box, m.
    distance : float
        m, positive.

    Returns
    -------
    numpy.ndarray, shape (N, 3)
        World points, m.
    """
    low, high = np.asarray(low, float), np.asarray(high, float)
    centre = (low + high) / 2.0
    lo = np.zeros(len(directions))
    hi = np.full(len(directions), np.linalg.norm(high - centre) + distance)
    for _ in range(BISECTIONS):
        mid = (lo + hi) / 2.0
        short = distance_to_box(centre + mid[:, None] * directions, low, high) < distance
        lo, hi = np.where(short, mid, lo), np.where(short, hi, mid)
    return centre + ((lo + hi) / 2.0)[:, None] * directions


def strongest_H(field, low, high, distance: float, count: int = DIRECTIONS) -> float:
    """The largest |H| of the magnets at `distance` from the package's surface.

    Parameters
    ----------
    field : trapscape.physics.safety.assembly.AssemblyField
        The magnets.
    low, high : array_like, shape (3,)
        The package, m.
    distance : float
        m.
    count : int
        Sampled directions (plus the axes and the total moment's).

    Returns
    -------
    float
        A/m.
    """
    def strength(u):
        return np.linalg.norm(field.H(points_at_distance(u, low, high, distance)), axis=1)

    directions = with_axes(fibonacci_directions(count), [field.total_moment])
    values = strength(directions)
    _, value = refine_largest(strength, directions, values, step=np.sqrt(4 * np.pi / count))
    return value


def air_transport_class(h_near: float, h_far: float, rules: dict) -> str:
    """The class of packing instruction 953 from the two fields.

    Parameters
    ----------
    h_near : float
        Largest |H| at rules["near_distance_m"] from the package, A/m.
    h_far : float
        Largest |H| at rules["far_distance_m"], A/m.
    rules : dict
        The [air_transport] table of limits.toml.

    Returns
    -------
    str
        "not-restricted" below the near limit; else "magnetized-material" (UN2807, class 9)
        below the far limit; else "forbidden" (without approval).

    References
    ----------
    IATA Dangerous Goods Regulations, packing instruction 953 (edition in limits.toml).
    """
    if h_near < rules["near_limit_A_per_m"]:
        return CLASSES[0]
    if h_far < rules["far_limit_A_per_m"]:
        return CLASSES[1]
    return CLASSES[2]
