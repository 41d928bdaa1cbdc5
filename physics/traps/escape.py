"""The lowest way out of a well on the scan grid: a priority flood (Dijkstra's algorithm with the
path cost max U along the path instead of a sum: the minimax path, as in priority-flood
depression filling, Barnes et al., Computers & Geosciences 62, 117 (2014)).

The flood starts at the well's cell and always grows into the lowest reachable neighbour along
the grid axes (the allowed directions). It stops at the first cell that is an exit: one on the
box boundary, one next to a magnet (for a free well: the probe touches it and is caught), one of
another well, or one lower than the well's bottom (another basin). The level at that moment is
the barrier; the cells flooded below it are the well's extent; the parents give the path.
"""
from __future__ import annotations

import heapq
from dataclasses import dataclass

import numba
import numpy as np

ADMISSIBLE, AT_MAGNET, OUTSIDE_BOX = 0, 1, 2  # cell states
EXIT_NONE, EXIT_BOX, EXIT_MAGNET, EXIT_WELL = 0, 1, 2, 3
EXIT_NAMES = {EXIT_NONE: None, EXIT_BOX: "box", EXIT_MAGNET: "magnet", EXIT_WELL: "another well"}


@dataclass(frozen=True, eq=False)
class FloodGrid:
    """The grid a flood runs on.

    Attributes
    ----------
    energy : ndarray, shape (N,)
        J on the flattened grid (C order).
    state : ndarray of int8, shape (N,)
        ADMISSIBLE | AT_MAGNET | OUTSIDE_BOX per cell.
    shape : tuple of 1 to 3 ints
        The grid's axes (the allowed directions).
    """

    energy: np.ndarray
    state: np.ndarray
    shape: tuple


@dataclass(frozen=True, eq=False)
class Flood:
    """What the flood from one cell found (indices into the flattened grid).

    Attributes
    ----------
    level : float
        J, the barrier level on the grid (inf when no exit was reached).
    exit_kind : str or None
        "box" | "magnet" | "another well" | None (closed in).
    exit_cell : int
        The last cell of the path, -1 when none.
    path : ndarray of int, shape (P,)
        Cells from the start to the exit.
    flooded : ndarray of bool, shape (N,)
        Cells reached below the barrier level (the well).
    """

    level: float
    exit_kind: str | None
    exit_cell: int
    path: np.ndarray
    flooded: np.ndarray


def flood_from(grid: FloodGrid, start: int, bottom: float, exit_cells=None,
               magnets_are_exits: bool = True) -> Flood:
    """Minimax flood on the grid from cell ``start``.

    See the module's docstring.

    Parameters
    ----------
    grid : FloodGrid
    start : int
        Flat index of the well's cell.
    bottom : float
        The well's exact bottom energy, J (cells below it are another basin).
    exit_cells : ndarray of bool, shape (N,), or None
        Extra exits (the other wells' cells).
    magnets_are_exits : bool
        False for a well that is itself a contact with a magnet (the magnet is then a wall).

    Returns
    -------
    Flood

    References
    ----------
    Barnes et al., Computers & Geosciences 62, 117 (2014).
    """
    energy = np.ascontiguousarray(grid.energy, dtype=np.float64)
    state = np.ascontiguousarray(grid.state, dtype=np.int8)
    exits = np.zeros(len(energy), np.bool_) if exit_cells is None else np.ascontiguousarray(
        exit_cells, dtype=np.bool_)
    dims = np.array(grid.shape, dtype=np.int64)
    level, kind, last, levels, parent, done = _flood(energy, state, exits, dims, int(start),
                                                     float(bottom), bool(magnets_are_exits))
    path = _path(parent, last, int(start)) if last >= 0 else np.array([int(start)])
    flooded = done & (levels < level) if np.isfinite(level) else done
    flooded[int(start)] = True
    return Flood(level=float(level), exit_kind=EXIT_NAMES[int(kind)], exit_cell=int(last),
                 path=path, flooded=flooded)


def _path(parent, last, start) -> np.ndarray:
    cells = [last]
    while cells[-1] != start and parent[cells[-1]] >= 0:
        cells.append(int(parent[cells[-1]]))
    return np.array(cells[::-1], dtype=np.int64)


# Plain arrays and scalars (numba compiles no dataclass), hence seven arguments.
@numba.njit(cache=True)
def _flood(energy, state, exits, dims, start, bottom, magnets_are_exits):
    n = energy.shape[0]
    k = dims.shape[0]
    strides = np.ones(k, np.int64)
    for a in range(k - 2, -1, -1):
        strides[a] = strides[a + 1] * dims[a + 1]
    levels = np.full(n, np.inf)
    parent = np.full(n, -1, np.int64)
    done = np.zeros(n, np.bool_)
    levels[start] = energy[start]
    heap = [(energy[start], start)]
    while len(heap) > 0:
        level, cell = heapq.heappop(heap)
        if done[cell]:
            continue
        done[cell] = True
        if cell != start and (exits[cell] or energy[cell] < bottom):
            return level, EXIT_WELL, cell, levels, parent, done
        for a in range(k):
            coordinate = (cell // strides[a]) % dims[a]
            for step in (-1, 1):
                c = coordinate + step
                if c < 0 or c >= dims[a]:
                    return level, EXIT_BOX, cell, levels, parent, done
                neighbour = cell + step * strides[a]
                if state[neighbour] == OUTSIDE_BOX:
                    return level, EXIT_BOX, cell, levels, parent, done
                if state[neighbour] == AT_MAGNET:
                    if magnets_are_exits:
                        return level, EXIT_MAGNET, cell, levels, parent, done
                    continue
                if done[neighbour]:
                    continue
                new_level = max(level, energy[neighbour])
                if new_level < levels[neighbour]:
                    levels[neighbour] = new_level
                    parent[neighbour] = cell
                    heapq.heappush(heap, (new_level, neighbour))
    return np.inf, EXIT_NONE, -1, levels, parent, done
