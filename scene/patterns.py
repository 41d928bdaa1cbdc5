"""Copies of a part: circular, linear and grid patterns, with same or alternating polarity.

A placement is (position (3,), rotation (3, 3) body -> world, polarity +1/-1). The part as
placed is always the first copy; polarity -1 means its north is reversed.
"""
from __future__ import annotations

import itertools

import numpy as np


def axis_angle_matrix(axis: np.ndarray, angle: float) -> np.ndarray:
    """Rotation by angle (radians) about a unit axis (Rodrigues' formula, any mechanics text)."""
    x, y, z = axis / np.linalg.norm(axis)
    k = np.array([[0.0, -z, y], [z, 0.0, -x], [-y, x, 0.0]])
    return np.eye(3) + np.sin(angle) * k + (1.0 - np.cos(angle)) * (k @ k)


def rotation_from_degrees(angles_deg) -> np.ndarray:
    """Extrinsic x, then y, then z rotations (degrees, about the fixed world axes): Rz Ry Rx."""
    ax, ay, az = np.radians(np.asarray(angles_deg, dtype=float))
    rx = np.array([[1, 0, 0], [0, np.cos(ax), -np.sin(ax)], [0, np.sin(ax), np.cos(ax)]])
    ry = np.array([[np.cos(ay), 0, np.sin(ay)], [0, 1, 0], [-np.sin(ay), 0, np.cos(ay)]])
    rz = np.array([[np.cos(az), -np.sin(az), 0], [np.sin(az), np.cos(az), 0], [0, 0, 1]])
    return _clean(rz @ ry @ rx)


def _clean(matrix: np.ndarray) -> np.ndarray:
    """Snap round-off such as cos(90 deg) = 6e-17 to exact 0, +-1 (keeps axis words exact)."""
    snapped = np.where(np.abs(matrix) < 1e-15, 0.0, matrix)
    return np.where(np.abs(np.abs(snapped) - 1.0) < 1e-15, np.sign(snapped), snapped)


def circular(position, rotation, count: int, axis, center, alternate: bool) -> list:
    """count copies turned about the axis through center in 360/count steps."""
    placements = []
    for k in range(count):
        turn = _clean(axis_angle_matrix(np.asarray(axis, float), 2.0 * np.pi * k / count))
        placements.append((center + turn @ (position - center), _clean(turn @ rotation),
                           _sign(k, alternate)))
    return placements


def linear(position, rotation, count: int, step, alternate: bool) -> list:
    """count copies, each `step` further along."""
    return [(position + k * np.asarray(step, float), rotation, _sign(k, alternate))
            for k in range(count)]


def grid(position, rotation, counts, steps, alternate: bool) -> list:
    """A lattice; the first step varies fastest. Alternate polarity is a checkerboard."""
    placements = []
    ranges = [range(n) for n in counts]
    for index in itertools.product(*reversed(ranges)):
        index = tuple(reversed(index))
        offset = sum(i * np.asarray(s, float) for i, s in zip(index, steps))
        placements.append((position + offset, rotation, _sign(sum(index), alternate)))
    return placements


def _sign(k: int, alternate: bool) -> int:
    return -1 if alternate and k % 2 else 1
