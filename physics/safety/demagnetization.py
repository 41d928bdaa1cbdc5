"""How close each magnet is driven to its knee: the worst reverse field along -M inside it (from
its own shape and from the other parts) against its grade's intrinsic coercivity at the working
temperatures.

H inside a uniformly magnetised part is the field of all the charges (its own give the shape's
demagnetising field; J. D. Jackson, Classical Electrodynamics, 3rd ed., 5.10: -M/3 in a sphere).
It is sampled at the centres of SAMPLES^3 cells of the part's bounding box that lie inside it:
the field's component along M stays bounded at the part's edges (the charges of the pole faces
give it), and the cell centres keep clear of the logarithmic edge terms of the others.
HcJ(T) = HcJ(20 C) (1 + beta (T - 20) / 100), Br(T) likewise with alpha (reversible
coefficients, supplier datasheets); the reverse field scales with Br(T), as every M does.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trapscape.physics.field.parts import part_contains, part_magnetization
from trapscape.scene.shapes import shape_of

SAMPLES = 6  # cells per side of the part's bounding box
ROOM = 20.0  # C, where datasheets give Br and HcJ


@dataclass(frozen=True)
class Demagnetization:
    """One part's worst reverse field and its coercivity (SI; None where the grade gives none)."""

    name: str
    reverse_H_A_per_m: float | None  # largest -H . M_hat inside, at 20 C (None: radial part)
    reverse_H_hot_A_per_m: float | None  # the same with Br at the temperature of the worst ratio
    coercivity_A_per_m: float | None  # HcJ at that temperature
    temperature_C: float | None
    ratio: float | None  # reverse field / HcJ
    at_risk: bool
    note: str


def reverse_fields(field) -> list:
    """The largest -H . M_hat over interior samples of each part, at 20 C.

    Parameters
    ----------
    field : trapscape.physics.safety.assembly.AssemblyField
        The magnets.

    Returns
    -------
    list of float or None
        A/m per part (positive: H opposes M); None for radially magnetised parts (their dipole
        sets have no exact interior field here).
    """
    result = []
    for k, magnet in enumerate(field.magnets):
        if magnet.radial is not None:
            result.append(None)
            continue
        points = interior_samples(magnet)
        H = field.H(points)
        M = part_magnetization(magnet, points)
        along = np.einsum("ij,ij->i", H, M) / np.linalg.norm(M, axis=1)
        result.append(float(-along.min()))
    return result


def interior_samples(magnet) -> np.ndarray:
    """World points (N, 3), m: centres of SAMPLES^3 cells of the body bounding box inside the part.

    Parameters
    ----------
    magnet : trapscape.scene.model.Magnet
        The part.

    Returns
    -------
    numpy.ndarray, shape (N, 3)
    """
    low, high = shape_of(magnet).bounds(magnet)
    t = (np.arange(SAMPLES) + 0.5) / SAMPLES
    grid = np.stack(np.meshgrid(t, t, t, indexing="ij"), axis=-1).reshape(-1, 3)
    body = low + grid * (high - low)
    world = body @ np.asarray(magnet.rotation, float).T + magnet.position
    inside = part_contains(magnet, world)
    return world[inside] if inside.any() else np.asarray(magnet.position, float)[None]


def assess(name, reverse, grade, temperatures, margin: float) -> Demagnetization:
    """Compare a reverse field with the grade's coercivity at each working temperature.

    Parameters
    ----------
    name : str
        The part.
    reverse : float or None
        Worst reverse field at 20 C, A/m.
    grade : trapscape.scene.grades.Grade or None
        The part's grade (None: the scene gave a remanence only).
    temperatures : iterable of float
        Working temperatures, C (the lowest and the highest).
    margin : float
        Flag the part when reverse / HcJ exceeds it.

    Returns
    -------
    Demagnetization
    """
    if reverse is None:
        return Demagnetization(name, None, None, None, None, None, False,
                               "radially magnetised: not computed")
    if grade is None or grade.coercivity is None:
        return Demagnetization(name, reverse, None, None, None, None, False,
                               "no coercivity: give a grade (or coercivity_kA_per_m in a "
                               "materials file)")
    worst = None
    for temperature in temperatures:
        alpha = grade.temperature_coefficient or 0.0
        beta = grade.coercivity_temperature_coefficient or 0.0
        hot = reverse * (1.0 + alpha * (temperature - ROOM) / 100.0)
        coercivity = grade.coercivity * max(1.0 + beta * (temperature - ROOM) / 100.0, 0.0)
        ratio = hot / coercivity if coercivity > 0 else np.inf
        if worst is None or ratio > worst[0]:
            worst = (ratio, hot, coercivity, temperature)
    ratio, hot, coercivity, temperature = worst
    note = "" if grade.coercivity_temperature_coefficient is not None or all(
        t == ROOM for t in temperatures) else "the grade gives no temperature coefficient of HcJ"
    return Demagnetization(name, reverse, hot, coercivity, temperature, float(ratio),
                           bool(ratio > margin), note)
