"""How long a trap search would take and how much memory it needs, estimated before any work,
and refused past an hour or a quarter of the machine's memory.

The search evaluates the field and its gradient at every grid point, then again in the Newton
solves, escape paths and the finite-size re-solve. Closed forms cost little per point; a part
built as a lattice of dipole cells (method = "dipoles", or a radial part without a closed form)
costs in proportion to its cells. The estimate is the dipole-sum chooser's own cost of one pass
over the grid (physics.field.dipole_sum) times SEARCH_PASSES.
"""
from __future__ import annotations

import math

from trapscape.physics.field.dipole_sum import direct_cost_s, fmm_cost_s
from trapscape.physics.field.parts import default_cell_size
from trapscape.physics.traps.scan import SearchSetupError, grid_layout
from trapscape.scene.errors import SceneError
from trapscape.scene.loader import machine_memory
from trapscape.scene.measures import volume
from trapscape.scene.shapes import shape_of

MAX_SEARCH_SECONDS = 3600.0
# Measured 2026-12-03: a 10 mm sphere of 523,000 cells over an 80^3 grid took 271 s of wall time
# (a busy 2-core machine), 6.6 times the chooser's figure for one gradient pass (40.7 s).
SEARCH_PASSES = 6.6
# Measured the same day: 8.2 million cells over that grid had reached 19 GB (and was stopped);
# building a lattice alone costs about 200 bytes a cell.
BYTES_PER_CELL = 2400
LATTICE_ACCURACY = 1e-3  # the field model's default (physics.field.parts.part_sources)

__all__ = ["MAX_SEARCH_SECONDS", "check_search_work", "estimated_search_seconds", "lattice_cells"]


def lattice_cells(magnet) -> float:
    """Estimated dipole cells of a part built as a lattice (volume / cell^3); 0 for others.

    Parameters
    ----------
    magnet : trapscape.scene.model.Magnet

    Returns
    -------
    float
    """
    radial_closed_form = shape_of(magnet).radial_closed_form
    lattice = magnet.method == "dipoles" or (magnet.radial is not None and radial_closed_form is None)
    if not lattice:
        return 0.0
    return volume(magnet) / default_cell_size(magnet, LATTICE_ACCURACY) ** 3


def estimated_search_seconds(grid_points: int, cells: float) -> float:
    """Wall seconds of a trap search over `grid_points` with `cells` dipole cells in the scene.

    Parameters
    ----------
    grid_points : int
    cells : float

    Returns
    -------
    float
        0 without cells (closed forms only).
    """
    if cells < 1:
        return 0.0
    one_pass = min(direct_cost_s(grid_points, int(cells), gradient=True),
                   fmm_cost_s(grid_points, int(cells), gradient=True))
    return SEARCH_PASSES * one_pass


def check_search_work(scene) -> None:
    """Refuse, in one sentence naming what to change, a trap search estimated past an hour or
    a quarter of the machine's memory.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene

    Raises
    ------
    trapscape.scene.errors.SceneError
    """
    cells = {m.name: lattice_cells(m) for m in scene.magnets}
    total = sum(cells.values())
    if total < 1:
        return
    try:
        points = len(grid_layout(scene.search_box, scene.constraint).points)
    except SearchSetupError:
        return  # the search says this itself, better worded
    seconds = estimated_search_seconds(points, total)
    memory = BYTES_PER_CELL * total
    spacing = f"{scene.search_box.spacing / scene.unit_scale:.3g} {scene.units}"
    remedy = "raise that part's cell_size (or drop method = \"dipoles\")"
    if memory > machine_memory() / 4:
        cost = f"need about {memory / 2**30:.0f} GB, over a quarter of this machine's memory"
    elif seconds > MAX_SEARCH_SECONDS:
        cost = f"take about {_hours(seconds)} on this machine"
        remedy += f", or raise [search_box] spacing (now {spacing})"
    else:
        return
    largest = max(cells, key=cells.get)
    share = ("all" if cells[largest] == total else f"{cells[largest]:,.0f} of them")
    raise SceneError(f"the trap search would {cost} ({points:,} grid points against {total:,.0f} "
                     f"dipole cells, {share} in '{largest}'); {remedy}.")


def _hours(seconds: float) -> str:
    hours = seconds / 3600.0
    return f"{hours:.1f} hours" if hours < 10 else f"{math.ceil(hours):,} hours"
