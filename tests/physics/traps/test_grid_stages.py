"""The grid stages on their own, on synthetic grids: the 3D grid's difference force, candidate
cells, local minima, duplicates, families and wells (physics/traps/scan.py, candidates.py,
families.py, wells.py). References are derived here."""
import numpy as np
import pytest

from trapscape.physics.traps.candidates import contact_starts, local_minima, sign_change_cells
from trapscape.physics.traps.families import merge_families, unique_points
from trapscape.physics.traps.report import Equilibrium, ScanGrid
from trapscape.physics.traps.scan import grid_force, line_in_box
from trapscape.physics.traps.wells import Passes, has_well


def plane_grid(force, admissible=None, spacing=1.0, shape=(6, 5)):
    """A grid on the plane z = 0 with axes x, y and the given force (N, 3) per node."""
    index = np.indices(shape).reshape(2, -1).T
    axes = np.eye(3)[:2]
    points = (spacing * index) @ axes
    n = len(points)
    admissible = np.ones(n, bool) if admissible is None else admissible
    return ScanGrid(kind="plane", origin=np.zeros(3), axes=axes, spacing=spacing, shape=shape,
                    points=points, inside_box=np.ones(n, bool), admissible=admissible,
                    energy_J=np.zeros(n), force_N=force(points), B_T=np.zeros((n, 3)))


def test_grid_force_of_a_quadratic_is_exact_inside_and_one_sided_at_a_wall():
    # central differences are exact for a quadratic; one-sided ones are off by a h / 2 per axis
    shape, h, a = (7, 6, 5), 0.5, np.array([1.1, 0.4, 2.0])
    points = h * np.indices(shape).reshape(3, -1).T
    U = 0.5 * np.sum((points - a) ** 2 * np.array([1.0, 2.0, 3.0]), axis=1)
    ok = np.ones(len(points), bool)
    wall = np.ravel_multi_index((3, 2, 2), shape)
    ok[wall] = False
    F = grid_force(U, ok, shape, np.eye(3), h)
    exact = -(points - a) * np.array([1.0, 2.0, 3.0])
    inner = np.ravel_multi_index((2, 3, 3), shape)  # all six neighbours admissible
    assert F[inner] == pytest.approx(exact[inner], rel=1e-12)
    beside = np.ravel_multi_index((2, 2, 2), shape)  # its +x neighbour is the wall
    assert F[beside, 0] == pytest.approx(exact[beside, 0] + 1.0 * h / 2, rel=1e-12)
    assert F[beside, 1:] == pytest.approx(exact[beside, 1:], rel=1e-12)
    assert F[wall].tolist() == [0.0, 0.0, 0.0]


def test_sign_change_cells_find_the_cell_around_a_spring_centre():
    # F = -k (x - c): only the cell whose corners straddle c in both axes changes sign
    centre = np.array([2.3, 1.6, 0.0])
    grid = plane_grid(lambda p: -(p - centre) * np.array([1.0, 3.0, 0.0]))
    assert sign_change_cells(grid) == pytest.approx(np.array([[2.5, 1.5, 0.0]]))


def test_sign_change_cells_skip_cells_with_an_inadmissible_corner():
    centre = np.array([2.3, 1.6, 0.0])
    admissible = np.ones(30, bool)
    admissible[np.ravel_multi_index((3, 2), (6, 5))] = False
    grid = plane_grid(lambda p: -(p - centre), admissible)
    assert len(sign_change_cells(grid)) == 0


def test_local_minima_and_contact_starts():
    values = np.array([3.0, 1.0, 2.0, 2.0, 0.5, 4.0, 5.0, 0.0])
    mask = np.array([1, 1, 1, 1, 1, 1, 1, 0], bool)  # the 0.0 is masked out
    assert local_minima(values, mask, (8,)).tolist() == [1, 4]
    grid = ScanGrid(kind="line", origin=np.zeros(3), axes=np.eye(3)[2:], spacing=1.0,
                    shape=(8,), points=np.zeros((8, 3)), inside_box=np.ones(8, bool),
                    admissible=mask, energy_J=values, force_N=np.zeros((8, 3)),
                    B_T=np.zeros((8, 3)))
    # only cell 6 borders the blocked cell 7, and it is no local minimum; cell 4 is
    assert contact_starts(grid, 10).tolist() == []
    values[6] = 0.2
    assert contact_starts(grid, 10).tolist() == [6]


def test_unique_points_keep_the_lexicographically_first():
    points = np.array([[1.0, 0, 0], [0.0, 0, 0], [1.0 + 1e-4, 0, 0], [0.0, 0, 3e-3]])
    assert unique_points(points, 1e-3).tolist() == [[0, 0, 0], [0, 0, 3e-3], [1, 0, 0]]


def equilibrium(position, energy, classification="marginal", stiffness=(0.0, 1.0)):
    return Equilibrium(position=np.asarray(position, float), coordinate_m=None, energy_J=energy,
                       classification=classification, stable_directions=1, free_directions=2,
                       stiffness_N_per_m=stiffness, directions=np.eye(3)[:2], frequency_Hz=(),
                       B_T=np.zeros(3), force_N=np.zeros(3))


def test_a_circle_of_marginal_equilibria_is_one_family():
    # twelve points 1 apart (grid step 1) on a circle of equal energy, and a lone stable one
    angles = 2 * np.pi * np.arange(12) / 12
    radius = 1.0 / (2 * np.sin(np.pi / 12))
    circle = [equilibrium((radius * np.cos(t), radius * np.sin(t), 0), -1.0) for t in angles]
    lone = equilibrium((50, 0, 0), -1.0, "stable", (1.0, 2.0))
    merged = merge_families(circle + [lone], spacing=1.0)
    assert len(merged) == 2 and merged[0].family_size == 12 and merged[1] is lone
    assert merged[0].position == pytest.approx(min((e.position for e in circle), key=tuple))
    # a different energy splits them
    split = merge_families(circle[:6] + [equilibrium(circle[6].position, -2.0)], spacing=1.0)
    assert [e.family_size for e in split] == [6, 1]


def test_has_well_and_passes():
    assert has_well(equilibrium((0, 0, 0), 0, "stable", (1.0, 2.0)), 1e-6)
    assert has_well(equilibrium((0, 0, 0), 0, "marginal", (-1e-7, 1.0)), 1e-6)
    assert not has_well(equilibrium((0, 0, 0), 0, "marginal", (-1e-5, 1.0)), 1e-6)
    assert not has_well(equilibrium((0, 0, 0), 0, "saddle", (-1.0, 1.0)), 1e-6)
    passes = Passes(np.array([[0.0, 0, 0], [5.0, 0, 0]]), reach=1.0)
    assert passes.snap(np.array([4.4, 0.5, 0])).tolist() == [5.0, 0, 0]
    assert passes.snap(np.array([2.5, 0, 0])).tolist() == [2.5, 0, 0]
    assert Passes(np.zeros((0, 3)), 1.0).snap(np.ones(3)).tolist() == [1, 1, 1]


def test_line_in_box_by_slabs():
    # the line x = 0.5, y = 0.5 along (1, 1, 0)/sqrt 2 enters the unit cube at t = -0.5 sqrt 2
    direction = np.array([1.0, 1.0, 0.0]) / np.sqrt(2)
    low, high = np.zeros(3), np.ones(3)
    t = line_in_box(np.array([0.5, 0.5, 0.5]), direction, low, high)
    assert t == pytest.approx((-np.sqrt(0.5), np.sqrt(0.5)))
    miss = line_in_box(np.array([0.5, 0.5, 2.0]), direction, low, high)
    assert miss[0] > miss[1]
