"""Classification of an equilibrium by the Hessian of U projected on its free directions:
stiffnesses (eigenvalues, N/m), their directions, small-oscillation frequencies and the class of
DESIGN.md, Physics."""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trapscape.physics.traps.problem import MARGINAL_RATIO
from trapscape.physics.traps.report import Equilibrium

FIELD_ZERO_NOTE = "B = 0 here: the energy -m|B| is a cone, unstable by rule (DESIGN.md, Physics)"


@dataclass(frozen=True, eq=False)
class Sample:
    """The probe's state at one point (as the probe model evaluates it).

    Attributes
    ----------
    position : ndarray, shape (3,)
        m.
    energy_J : float
        J, gravity included.
    force_N : ndarray, shape (3,)
        N, -grad U.
    B_T : ndarray, shape (3,)
        The magnets' field at the centre, T.
    """

    position: np.ndarray
    energy_J: float
    force_N: np.ndarray
    B_T: np.ndarray


@dataclass(frozen=True, eq=False)
class LocalHessian:
    """The Hessian of U on the directions the probe may move in at a point.

    Attributes
    ----------
    frame : ndarray, shape (k, 3)
        Orthonormal rows: the constraint's basis, or the tangents of a contact surface.
    matrix : ndarray, shape (k, k), or None
        N/m, expressed in frame; None at a magnet probe's field zero (undefined there).
    """

    frame: np.ndarray
    matrix: np.ndarray | None


def classify(eigenvalues, marginal_ratio: float = MARGINAL_RATIO) -> str:
    """stable | unstable | saddle | marginal from the projected Hessian's eigenvalues.

    Every eigenvalue positive: stable; every one negative: unstable; mixed: saddle; any
    |eigenvalue| below marginal_ratio of the largest (or all zero): marginal (DESIGN.md,
    Physics). No free direction (pressed at a point on a line): stable.

    Parameters
    ----------
    eigenvalues : array_like, shape (k,)
        N/m.
    marginal_ratio : float

    Returns
    -------
    str
    """
    values = np.asarray(eigenvalues, float)
    if values.size == 0:
        return "stable"
    top = np.max(np.abs(values))
    if top == 0.0 or np.any(np.abs(values) < marginal_ratio * top):
        return "marginal"
    if np.all(values > 0):
        return "stable"
    if np.all(values < 0):
        return "unstable"
    return "saddle"


def rests(eq, marginal_ratio: float = MARGINAL_RATIO) -> bool:
    """Whether a probe put at the equilibrium stays: stable, or marginal with no direction in
    which its energy falls (a circle of contacts in an axisymmetric scene).

    Parameters
    ----------
    eq : Equilibrium
    marginal_ratio : float
        The one it was classified with (TrapTolerances.marginal_ratio; TrapReport carries it).

    Returns
    -------
    bool
    """
    if eq.classification != "marginal":
        return eq.classification == "stable"
    stiffness = [k for k in eq.stiffness_N_per_m if k is not None]
    top = max((abs(k) for k in stiffness), default=0.0)
    return top > 0.0 and min(stiffness) > -marginal_ratio * top


def frequencies(stiffness, mass: float) -> tuple:
    """Small-oscillation frequencies f = sqrt(k / m_p) / (2 pi) of a harmonic oscillator.

    Parameters
    ----------
    stiffness : sequence of float or None
        N/m.
    mass : float
        kg.

    Returns
    -------
    tuple of float or None
        Hz; None where k <= 0 or undefined.

    References
    ----------
    Harmonic oscillator; e.g. Landau & Lifshitz, Mechanics, section 23.
    """
    return tuple(float(np.sqrt(k / mass) / (2.0 * np.pi)) if (k is not None and k > 0) else None
                 for k in stiffness)


def _held(stiffness, ratio: float) -> tuple:
    """The stiffnesses with the marginal ones (|k| below ratio of the largest) as 0: a circle's
    rounding-level 1e-17 N/m has no frequency."""
    known = [abs(k) for k in stiffness if k is not None]
    floor = ratio * max(known, default=0.0)
    return tuple(k if k is None or abs(k) >= floor else 0.0 for k in stiffness)


TIED = 1e-9  # of the largest |stiffness|: equal stiffnesses, whose directions any rotation mixes


def axes_in_ties(values, directions) -> np.ndarray:
    """Directions of equal stiffnesses (a run of steps below TIED) replaced by the world axes'
    share of their plane, x first (Gram-Schmidt): any basis of that plane is as right, and
    rounding would otherwise choose it (a four-fold trap's two level stiffnesses came out at
    41 degrees to the axes in one run and 2 in the next).

    Parameters
    ----------
    values : numpy.ndarray, shape (k,)
        Ascending stiffnesses, N/m.
    directions : numpy.ndarray, shape (k, 3)
        Their unit directions (orthonormal rows).

    Returns
    -------
    numpy.ndarray, shape (k, 3)
    """
    directions = np.array(directions, float)
    tie = TIED * (np.max(np.abs(values)) if len(values) else 0.0)
    starts = np.flatnonzero(np.diff(values, prepend=-np.inf) > tie)
    for start, stop in zip(starts, list(starts[1:]) + [len(values)]):
        if stop - start < 2:
            continue
        plane = directions[start:stop]
        chosen = []
        for axis in np.eye(3):
            v = plane.T @ (plane @ axis)  # the axis's share of the plane
            for c in chosen:
                v -= (c @ v) * c
            if np.linalg.norm(v) > 1e-3 and len(chosen) < stop - start:
                chosen.append(v / np.linalg.norm(v))
        if len(chosen) == stop - start:  # else (never for a plane of 3D space) as they were
            directions[start:stop] = chosen
    return directions


def signed_directions(directions) -> np.ndarray:
    """Each direction's sign chosen so that its largest component (the first of those equal to
    within 1e-9) is positive: an eigenvector's sign is arbitrary, and rounding must not set it.

    Parameters
    ----------
    directions : array_like, shape (k, 3)
        Unit rows.

    Returns
    -------
    numpy.ndarray, shape (k, 3)
    """
    directions = np.array(directions, float).reshape(-1, 3)
    size = np.abs(directions)
    first = np.argmax(size >= size.max(axis=1, keepdims=True) - 1e-9, axis=1)
    sign = np.where(directions[np.arange(len(directions)), first] < 0.0, -1.0, 1.0)
    return directions * sign[:, None]


def make_equilibrium(problem, sample: Sample, hessian: LocalHessian, contact=None,
                     note: str = "") -> Equilibrium:
    """The classified equilibrium at a sample.

    Parameters
    ----------
    problem : TrapProblem
        For the probe's mass, the line's coordinate and the marginal ratio.
    sample : Sample
    hessian : LocalHessian
        matrix None: a field zero, unstable by rule with undefined stiffnesses (DESIGN.md).
    contact : Contact or None
    note : str

    Returns
    -------
    Equilibrium
    """
    frame = hessian.frame
    k = frame.shape[0]
    ratio = problem.tolerances.marginal_ratio
    if hessian.matrix is None:
        stiffness = tuple(None for _ in range(k))
        directions = frame.copy()
        classification, stable = "unstable", 0
        note = note or FIELD_ZERO_NOTE
    else:
        values, vectors = np.linalg.eigh(hessian.matrix)
        stiffness = tuple(float(v) for v in values)
        directions = signed_directions(axes_in_ties(values, vectors.T @ frame)) if k \
            else np.zeros((0, 3))
        classification = classify(values, ratio)
        top = np.max(np.abs(values)) if k else 0.0
        stable = int(np.sum(values > ratio * top))
    x = sample.position
    return Equilibrium(
        position=np.asarray(x, float).copy(), coordinate_m=problem.line_coordinate(x),
        energy_J=float(sample.energy_J), classification=classification, stable_directions=stable,
        free_directions=k, stiffness_N_per_m=stiffness, directions=np.asarray(directions),
        frequency_Hz=frequencies(_held(stiffness, ratio), problem.law.mass),
        B_T=np.asarray(sample.B_T, float).copy(), force_N=np.asarray(sample.force_N, float).copy(),
        contact=contact, note=note)
