"""The trap search's frozen problem object and its grid layout (physics/traps/problem.py,
physics/traps/scan.py)."""
import dataclasses

import numpy as np
import pytest

from trapscape.physics.field.model import FieldModel
from trapscape.physics.traps.problem import TrapProblem
from trapscape.physics.traps.scan import SearchSetupError, grid_layout
from trapscape.physics.traps.search import find_traps
from scene_factory import constraint, make_scene, soft_probe, sphere_magnet


def scene_with(constraint_, box_min=(-0.01, -0.01, -0.02), box_max=(0.01, 0.01, 0.02)):
    return make_scene([sphere_magnet("ball", (0.05, 0, 0), 0.005)], soft_probe(1e-3), box_min,
                      box_max, 1e-3, constraint_, gravity=(0, 0, -9.81))


def problem_of(scene):
    return TrapProblem.from_scene(FieldModel.from_scene(scene), scene)


def test_the_problem_is_frozen_and_its_arrays_read_only():
    problem = problem_of(scene_with(constraint("plane", direction=(0, 0, 1))))
    with pytest.raises(dataclasses.FrozenInstanceError):
        problem.spacing = 2e-3
    for array in (problem.basis, problem.constraint_point, problem.constraint_direction,
                  problem.gravity, problem.box_low, problem.box_high, problem.layout.points,
                  problem.layout.inside_box, problem.layout.axes):
        with pytest.raises(ValueError):
            array[0] = 1.0
    with pytest.raises(dataclasses.FrozenInstanceError):
        problem.tolerances.marginal_ratio = 0.1


def test_the_problem_holds_the_scene_in_si():
    scene = scene_with(constraint("line", point=(0, 0, 0.001), direction=(0, 0, 1)))
    problem = problem_of(scene)
    assert problem.constraint_kind == "line" and problem.free_directions == 1
    assert problem.basis.tolist() == [[0.0, 0.0, 1.0]]
    assert problem.gravity.tolist() == [0.0, 0.0, -9.81]
    assert problem.spacing == 1e-3 and problem.geometry.radius == 0.5e-3
    assert problem.law.mass == pytest.approx(7850 * np.pi * 1e-9 / 6, rel=1e-15)  # rho pi d^3/6
    assert problem.line_coordinate(np.array([0.003, 0.0, 0.004])) == pytest.approx(0.003)
    assert problem_of(scene_with(constraint("free"))).line_coordinate(np.zeros(3)) is None


def test_line_samples_are_aligned_on_the_constraint_point():
    # derived here: the line z through (0, 0, 0.25 mm) crosses the box at z = -20..20 mm; the
    # samples are 0.25 mm + k mm, k = -20..19
    scene = scene_with(constraint("line", point=(0, 0, 0.25e-3)))
    layout = grid_layout(scene.search_box, scene.constraint)
    z = layout.points[:, 2]
    assert layout.kind == "line" and layout.shape == (40,)
    assert z == pytest.approx(0.25e-3 + 1e-3 * np.arange(-20, 20), abs=1e-15)
    # the coordinate is measured from the constraint's point: the first sample is 20 mm below it
    assert layout.line_start_m == pytest.approx(-20e-3) and layout.inside_box.all()
    assert layout.origin == pytest.approx([0, 0, -19.75e-3])


def test_plane_and_free_layouts():
    # derived here: the plane z = 0 across a 20 x 20 mm box on a 1 mm grid has 21 x 21 nodes;
    # the free grid 21 x 21 x 41 from the lower corner
    scene = scene_with(constraint("plane", direction=(0, 0, 1)))
    plane = grid_layout(scene.search_box, scene.constraint)
    assert plane.kind == "plane" and plane.shape == (21, 21)
    assert np.abs(plane.points[:, 2]).max() == 0.0
    free = grid_layout(scene.search_box, constraint("free"))
    assert free.shape == (21, 21, 41) and free.points[0] == pytest.approx([-0.01, -0.01, -0.02])


@pytest.mark.parametrize("kind, point", [("line", (0, 0.03, 0)), ("plane", (0, 0, 0.05))])
def test_a_constraint_that_misses_the_box_raises_a_setup_error_with_the_sentence(kind, point):
    scene = scene_with(constraint(kind, point=point, direction=(0, 0, 1)))
    message = (f"the scene: the probe's constraint {kind} does not cross the search box; move "
               "[probe.constraint] point or widen [search_box].")
    with pytest.raises(ValueError) as caught:
        find_traps(FieldModel.from_scene(scene), scene)
    assert str(caught.value) == message
    assert isinstance(caught.value, SearchSetupError)  # the analysis layer shows it to the user
