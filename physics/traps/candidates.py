"""Candidate equilibria read off the scan grid: cells where every projected force component
changes sign (free equilibria), local minima (field zeros, contact starts) and the cells next to
a magnet or plate."""
from __future__ import annotations

import numpy as np
from scipy import ndimage


def corner_slices(k: int) -> list:
    """Slices picking each of the 2^k corners of every cell of a k-axis grid.

    Parameters
    ----------
    k : int
        Number of grid axes (1 line, 2 plane, 3 free).

    Returns
    -------
    list of 2^k tuples of k slices
        Applied to an array over the grid's samples, each gives the array over the cells' one
        corner (one sample fewer along every axis).
    """
    corners = np.indices((2,) * k).reshape(k, -1).T
    return [tuple(slice(c, None if c else -1) for c in corner) for corner in corners]


def sign_change_cells(grid) -> np.ndarray:
    """Centres of the cells where every projected force component changes sign.

    Only cells whose corners are all admissible count; a component changes sign when it takes
    both signs (or zero) among the corners.

    Parameters
    ----------
    grid : ScanGrid

    Returns
    -------
    ndarray, shape (M, 3)
        m.
    """
    cells = np.argwhere(sign_change_mask(grid))
    return grid.origin + (grid.spacing * (cells + 0.5)) @ grid.axes


def sign_change_mask(grid) -> np.ndarray:
    """Which cells have every projected force component change sign (see sign_change_cells).

    Parameters
    ----------
    grid : ScanGrid

    Returns
    -------
    ndarray of bool, shape of the cells (one fewer than grid.shape along every axis)
    """
    shape, k = grid.shape, len(grid.shape)
    ok = grid.admissible.reshape(shape)
    components = (grid.force_N @ grid.axes.T).reshape(shape + (k,))
    first, *others = corner_slices(k)
    # corner by corner into one array each: reducing a list of the 2^k corner arrays stacks
    # them first (a copy of 2^k grids of k components)
    all_ok, low, high = ok[first].copy(), components[first].copy(), components[first].copy()
    for s in others:
        all_ok &= ok[s]
        np.minimum(low, components[s], out=low)
        np.maximum(high, components[s], out=high)
    return all_ok & np.all((low <= 0.0) & (high >= 0.0), axis=-1)


def local_minima(values, mask, shape) -> np.ndarray:
    """Masked cells not above any masked neighbour (3^k neighbourhood).

    Parameters
    ----------
    values : ndarray, shape (N,)
        On the flattened grid.
    mask : ndarray of bool, shape (N,)
    shape : tuple of k ints

    Returns
    -------
    ndarray of int, shape (M,)
        Flat indices, ascending.
    """
    field = np.where(mask, values, np.inf).reshape(shape)
    lowest = ndimage.minimum_filter(field, size=3, mode="constant", cval=np.inf)
    return np.flatnonzero((field <= lowest).reshape(-1) & mask)


def boundary_cells(grid) -> np.ndarray:
    """Admissible cells with a neighbour along an axis that is in the box but inadmissible.

    Parameters
    ----------
    grid : ScanGrid

    Returns
    -------
    ndarray of bool, shape (N,)
    """
    shape = grid.shape
    blocked = (grid.inside_box & ~grid.admissible).reshape(shape)
    along_axes = ndimage.generate_binary_structure(len(shape), 1)
    near = ndimage.binary_dilation(blocked, structure=along_axes)
    return near.reshape(-1) & grid.admissible


def contact_starts(grid, limit: int) -> np.ndarray:
    """The lowest boundary cells: local minima of U among admissible cells, next to a surface.

    Parameters
    ----------
    grid : ScanGrid
    limit : int
        At most this many, the lowest first.

    Returns
    -------
    ndarray of int, shape (M,)
        Flat indices, by energy (ties by index).
    """
    boundary = boundary_cells(grid)
    minima = local_minima(grid.energy_J, grid.admissible, grid.shape)
    chosen = minima[boundary[minima]]
    order = np.lexsort((chosen, grid.energy_J[chosen]))
    return chosen[order[:limit]]
