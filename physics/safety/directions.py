"""Directions on the unit sphere: an even spread, and a local search for the direction where a
function is largest (the implant shell's farthest point, the shipping field's strongest)."""
from __future__ import annotations

import numpy as np

from trapscape.scene.shapes.frames import perpendicular_pair

GOLDEN_ANGLE = np.pi * (3.0 - np.sqrt(5.0))


def fibonacci_directions(count: int) -> np.ndarray:
    """Nearly even unit vectors on the sphere (the Fibonacci lattice).

    Parameters
    ----------
    count : int
        How many (at least 2).

    Returns
    -------
    numpy.ndarray, shape (count, 3)
        Unit vectors.

    References
    ----------
    A. Gonzalez, Measurement of areas on a sphere using Fibonacci and latitude-longitude
    lattices, Math. Geosci. 42, 49 (2010).
    """
    k = np.arange(count) + 0.5
    z = 1.0 - 2.0 * k / count
    rho = np.sqrt(np.maximum(0.0, 1.0 - z * z))
    phi = GOLDEN_ANGLE * k
    return np.stack([rho * np.cos(phi), rho * np.sin(phi), z], axis=1)


def with_axes(directions, extra=()) -> np.ndarray:
    """The directions plus the six axes and +-each extra vector (a dipole's strongest lies along
    its moment: it must be sampled exactly).

    Parameters
    ----------
    directions : array_like, shape (N, 3)
        Unit vectors.
    extra : iterable of array_like (3,)
        Vectors whose two senses are added (zero vectors are skipped).

    Returns
    -------
    numpy.ndarray, shape (M, 3)
        Unit vectors.
    """
    rows = [np.asarray(directions, float).reshape(-1, 3), np.eye(3), -np.eye(3)]
    for vector in extra:
        vector = np.asarray(vector, float)
        norm = np.linalg.norm(vector)
        if norm > 0:
            rows.append(np.array([vector, -vector]) / norm)
    return np.concatenate(rows)


def refine_largest(function, directions, values, step: float, rounds: int = 8):
    """The direction where `function` is largest, by a compass search around the best sample.

    Parameters
    ----------
    function : callable
        (K, 3) unit vectors -> (K,) values.
    directions : numpy.ndarray, shape (N, 3)
        Sampled unit vectors.
    values : numpy.ndarray, shape (N,)
        `function` at them.
    step : float
        First step, rad (about the samples' spacing).
    rounds : int
        Halvings of the step.

    Returns
    -------
    direction : numpy.ndarray, shape (3,)
    value : float
        Never below the best sample.

    References
    ----------
    Compass (pattern) search: T. G. Kolda, R. M. Lewis and V. Torczon, SIAM Review 45, 385 (2003).
    """
    best = int(np.argmax(values))
    direction, value = directions[best], float(values[best])
    angles = np.arange(8) * np.pi / 4
    for _ in range(rounds):
        for _ in range(4):  # a few moves at one step size before halving it
            u, v = perpendicular_pair(direction)
            tangent = np.cos(angles)[:, None] * u + np.sin(angles)[:, None] * v
            trial = np.cos(step) * direction + np.sin(step) * tangent
            trial /= np.linalg.norm(trial, axis=1, keepdims=True)
            results = np.asarray(function(trial), float)
            k = int(np.argmax(results))
            if not results[k] > value:
                break
            direction, value = trial[k], float(results[k])
        step /= 2.0
    return direction, value
