"""Wells and escape figures: each stable (or marginal, nowhere falling) equilibrium is flooded on
the scan grid (physics.traps.escape); the barrier, the largest restoring force up to it, the exit
and the flooded cells become its Escape and Well."""
from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Callable

import numpy as np
from scipy.spatial import cKDTree

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
    """

    grid: object
    force_along: np.ndarray
    passes: Passes
    energy_at: Callable
    basis: np.ndarray


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


def with_escapes(problem, grid, equilibria, final_model) -> list:
    """Escape figures and wells for each equilibrium that has a well.

    The flood runs on the grid's point-model energies with the bottom in the same model; the
    final model's energy at the well and at the pass gives the barrier.

    Parameters
    ----------
    problem : TrapProblem
    grid : ScanGrid
    equilibria : list of Equilibrium
    final_model : ProbeModel
        The model the equilibria were solved with (point or finite size).

    Returns
    -------
    list of Equilibrium
        Same order, with escape and well set on the wells.
    """
    cells = escape.FloodGrid(grid.energy_J, flood_state(grid), grid.shape)
    admissible_cells = np.flatnonzero(grid.admissible)
    if len(admissible_cells) == 0:
        return equilibria
    tree = cKDTree(grid.points[admissible_cells])
    wells = [i for i, e in enumerate(equilibria)
             if has_well(e, problem.tolerances.marginal_ratio)]
    start_cells = {i: int(admissible_cells[tree.query(equilibria[i].position)[1]]) for i in wells}
    passes = [e.position for e in equilibria if e.classification in ("saddle", "unstable")
              and e.contact is None]
    setting = EscapeSetting(
        grid=grid, force_along=np.linalg.norm(grid.force_N @ problem.basis.T, axis=1),
        passes=Passes(np.array(passes).reshape(-1, 3),
                      1.5 * grid.spacing * np.sqrt(len(grid.shape))),
        energy_at=final_model.energy, basis=problem.basis)
    result = list(equilibria)
    for i in wells:
        eq = equilibria[i]
        others = np.zeros(len(grid.points), bool)  # reaching another well is leaving this one
        for j in wells:
            if j != i and start_cells[j] != start_cells[i]:
                others[start_cells[j]] = True
        bottom = float(problem.point_model.energy(eq.position[None])[0])
        flood = escape.flood_from(cells, start_cells[i], bottom, exit_cells=others,
                                  magnets_are_exits=eq.contact is None)
        result[i] = replace(eq, escape=escape_figures(setting, eq, flood),
                            well=well_of(flood, grid))
    return result


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
        energy_J = max(U(pass) - U(bottom), 0) in the final model, J; force_N the largest
        projected force on the path up to the pass (and, for a contact, the force pressing it),
        N; both None when the flood found no exit.
    """
    grid = setting.grid
    path_points = grid.points[flood.path]
    if flood.exit_kind is None:
        return Escape(energy_J=None, force_N=None, exit=None, pass_position=eq.position.copy(),
                      path=path_points)
    top_index = int(np.argmax(grid.energy_J[flood.path]))
    pass_position = setting.passes.snap(grid.points[flood.path[top_index]])
    bottom, top_energy = setting.energy_at(np.array([eq.position, pass_position]))
    force = float(np.max(setting.force_along[flood.path[:top_index + 1]]))  # restoring: to the pass
    if eq.contact is not None:
        basis = setting.basis
        force = max(force, float(np.linalg.norm(eq.force_N @ basis.T @ basis)))
    return Escape(energy_J=float(max(top_energy - bottom, 0.0)), force_N=force,
                  exit=flood.exit_kind, pass_position=np.asarray(pass_position, float).copy(),
                  path=path_points)


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
