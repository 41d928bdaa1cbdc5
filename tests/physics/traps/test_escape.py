"""The priority flood that finds the lowest way out of a well (physics/traps/escape.py)."""
import numpy as np
import pytest

from trapscape.physics.traps.escape import (ADMISSIBLE, AT_MAGNET, OUTSIDE_BOX, FloodGrid,
                                             flood_from)


def double_well_line(tilt=0.0, n=201):
    x = np.linspace(-2.0, 2.0, n)
    return x, (x**2 - 1.0) ** 2 + tilt * x


def test_symmetric_double_well_on_a_line():
    # derived here: U = (x^2 - 1)^2 has its barrier U(0) = 1 between the wells at +-1
    x, U = double_well_line()
    state = np.zeros(len(x), np.int8)
    start, other = int(np.argmin(np.abs(x - 1.0))), int(np.argmin(np.abs(x + 1.0)))
    alone = flood_from(FloodGrid(U, state, (len(x),)), start, U[start])
    assert alone.level == pytest.approx(9.0) and alone.exit_kind == "box"  # U(2) = 9
    exits = np.zeros(len(x), bool)
    exits[other] = True
    flood = flood_from(FloodGrid(U, state, (len(x),)), start, U[start], exit_cells=exits)
    assert flood.level == pytest.approx(1.0, abs=1e-12)
    assert flood.exit_kind == "another well"
    inside = x[flood.flooded]
    assert inside.min() > 0.0 and inside.max() < np.sqrt(2.0) + 1e-9  # U < 1 on (0, sqrt 2)
    assert U[flood.path].max() == pytest.approx(1.0)


def test_tilted_double_well_drains_into_the_deeper_one():
    # derived here: the barrier from the upper well is max U on the way to the lower one
    x, U = double_well_line(tilt=0.3)
    state = np.zeros(len(x), np.int8)
    upper = int(np.argmin(np.where(x > 0, U, np.inf)))
    flood = flood_from(FloodGrid(U, state, (len(x),)), upper, U[upper])
    between = (x >= x[np.argmin(np.where(x < 0, U, np.inf))]) & (x <= x[upper])
    assert flood.level == pytest.approx(U[between].max(), rel=1e-12)
    assert flood.exit_kind == "another well"
    assert x[flood.path[-1]] < 0


def test_saddle_of_a_two_dimensional_double_well():
    # derived here: U = (x^2 - 1)^2 + y^2 has its saddle at the origin with U = 1
    x = np.linspace(-2.0, 2.0, 81)
    y = np.linspace(-1.5, 1.5, 61)
    X, Y = np.meshgrid(x, y, indexing="ij")
    U = ((X**2 - 1) ** 2 + Y**2).reshape(-1)
    state = np.zeros(U.size, np.int8)
    start = np.ravel_multi_index((int(np.argmin(np.abs(x - 1))), 30), X.shape)
    exits = np.zeros(U.size, bool)
    exits[np.ravel_multi_index((int(np.argmin(np.abs(x + 1))), 30), X.shape)] = True
    flood = flood_from(FloodGrid(U, state, X.shape), start, U[start], exit_cells=exits)
    assert flood.level == pytest.approx(1.0, abs=1e-12)
    i, j = np.unravel_index(flood.path[np.argmax(U[flood.path])], X.shape)
    assert abs(x[i]) < 1e-9 and abs(y[j]) < 1e-9


def test_box_boundary_and_magnets_are_exits_unless_walls():
    U = np.array([9.0, 5.0, 1.0, 2.0, 3.0, 4.0])
    state = np.array([ADMISSIBLE, AT_MAGNET, ADMISSIBLE, ADMISSIBLE, ADMISSIBLE, ADMISSIBLE], np.int8)
    free_well = flood_from(FloodGrid(U, state, (6,)), 2, 1.0)
    assert free_well.exit_kind == "magnet" and free_well.level == 1.0  # touches it at once
    contact_well = flood_from(FloodGrid(U, state, (6,)), 2, 1.0, magnets_are_exits=False)
    assert contact_well.exit_kind == "box" and contact_well.level == 4.0
    state[5] = OUTSIDE_BOX
    inner = flood_from(FloodGrid(U, state, (6,)), 2, 1.0, magnets_are_exits=False)
    assert inner.exit_kind == "box" and inner.level == 3.0
    walled = FloodGrid(U[:4], np.array([1, 0, 0, 1], np.int8), (4,))
    closed = flood_from(walled, 1, 0.0, magnets_are_exits=False)
    assert closed.exit_kind is None and np.isinf(closed.level)
