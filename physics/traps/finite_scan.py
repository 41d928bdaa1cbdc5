"""The finite-size probe's energy on the scan grid near the magnets: where the probe's size
changes the energy most, the point model's grid can miss wells and saddles (two neighbouring
wells over a checkerboard and the pass between them), and its energies put the escape barriers in
the wrong model.

On a free (3D) grid the energy is the volume average of the point energy density over a ball of
the probe's radius, a discrete convolution of the grid (the local approximation M = chi_eff H0,
exact to first order in chi: Landau & Lifshitz, Electrodynamics of Continuous Media, section 32);
the field is sampled on the grid padded by a radius so that every ball is whole. On a line or a
plane the finite model's scan rule is evaluated at each cell of the band. Either is a scan: it
seeds Newton's method and guides the escape flood; the equilibria and the barriers are then
computed with the finite model itself.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
from scipy import ndimage

from trapscape.physics.traps.candidates import corner_slices, sign_change_mask
from trapscape.physics.traps.scan import grid_force
from trapscape.scene.units import MU0

SEED_BAND = 1.0  # the band: cells whose gap to a magnet (clearance - d/2) is below this many d
# The padded grid of the ball average at most (points): a probe many grid steps wide pads the grid
# by its radius on every side; past this the band is scanned with the finite model at its cells,
# as on a line or a plane (about 200 MB of work arrays).
MAX_PADDED_POINTS = 3_000_000
DIRECT_KERNEL_CELLS = 17**3  # larger ball kernels convolve by FFT


@dataclass(frozen=True, eq=False)
class FiniteGrid:
    """The scan grid with the finite model's energies in the band near the magnets.

    Attributes
    ----------
    grid : ScanGrid
        energy_J: the finite model's in the band, the point model's elsewhere, J; force_N from
        their differences, N.
    band : ndarray of bool, shape (N,)
        Admissible cells within SEED_BAND diameters of a magnet or plate.
    """

    grid: object
    band: np.ndarray

    def seeds(self) -> np.ndarray:
        """Where Newton's method starts for the finite model: the cells of the band where every
        force component changes sign and the mean |F| at the corners is least among such cells
        around (a finite-model scan is noisy on symmetry planes, where many cells change sign
        around one equilibrium).

        Returns
        -------
        ndarray, shape (M, 3)
            Cell centres, m.
        """
        grid = self.grid
        shape, k = grid.shape, len(grid.shape)
        force = grid_force(grid.energy_J, self.band, shape, grid.axes, grid.spacing)
        change = sign_change_mask(replace(grid, admissible=self.band, force_N=force))
        size = np.linalg.norm(force, axis=1).reshape(shape)
        mean = np.where(change, np.mean([size[s] for s in corner_slices(k)], axis=0), np.inf)
        lowest = ndimage.minimum_filter(mean, size=3, mode="constant", cval=np.inf)
        cells = np.argwhere(change & (mean <= lowest))
        return grid.origin + (grid.spacing * (cells + 0.5)) @ grid.axes


def finite_scan(problem, grid, finite) -> FiniteGrid:
    """The finite model's energy on the grid cells near the magnets.

    Parameters
    ----------
    problem : TrapProblem
    grid : ScanGrid
        The point model's scan.
    finite : ProbeModel
        The finite-size model (its scan_model() on lines and planes).

    Returns
    -------
    FiniteGrid

    References
    ----------
    Landau & Lifshitz, Electrodynamics of Continuous Media, section 32 (the local approximation).
    """
    d = problem.law.diameter
    cells = np.flatnonzero(grid.admissible)
    band = np.zeros(len(grid.points), bool)
    if len(cells):
        gap = problem.field_model.clearance(grid.points[cells]) - d / 2
        band[cells[gap < SEED_BAND * d]] = True
    U = grid.energy_J.copy()
    if band.any():
        if grid.kind == "free" and _padded_size(problem, grid) <= MAX_PADDED_POINTS:
            U[band] = _ball_average(problem, grid, band)
        else:
            U[band] = finite.scan_model().energy_without_force(grid.points[band])
    F = grid_force(U, grid.admissible, grid.shape, grid.axes, grid.spacing)
    return FiniteGrid(grid=replace(grid, energy_J=U, force_N=F, force_is_exact=False), band=band)


def ball_kernel(radius_cells: float) -> np.ndarray:
    """Grid cells within a ball, as weights summing to 1.

    Parameters
    ----------
    radius_cells : float
        The ball's radius in grid steps.

    Returns
    -------
    ndarray, shape (2 p + 1,) * 3
        p = floor(radius_cells).
    """
    p = int(math.floor(radius_cells))
    offsets = np.arange(-p, p + 1)
    X, Y, Z = np.meshgrid(offsets, offsets, offsets, indexing="ij")
    kernel = (X**2 + Y**2 + Z**2 <= radius_cells**2 + 1e-9).astype(float)
    return kernel / kernel.sum()


def _padded_size(problem, grid) -> int:
    """Points of the grid padded by the probe's radius on every side."""
    p = math.floor(problem.law.diameter / 2 / grid.spacing)
    return int(np.prod([s + 2 * p for s in grid.shape]))


def _ball_average(problem, grid, band) -> np.ndarray:
    """The probe's energy at the band's cells by the grid's ball average, J.

    A probe many steps wide has a kernel of (2 p + 1)^3 cells, too many for a direct sum over each
    cell: past DIRECT_KERNEL_CELLS both convolutions go by FFT."""
    law, model = problem.law, problem.field_model
    kernel = ball_kernel(law.diameter / 2 / grid.spacing)
    p = kernel.shape[0] // 2
    shape = tuple(s + 2 * p for s in grid.shape)
    index = np.indices(shape).reshape(3, -1).T - p
    points = grid.origin + (grid.spacing * index) @ grid.axes
    padded_band = np.zeros(shape, bool)
    padded_band[p:p + grid.shape[0], p:p + grid.shape[1], p:p + grid.shape[2]] = \
        band.reshape(grid.shape)
    needed = _dilated(padded_band, kernel).reshape(-1)
    chosen = np.flatnonzero(needed)
    outside = model.clearance(points[chosen]) >= 0.0  # in no magnet, in front of every plate
    density = np.zeros(len(points))
    sampled = chosen[outside]
    density[sampled] = law.magnetic_energy(MU0 * model.applied_H(points[sampled])) / law.volume
    average = _ball_mean(density.reshape(shape), kernel)
    inner = average[p:p + grid.shape[0], p:p + grid.shape[1], p:p + grid.shape[2]].reshape(-1)
    centres = grid.points[band]
    return law.volume * inner[band] + law.gravity_energy(centres)


def _dilated(mask, kernel) -> np.ndarray:
    """Cells within the kernel's ball of a masked cell."""
    if kernel.size <= DIRECT_KERNEL_CELLS:
        return ndimage.binary_dilation(mask, structure=kernel > 0)
    return _fftconvolve()(mask.astype(float), (kernel > 0).astype(float), mode="same") > 0.5


def _ball_mean(values, kernel) -> np.ndarray:
    """The kernel's weighted mean around each cell (zero outside the array; kernel symmetric)."""
    if kernel.size <= DIRECT_KERNEL_CELLS:
        return ndimage.correlate(values, kernel, mode="constant", cval=0.0)
    return _fftconvolve()(values, kernel, mode="same")


def _fftconvolve():
    # imported here: scipy.signal brings scipy.stats, a large share of a screening worker's
    # start-up, and only wide probes take this path
    from scipy.signal import fftconvolve

    return fftconvolve
