"""The scan: the grid restricted to the constraint (samples on the line, a grid on the plane, the
3D grid) and the point-model energy and force on it. Line and plane grids are aligned on the
constraint's point, the 3D grid on the box's lower corner."""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trapscape.physics.probe.laws import allowed_basis
from trapscape.physics.traps.contact import in_box
from trapscape.physics.traps.report import ScanGrid
from trapscape.scene.units import MU0


class SearchSetupError(ValueError):
    """The scene cannot be searched as set up (its sentence names the scene and the fix): the
    layer above shows it to the user rather than treating it as a bug."""


@dataclass(frozen=True, eq=False)
class GridLayout:
    """Where the scan samples, before any field is computed (arrays read-only).

    Attributes
    ----------
    kind : str
        line | plane | free.
    origin : ndarray, shape (3,)
        The point with index 0, m.
    axes : ndarray, shape (k, 3)
        Unit vectors of the grid axes (the allowed directions).
    shape : tuple of k ints
        Arrays over the grid are flattened in C order.
    points : ndarray, shape (N, 3)
        m.
    inside_box : ndarray of bool, shape (N,)
    line_start_m : float
        Line: coordinate of the first sample from the constraint's point, m; else 0.
    """

    kind: str
    origin: np.ndarray
    axes: np.ndarray
    shape: tuple
    points: np.ndarray
    inside_box: np.ndarray
    line_start_m: float


def _read_only(*arrays):
    for array in arrays:
        array.setflags(write=False)


def grid_layout(box, constraint, where: str = "the scene") -> GridLayout:
    """The scan grid of a search box restricted to a constraint.

    Parameters
    ----------
    box : scene.model.SearchBox
        min, max (3,) and spacing, m.
    constraint : scene.model.Constraint
        free | line | plane, with its point (m) and unit direction.
    where : str
        The scene file's name, for the error message.

    Returns
    -------
    GridLayout

    Raises
    ------
    SearchSetupError
        A ValueError: the constraint's line or plane does not cross the box.
    """
    c = constraint
    low, high, h = np.asarray(box.min, float), np.asarray(box.max, float), float(box.spacing)
    tolerance = 1e-9 * h
    if c.kind == "free":
        shape = box.shape()
        axes = np.eye(3)
        index = np.indices(shape).reshape(3, -1).T
        points = low + h * index
        inside = in_box(points, low, high, tolerance)
        _read_only(axes, points, inside)
        return GridLayout("free", low, axes, shape, points, inside, 0.0)
    point = np.asarray(c.point, float)
    axes = allowed_basis(c)
    corners = np.array([[x, y, z] for x in (low[0], high[0]) for y in (low[1], high[1])
                        for z in (low[2], high[2])])
    if c.kind == "line":
        t_low, t_high = line_in_box(point, axes[0], low, high)
        if t_low > t_high:
            raise SearchSetupError(f"{where}: the probe's constraint line does not cross the "
                             "search box; move [probe.constraint] point or widen [search_box].")
        first, last = int(np.ceil(t_low / h - 1e-9)), int(np.floor(t_high / h + 1e-9))
        t = h * np.arange(first, max(last, first + 1) + 1)
        points = point + t[:, None] * axes[0]
        inside = in_box(points, low, high, tolerance)
        _read_only(axes, points, inside)
        return GridLayout("line", points[0], axes, (len(t),), points, inside, t[0])
    extent = (corners - point) @ axes.T
    first = np.ceil(extent.min(axis=0) / h - 1e-9).astype(int)
    last = np.floor(extent.max(axis=0) / h + 1e-9).astype(int)
    shape = tuple(int(v) for v in np.maximum(last - first + 1, 2))
    index = np.indices(shape).reshape(2, -1).T + first
    points = point + (h * index) @ axes
    inside = in_box(points, low, high, tolerance)
    if not inside.any():
        raise SearchSetupError(f"{where}: the probe's constraint plane does not cross the "
                         "search box; move [probe.constraint] point or widen [search_box].")
    _read_only(axes, points, inside)
    return GridLayout("plane", points[0], axes, shape, points, inside, 0.0)


def scan_grid_geometry(scene) -> tuple:
    """The scene's grid layout as a tuple, for callers that unpack it (benchmarks/trap_speed.py).

    Parameters
    ----------
    scene : trapscape.scene.model.Scene
        Supplies the search box, the constraint and the file name.

    Returns
    -------
    tuple
        (kind, origin (3,) m, axes (k, 3), shape, points (N, 3) m, inside_box (N,) bool,
        line start m), the fields of GridLayout.

    Raises
    ------
    SearchSetupError
        A ValueError, as grid_layout: the constraint's line or plane does not cross the box.
    """
    g = grid_layout(scene.search_box, scene.constraint, scene.path or "the scene")
    return g.kind, g.origin, g.axes, g.shape, g.points, g.inside_box, g.line_start_m


def line_in_box(point, direction, low, high) -> tuple:
    """[t_low, t_high] of point + t direction inside the box [low, high].

    By the slab method; t_low > t_high when the line misses the box.

    Parameters
    ----------
    point, direction, low, high : ndarray, shape (3,)
        m (direction unit).

    Returns
    -------
    (float, float)
        m.

    References
    ----------
    Kay & Kajiya, Computer Graphics 20(4), 269 (1986) (the slab method).
    """
    t_low, t_high = -np.inf, np.inf
    for axis in range(3):
        if abs(direction[axis]) < 1e-15:
            if not low[axis] <= point[axis] <= high[axis]:
                return 1.0, 0.0
            continue
        a = (low[axis] - point[axis]) / direction[axis]
        b = (high[axis] - point[axis]) / direction[axis]
        t_low, t_high = max(t_low, min(a, b)), min(t_high, max(a, b))
    return t_low, t_high


def scan(problem, progress=None) -> ScanGrid:
    """The point-model energy on the problem's grid.

    Line and plane grids also get the exact force; the 3D grid gets the force from central
    differences of U along the grid axes (one-sided next to a magnet), which is enough to find
    candidates and saves the gradient's cost at every node.

    Parameters
    ----------
    problem : TrapProblem
    progress : callable(done, total, stage) or None

    Returns
    -------
    ScanGrid
        Energies in J, forces in N, B in T; zero where the probe does not fit.
    """
    layout, law, geometry = problem.layout, problem.law, problem.geometry
    points, inside = layout.points, layout.inside_box
    n = len(points)
    U, F, B = np.zeros(n), np.zeros((n, 3)), np.zeros((n, 3))
    admissible = np.zeros(n, bool)
    admissible[inside] = geometry.admissible(points[inside])
    chosen = np.flatnonzero(admissible)
    exact_force = layout.kind != "free"
    if len(chosen):
        report = None if progress is None else (lambda done, total: progress(done, total, "scan"))
        if exact_force:
            H, G = problem.field_model.applied_H(points[chosen], gradient=True, progress=report)
            F[chosen] = law.magnetic_force(MU0 * H, MU0 * G) + law.gravity_force()
        else:
            H = problem.field_model.applied_H(points[chosen], progress=report)
        B[chosen] = MU0 * H
        U[chosen] = law.magnetic_energy(MU0 * H) + law.gravity_energy(points[chosen])
    if not exact_force:
        F = grid_force(U, admissible, layout.shape, layout.axes, geometry.spacing)
    return ScanGrid(kind=layout.kind, origin=layout.origin, axes=layout.axes,
                    spacing=geometry.spacing, shape=layout.shape, points=points,
                    inside_box=inside, admissible=admissible, energy_J=U, force_N=F, B_T=B,
                    line_start_m=layout.line_start_m, force_is_exact=exact_force)


def grid_force(U, admissible, shape, axes, spacing) -> np.ndarray:
    """-grad U from differences along the grid axes.

    Central where both neighbours are admissible, one-sided where one is, zero where none is.

    Parameters
    ----------
    U : ndarray, shape (N,)
        J on the flattened grid.
    admissible : ndarray of bool, shape (N,)
    shape : tuple of k ints
    axes : ndarray, shape (k, 3)
        Unit grid axes.
    spacing : float
        m.

    Returns
    -------
    ndarray, shape (N, 3)
        N, zero where inadmissible.
    """
    energy = U.reshape(shape)
    ok = admissible.reshape(shape)
    F = np.zeros(shape + (len(shape),))
    for axis in range(len(shape)):
        forward = np.zeros(shape, bool)
        backward = np.zeros(shape, bool)
        ahead = [slice(None)] * len(shape)
        behind = [slice(None)] * len(shape)
        ahead[axis], behind[axis] = slice(1, None), slice(None, -1)
        ahead, behind = tuple(ahead), tuple(behind)
        step = np.zeros(shape)
        step[behind] = energy[ahead] - energy[behind]  # U(i+1) - U(i) stored at i
        pair = ok[ahead] & ok[behind]
        forward[behind] = pair
        backward[ahead] = pair
        back_step = np.zeros(shape)
        back_step[ahead] = step[behind]  # U(i) - U(i-1) stored at i
        both = forward & backward
        total = np.where(both, 0.5 * (step + back_step),
                         np.where(forward, step, np.where(backward, back_step, 0.0)))
        F[..., axis] = -total / spacing
    return (F.reshape(-1, len(shape)) @ axes) * admissible[:, None]
