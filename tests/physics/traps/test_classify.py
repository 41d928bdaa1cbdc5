"""Classification on its own: known Hessians in, class, stiffnesses, directions and frequencies
out (physics/traps/classify.py; the rules of DESIGN.md, Physics)."""
from dataclasses import replace

import numpy as np
import pytest

from trapscape.physics.field.model import FieldModel
from trapscape.physics.traps.classify import (LocalHessian, Sample, classify, frequencies,
                                              make_equilibrium, rests)
from trapscape.physics.traps.problem import MARGINAL_RATIO, TrapProblem
from scene_factory import constraint, make_scene, soft_probe, sphere_magnet


def rotation(seed):
    """An orthogonal matrix from the QR factorisation of a fixed random matrix."""
    q, r = np.linalg.qr(np.random.default_rng(seed).normal(size=(3, 3)))
    return q * np.sign(np.diag(r))


def hessian_with(eigenvalues, seed=1):
    Q = rotation(seed)
    return Q @ np.diag(eigenvalues) @ Q.T, Q


@pytest.mark.parametrize("values, expected", [
    ([3.0, 1.0, 2.0], "stable"),
    ([-3.0, -1.0, -2.0], "unstable"),
    ([-3.0, 1.0, 2.0], "saddle"),
    ([3.0, -1.0, -2.0], "saddle"),
    ([0.0, 0.0, 0.0], "marginal"),
    ([0.9e-6, 1.0, 1.0], "marginal"),  # DESIGN.md: |eigenvalue| below 1e-6 of the largest
    ([-0.9e-6, 1.0, 1.0], "marginal"),
    ([1.1e-6, 1.0, 1.0], "stable"),
    ([-1.1e-6, 1.0, 1.0], "saddle"),
    ([], "stable"),  # no free direction: pressed at a point on a line
])
def test_classify_the_eigenvalues_of_a_rotated_hessian(values, expected):
    if values:
        K, _ = hessian_with(values)
        values = np.linalg.eigvalsh(K)  # what the search hands over
    assert classify(values) == expected


def test_the_marginal_ratio_is_the_design_one_and_can_be_changed():
    assert MARGINAL_RATIO == 1e-6
    assert classify([1e-3, 1.0], marginal_ratio=1e-2) == "marginal"
    assert classify([1e-3, 1.0]) == "stable"


def test_frequencies_of_a_mass_on_springs():
    # f = sqrt(k/m) / (2 pi): a 1 kg mass on 4 pi^2 N/m oscillates at 1 Hz (textbook oscillator)
    assert frequencies((4 * np.pi**2, 16 * np.pi**2, 0.0, -1.0, None), 1.0) == pytest.approx(
        (1.0, 2.0, None, None, None))


@pytest.fixture(scope="module")
def line_problem():
    scene = make_scene([sphere_magnet("ball", (0.05, 0, 0), 0.005)], soft_probe(1e-3),
                       (-0.01,) * 3, (0.01,) * 3, 1e-3,
                       constraint("line", point=(0, 0, 0.002), direction=(0, 0, 1)))
    return TrapProblem.from_scene(FieldModel.from_scene(scene), scene)


def sample_at(position):
    return Sample(np.asarray(position, float), -1.5e-9, np.array([0.0, 0.0, 2e-6]),
                  np.array([0.1, 0.0, 0.2]))


def test_make_equilibrium_reads_a_known_hessian(line_problem):
    values = [-2.0, 0.5, 3.0]
    K, Q = hessian_with(values, seed=7)
    eq = make_equilibrium(line_problem, sample_at((0, 0, 0.005)), LocalHessian(np.eye(3), K))
    assert eq.classification == "saddle" and eq.stable_directions == 2 and eq.free_directions == 3
    assert eq.stiffness_N_per_m == pytest.approx(values, rel=1e-12)  # ascending
    for direction, column in zip(eq.directions, Q.T[np.argsort(values)]):
        assert abs(direction @ column) == pytest.approx(1.0, rel=1e-12)  # up to sign
    m = line_problem.law.mass
    assert eq.frequency_Hz[0] is None
    assert eq.frequency_Hz[2] == pytest.approx(np.sqrt(3.0 / m) / (2 * np.pi), rel=1e-12)
    assert eq.coordinate_m == pytest.approx(0.003)  # from the line's point at z = 2 mm
    assert eq.energy_J == -1.5e-9 and eq.contact is None


def test_make_equilibrium_expresses_directions_in_its_frame(line_problem):
    # a contact on a surface: the Hessian is given in the two tangents; directions come back in
    # world axes
    tangents = np.array([[0.0, 1.0, 0.0], [0.0, 0.0, 1.0]])
    eq = make_equilibrium(line_problem, sample_at((0, 0, 0)),
                          LocalHessian(tangents, np.diag([5.0, 1.0])))
    assert eq.classification == "stable" and eq.stiffness_N_per_m == (1.0, 5.0)
    assert np.abs(eq.directions) == pytest.approx(np.array([[0, 0, 1.0], [0, 1.0, 0]]))


def test_a_field_zero_is_unstable_by_rule(line_problem):
    # DESIGN.md, Physics: a magnet probe at B = 0 (where -m|B| is a cone) is unstable by rule
    eq = make_equilibrium(line_problem, sample_at((0, 0, 0)),
                          LocalHessian(line_problem.basis, None))
    assert eq.classification == "unstable" and eq.stable_directions == 0
    assert eq.stiffness_N_per_m == (None,) and eq.frequency_Hz == (None,)
    assert "cone" in eq.note and eq.directions.tolist() == [[0.0, 0.0, 1.0]]


@pytest.mark.parametrize("values, expected", [
    ([1.0, 5.0], True),  # stable
    ([1e-17, 5.0], True),  # marginal only along one direction (a circle of contacts)
    ([-1e-17, 5.0], True),  # the same, rounded below zero
    ([-1e-17, -2.0, 5.0], False),  # marginal, but the energy falls along another direction
    ([-2.0, 5.0], False),  # saddle
])
def test_the_probe_rests_only_where_no_direction_falls(line_problem, values, expected):
    # DESIGN.md, Physics: a stable point holds the probe; a marginal one holds it where no
    # eigenvalue is negative (beyond the marginal share of the largest)
    frame = np.eye(3)[: len(values)]
    eq = make_equilibrium(line_problem, sample_at((0, 0, 0)), LocalHessian(frame, np.diag(values)))
    assert rests(eq) is expected
    held = [f for f, k in zip(eq.frequency_Hz, values) if k > MARGINAL_RATIO * max(values)]
    assert all(f is not None for f in held)
    assert all(f is None for f, k in zip(eq.frequency_Hz, values) if abs(k) < 1e-9)


def test_directions_get_a_sign_that_rounding_cannot_flip():
    from trapscape.physics.traps.classify import signed_directions

    rows = np.array([[-0.9983920613775651, 1e-17, -0.0566859], [1e-10, -1.0, 0.0],
                     [0.7071067811865476, -0.7071067811865475, 0.0]])
    signed = signed_directions(rows)
    assert signed[0] == pytest.approx([0.9983920613775651, -1e-17, 0.0566859])
    assert signed[1] == pytest.approx([-1e-10, 1.0, 0.0])
    # at 45 degrees the two components tie within 1e-9: the first of them is made positive
    assert signed[2] == pytest.approx(rows[2])
    assert signed_directions(-rows[2:]) == pytest.approx(rows[2:])
    # the same eigenvectors from a Hessian and from its rotated copy's rounding get one sign
    assert np.array_equal(signed_directions(-rows), signed)


def test_equal_stiffnesses_are_reported_along_the_world_axes_of_their_plane():
    from trapscape.physics.traps.classify import axes_in_ties

    turn = np.array([[np.cos(0.72), -np.sin(0.72), 0.0], [np.sin(0.72), np.cos(0.72), 0.0],
                     [0.0, 0.0, 1.0]])
    values = np.array([0.1053, 0.1053 * (1 + 1e-13), 0.404])
    got = axes_in_ties(values, turn.T)  # rows: two turned level directions, then z
    assert got == pytest.approx(np.eye(3), abs=1e-12)
    # a tilted plane of ties: x's share first, then the rest of the plane, orthonormal
    tilt = rotation(4)
    got = axes_in_ties(np.array([1.0, 1.0, 2.0]), tilt.T)
    assert got @ got.T == pytest.approx(np.eye(3), abs=1e-12)
    plane = tilt.T[:2]
    share = plane.T @ (plane @ [1.0, 0.0, 0.0])
    assert got[0] == pytest.approx(share / np.linalg.norm(share), abs=1e-12)
    assert got[2] == pytest.approx(tilt.T[2], abs=1e-12)
    # stiffnesses apart by more than the tie keep their eigenvectors
    assert axes_in_ties(np.array([0.1, 0.2, 0.4]), turn.T) == pytest.approx(turn.T, abs=1e-15)


def test_rests_decides_with_the_ratio_the_equilibrium_was_classified_with(line_problem):
    # a marginal direction that falls by 2e-6 of the largest stiffness: beyond the design ratio
    # (1e-6) the probe slides off; with a ratio of 1e-5 that fall is within the marginal share
    frame = np.eye(3)[:2]
    eq = make_equilibrium(line_problem, sample_at((0, 0, 0)),
                          LocalHessian(frame, np.diag([-2e-6, 1.0])))
    assert eq.classification == "saddle" and not rests(eq)
    loose = replace(line_problem, tolerances=replace(line_problem.tolerances, marginal_ratio=1e-5))
    eq = make_equilibrium(loose, sample_at((0, 0, 0)), LocalHessian(frame, np.diag([-2e-6, 1.0])))
    assert eq.classification == "marginal"
    assert rests(eq, 1e-5) and not rests(eq, MARGINAL_RATIO)
