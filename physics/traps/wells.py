"""Wells and escape figures: each stable (or marginal, nowhere falling) equilibrium is flooded on
the scan grid (physics.traps.escape); the barrier, the largest restoring force up to it, the exit
and the flooded cells become its Escape and Well.

The flood runs on the energies of the model the equilibria were solved with (the finite model's
scan near the magnets when it was used), and the barrier is that model's energy at the pass. A
magnet or plate ends a way out only for a probe it catches (ProbeLaw.caught_at_contact); for a
diamagnet it is a wall. A way out that ends on a part is followed from the last grid cell to the
contact itself (bisection on the clearance), so the barrier includes the rise over that last step.
"""
from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Callable

import numpy as np
from scipy.spatial import cKDTree

from trapscape.physics.field.parts import part_sdf
from trapscape.physics.traps import escape
from trapscape.physics.traps.report import Escape, Well


@dataclass(frozen=True, eq=False)
class Passes:
    """The refined saddles and unstable points, to put a barrier found on the grid where the
    exact one is.

    Attributes
    ----------
    positions : ndarray, shape (S, 3)
        m.
    reach : float
        m; a grid barrier farther than this from every pass stays where the grid put it.
    """

    positions: np.ndarray
    reach: float

    def snap(self, position) -> np.ndarray:
        """The nearest pass within reach of position, else position itself.

        Parameters
        ----------
        position : numpy.ndarray, shape (3,)
            m.

        Returns
        -------
        numpy.ndarray, shape (3,)
            m.
        """
        if len(self.positions) == 0:
            return position
        distance, j = cKDTree(self.positions).query(position)
        return self.positions[j] if distance <= self.reach else position


@dataclass(frozen=True, eq=False)
class EscapeSetting:
    """What the escape figures of every well share.

    Attributes
    ----------
    grid : ScanGrid
    force_along : ndarray, shape (N,)
        |projected force| on the grid, N.
    passes : Passes
    energy_at : callable((M, 3) m) -> (M,) J
        The final model's energy (point or finite size).
    basis : ndarray, shape (k, 3)
        The constraint's allowed directions.
    geometry : ProbeGeometry
        Clearance, surfaces' names and the search box.
    wells : dict of int -> ndarray, shape (3,)
        The wells' start cells and their bottoms, m (where a way over a pass lands).
    flood_energy : ndarray, shape (N,) or None
        The energies the flood ran on, J (None: grid.energy_J).
    """

    grid: object
    force_along: np.ndarray
    passes: Passes
    energy_at: Callable
    basis: np.ndarray
    geometry: object = None
    wells: dict = None
    flood_energy: np.ndarray = None


def flood_state(grid) -> np.ndarray:
    """Cell states for the flood.

    Parameters
    ----------
    grid : ScanGrid

    Returns
    -------
    ndarray of int8, shape (N,)
        ADMISSIBLE, AT_MAGNET (in the box, the probe does not fit) or OUTSIDE_BOX.
    """
    state = np.full(len(grid.points), escape.AT_MAGNET, np.int8)
    state[grid.admissible] = escape.ADMISSIBLE
    state[~grid.inside_box] = escape.OUTSIDE_BOX
    return state


def has_well(eq, marginal_ratio: float) -> bool:
    """Whether the probe stays at an equilibrium, so that it has a well to escape from.

    Stable, or marginal with no direction falling by more than marginal_ratio of the largest
    stiffness.

    Parameters
    ----------
    eq : Equilibrium
    marginal_ratio : float

    Returns
    -------
    bool
    """
    if eq.classification == "stable":
        return True
    if eq.classification == "marginal" and eq.stiffness_N_per_m:
        return all(k is None or k > -marginal_ratio * max(abs(v) for v in eq.stiffness_N_per_m)
                   for k in eq.stiffness_N_per_m)
    return False


def with_escapes(problem, grid, equilibria, final_model, flood_grid=None) -> list:
    """Escape figures and wells for each equilibrium that has a well.

    See the module's docstring.

    Parameters
    ----------
    problem : TrapProblem
    grid : ScanGrid
        The point model's scan (admissible cells, forces).
    equilibria : list of Equilibrium
    final_model : ProbeModel
        The model the equilibria were solved with (point or finite size).
    flood_grid : ScanGrid or None
        The energies to flood, in final_model's terms; None: grid's.

    Returns
    -------
    list of Equilibrium
        Same order, with escape and well set on the wells.
    """
    point_energies = flood_grid is None or flood_grid is grid
    energy = grid.energy_J if point_energies else flood_grid.energy_J
    cells = escape.FloodGrid(energy, flood_state(grid), grid.shape)
    admissible_cells = np.flatnonzero(grid.admissible)
    if len(admissible_cells) == 0:
        return equilibria
    tree = cKDTree(grid.points[admissible_cells])
    wells = [i for i, e in enumerate(equilibria)
             if has_well(e, problem.tolerances.marginal_ratio)]
    start_cells = {i: int(admissible_cells[tree.query(equilibria[i].position)[1]]) for i in wells}
    if not point_energies:  # the grid's own bottom of each basin: no cell of it lies lower
        start_cells = {i: lowest_cell(cells, c) for i, c in start_cells.items()}
    passes = [e.position for e in equilibria if e.classification in ("saddle", "unstable")
              and e.contact is None]
    setting = EscapeSetting(
        grid=grid, force_along=np.linalg.norm(grid.force_N @ problem.basis.T, axis=1),
        passes=Passes(np.array(passes).reshape(-1, 3),
                      1.5 * grid.spacing * np.sqrt(len(grid.shape))),
        energy_at=final_model.energy_without_force, basis=problem.basis, geometry=problem.geometry,
        wells={start_cells[i]: equilibria[i].position for i in wells}, flood_energy=energy)
    catches = problem.law.caught_at_contact
    result = list(equilibria)
    for i in wells:
        eq = equilibria[i]
        others = np.zeros(len(grid.points), bool)  # reaching another well is leaving this one
        for j in wells:
            if j != i and start_cells[j] != start_cells[i]:
                others[start_cells[j]] = True
        if point_energies:
            bottom = float(problem.point_model.energy(eq.position[None])[0])
        else:
            bottom = float(energy[start_cells[i]])
        flood = escape.flood_from(cells, start_cells[i], bottom, exit_cells=others,
                                  magnets_are_exits=eq.contact is None and catches)
        result[i] = replace(eq, escape=escape_figures(setting, eq, flood),
                            well=well_of(flood, grid))
    return result


def lowest_cell(cells, start: int) -> int:
    """The admissible cell steepest descent along the grid axes reaches from start.

    Parameters
    ----------
    cells : physics.traps.escape.FloodGrid
    start : int
        Flat index.

    Returns
    -------
    int
        Flat index of a cell no admissible neighbour along an axis is below.
    """
    shape = cells.shape
    strides = np.cumprod((1,) + tuple(shape[::-1]))[:-1][::-1]
    cell = int(start)
    while True:
        best = cell
        for axis, stride in enumerate(strides):
            coordinate = (cell // stride) % shape[axis]
            for step in (-1, 1):
                if 0 <= coordinate + step < shape[axis]:
                    other = cell + step * int(stride)
                    if (cells.state[other] == escape.ADMISSIBLE
                            and cells.energy[other] < cells.energy[best]):
                        best = other
        if best == cell:
            return cell
        cell = best


def last_step(setting: EscapeSetting, cell: int) -> tuple:
    """The way from an exit cell onto the part next to it, solved to the contact.

    Each neighbour along the grid axes where the probe does not fit gives a segment; the contact
    on it (the nearest part's signed distance = d/2) is found by the Illinois variant of regula
    falsi, and the energy's largest value on the segment up to it by 17 samples (the contact one
    included). The lowest such way is kept.

    Parameters
    ----------
    setting : EscapeSetting
    cell : int
        Flat index of the last admissible cell.

    Returns
    -------
    top : float
        J, the largest energy on the kept segment, final model.
    top_position : ndarray, shape (3,)
        m, where it is.
    contact : ndarray, shape (3,)
        m, the probe's centre touching the part.
    part : str
        The part's name.

    References
    ----------
    Dowell & Jarratt, BIT 11, 168 (1971) (the Illinois method).
    """
    grid, geometry = setting.grid, setting.geometry
    origin = grid.points[cell]
    ends = origin + grid.spacing * np.concatenate([grid.axes, -grid.axes])
    slack = 1e-9 * grid.spacing
    inside = np.all((ends >= geometry.low - slack) & (ends <= geometry.high + slack), axis=1)
    ends = ends[inside]
    surfaces = _surface_distances(geometry)
    distance = surfaces(np.concatenate([origin[None], ends]))
    nearest = np.argmin(distance[1:], axis=1)
    blocked = distance[1:][np.arange(len(ends)), nearest] < geometry.radius
    if not blocked.any():
        return float(setting.energy_at(origin[None])[0]), origin, origin, ""
    ends, nearest = ends[blocked], nearest[blocked]
    rows = np.arange(len(ends))

    def gap(t):  # the nearest part's distance minus d/2 along each segment
        points = origin + t[:, None] * (ends - origin)
        result = np.empty(len(t))
        for j in np.unique(nearest):
            chosen = nearest == j
            result[chosen] = _distance_to(geometry, int(j), points[chosen])
        return result - geometry.radius

    a, b = np.zeros(len(ends)), np.ones(len(ends))
    fa, fb = distance[0, nearest] - geometry.radius, gap(b)
    last = np.zeros(len(ends))  # +1: b was replaced last, -1: a was
    t = b.copy()
    for _ in range(40):
        t = b - fb * (b - a) / (fb - fa)
        ft = gap(t)
        inside = ft < 0.0
        fa = np.where(inside & (last > 0), 0.5 * fa, fa)  # Illinois: halve the stale end's value
        fb = np.where(~inside & (last < 0), 0.5 * fb, fb)
        a, fa = np.where(inside, a, t), np.where(inside, fa, ft)
        b, fb = np.where(inside, t, b), np.where(inside, ft, fb)
        last = np.where(inside, 1.0, -1.0)
        if np.all(np.abs(ft) < 1e-12 * grid.spacing):
            break
    contacts = origin + t[:, None] * (ends - origin)
    t = np.linspace(0.0, 1.0, 17)
    samples = origin + t[None, :, None] * (contacts - origin)[:, None, :]
    U = setting.energy_at(samples.reshape(-1, 3)).reshape(len(ends), len(t))
    best = int(np.argmin(U.max(axis=1)))
    top = int(np.argmax(U[best]))
    return (float(U[best, top]), samples[best, top], contacts[best],
            geometry.names[int(nearest[best])])


def _surface_distances(geometry):
    """A function of points (M, 3) m giving the signed distance to each magnet, then each
    plate, (M, n) m (ProbeGeometry's parts, in the order of its names)."""
    model = geometry.field_model

    def distances(points):
        return np.concatenate([model.part_distances(points), model.plate_distances(points)],
                              axis=1)
    return distances


def _distance_to(geometry, index: int, points) -> np.ndarray:
    """Signed distance from points (M, 3) to one magnet or plate (by its index in
    geometry.names), m, shape (M,)."""
    model = geometry.field_model
    if index < len(model.magnets):
        return part_sdf(model.magnets[index], points)
    return model.plate_distances(points)[:, index - len(model.magnets)]


def box_face(geometry, point) -> str:
    """The search box's face nearest a point ("box face +x", ...).

    Parameters
    ----------
    geometry : ProbeGeometry
    point : ndarray, shape (3,)
        m.

    Returns
    -------
    str
    """
    distances = np.concatenate([point - geometry.low, geometry.high - point])
    face = int(np.argmin(distances))
    return f"box face {'-+'[face // 3]}{'xyz'[face % 3]}"


def escape_figures(setting: EscapeSetting, eq, flood) -> Escape:
    """The Escape of one well from its flood.

    Parameters
    ----------
    setting : EscapeSetting
    eq : Equilibrium
        The well's bottom.
    flood : physics.traps.escape.Flood

    Returns
    -------
    Escape
        energy_J = max(U(pass) - U(bottom), 0) in the final model, J (on a way that ends on a
        part, U(pass) includes the rise up to the contact); force_N the largest projected force
        on the path up to the pass (and, for a contact, the force pressing it), N; exit_at and
        exit_position where the way out ends; both figures None when the flood found no exit.
    """
    grid = setting.grid
    path_points = grid.points[flood.path]
    if flood.exit_kind is None:
        return Escape(energy_J=None, force_N=None, exit=None, pass_position=eq.position.copy(),
                      path=path_points)
    energies = grid.energy_J if setting.flood_energy is None else setting.flood_energy
    top_index = int(np.argmax(energies[flood.path]))
    pass_position = setting.passes.snap(grid.points[flood.path[top_index]])
    bottom, top_energy = setting.energy_at(np.array([eq.position, pass_position]))
    exit_cell = grid.points[flood.exit_cell]
    exit_at, exit_position = None, exit_cell.copy()
    if flood.exit_kind == escape.EXIT_NAMES[escape.EXIT_MAGNET]:
        step_top, step_position, exit_position, exit_at = last_step(setting, flood.exit_cell)
        if step_top > top_energy:
            top_energy, pass_position = step_top, step_position
            top_index = len(flood.path) - 1
    elif flood.exit_kind == escape.EXIT_NAMES[escape.EXIT_BOX]:  # the search box
        exit_at = box_face(setting.geometry, exit_cell)
    elif flood.exit_cell in setting.wells:
        exit_at, exit_position = "well", np.asarray(setting.wells[flood.exit_cell], float).copy()
    else:
        exit_at = "lower ground"
    force = float(np.max(setting.force_along[flood.path[:top_index + 1]]))  # restoring: to the pass
    if eq.contact is not None:
        basis = setting.basis
        force = max(force, float(np.linalg.norm(eq.force_N @ basis.T @ basis)))
    return Escape(energy_J=float(max(top_energy - bottom, 0.0)), force_N=force,
                  exit=flood.exit_kind, pass_position=np.asarray(pass_position, float).copy(),
                  path=path_points, exit_at=exit_at,
                  exit_position=np.asarray(exit_position, float).copy())


def well_of(flood, grid) -> Well:
    """The Well of a flood.

    Parameters
    ----------
    flood : physics.traps.escape.Flood
    grid : ScanGrid

    Returns
    -------
    Well
        Its cells, and on a line the interval of coordinates they span, m.
    """
    interval = None
    if grid.kind == "line":
        t = grid.line_coordinates_m[flood.flooded]
        interval = (float(t.min()), float(t.max())) if len(t) else None
    return Well(cells=flood.flooded, interval_m=interval)
