"""Signed distances to many axis-aligned boxes at once: one numba loop over points and parts
instead of one Python shape call per part (a 30 x 30 board's clearance made 426,380 of them).

A box whose body-to-world matrix is a signed permutation has its body coordinates exactly
+-(x - c) in permuted order (every product of the rotation is by 0 or +-1), so these kernels
repeat scene/shapes/box.py's `sdf` operation by operation, the norm summed in numpy's order
((q0^2 + q1^2) + q2^2): the distances are the per-part path's bit for bit.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numba import njit, prange

from trapscape.physics.field.families import axis_aligned
from trapscape.scene.shapes import shape_of

PARALLEL_MIN_PAIRS = 200_000  # point-part pairs above which the points are shared over threads


@dataclass(frozen=True)
class Boxes:
    """The axis-aligned boxes among a scene's magnets, packed for the kernels."""

    index: np.ndarray  # (K,) int: the magnets' indices in the scene
    centers: np.ndarray  # (K, 3) m
    axes: np.ndarray  # (K, 3) int: the world axis along each body axis
    halves: np.ndarray  # (K, 3) m: half the edge along each body axis

    @classmethod
    def of(cls, magnets) -> "Boxes":
        """The magnets that are rectangular blocks turned by right angles only (others are left out).

        Parameters
        ----------
        magnets : sequence of trapscape.scene.model.Magnet
            SI units.

        Returns
        -------
        Boxes
        """
        chosen = [k for k, m in enumerate(magnets)
                  if shape_of(m).is_block and axis_aligned(m.rotation)]
        axes = [np.argmax(np.abs(np.asarray(magnets[k].rotation, float)), axis=0) for k in chosen]
        return cls(np.array(chosen, dtype=np.int64),
                   np.array([magnets[k].position for k in chosen], float).reshape(-1, 3),
                   np.array(axes, dtype=np.int64).reshape(-1, 3),
                   np.array([0.5 * np.asarray(magnets[k].dims, float) for k in chosen],
                            float).reshape(-1, 3))

    def table(self, points) -> np.ndarray:
        """Signed distances from world points to each box (negative inside).

        Parameters
        ----------
        points : array_like, shape (N, 3)
            World points, m.

        Returns
        -------
        numpy.ndarray, shape (N, K)
            m, one column per box in the order of ``index``.
        """
        out = np.empty((len(points), len(self.index)))
        _table(np.ascontiguousarray(points, float), self.centers, self.axes, self.halves, out)
        return out

    def lower(self, points, best) -> np.ndarray:
        """The smaller of ``best`` and the distance to the nearest box, at each point.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            World points, m.
        best : array_like, shape (N,)
            Distances known so far, m (not changed).

        Returns
        -------
        numpy.ndarray, shape (N,)
            m.
        """
        best = np.array(best, float)
        if len(self.index):
            kernel = _lower_parallel if len(points) * len(self.index) >= PARALLEL_MIN_PAIRS else _lower
            kernel(np.ascontiguousarray(points, float), self.centers, self.axes, self.halves, best)
        return best


@njit(cache=True)
def _sdf(points, n, centers, axes, halves, k):
    """|max(q, 0)| + min(max_i q_i, 0), q = |p| - size / 2 (scene/shapes/box.py, same order)."""
    q0 = abs(points[n, axes[k, 0]] - centers[k, axes[k, 0]]) - halves[k, 0]
    q1 = abs(points[n, axes[k, 1]] - centers[k, axes[k, 1]]) - halves[k, 1]
    q2 = abs(points[n, axes[k, 2]] - centers[k, axes[k, 2]]) - halves[k, 2]
    o0, o1, o2 = max(q0, 0.0), max(q1, 0.0), max(q2, 0.0)
    return np.sqrt((o0 * o0 + o1 * o1) + o2 * o2) + min(max(max(q0, q1), q2), 0.0)


@njit(cache=True)
def _table(points, centers, axes, halves, out):
    for n in range(points.shape[0]):
        for k in range(centers.shape[0]):
            out[n, k] = _sdf(points, n, centers, axes, halves, k)


@njit(cache=True)
def _lower_at(points, n, centers, axes, halves, best):
    b = best[n]
    for k in range(centers.shape[0]):
        d = _sdf(points, n, centers, axes, halves, k)
        if d < b or d != d:  # a NaN stays, as numpy's minimum keeps it
            b = d
    best[n] = b


@njit(cache=True)
def _lower(points, centers, axes, halves, best):
    for n in range(points.shape[0]):
        _lower_at(points, n, centers, axes, halves, best)


@njit(cache=True, parallel=True)
def _lower_parallel(points, centers, axes, halves, best):
    for n in prange(points.shape[0]):
        _lower_at(points, n, centers, axes, halves, best)
