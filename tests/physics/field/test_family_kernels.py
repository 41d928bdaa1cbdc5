"""The family kernels (physics/field/families.py) against the per-part path of
physics/field/sources.py, whose closed forms are tested against their published sources
(test_cuboid.py, test_cylinder.py), and the far-field dipole against Jackson's formula."""
from __future__ import annotations

import subprocess
import sys

import numpy as np
import pytest

from trapscape.physics.field import families
from trapscape.physics.field.families import Family, axis_aligned, evaluation_steps
from trapscape.physics.field.sources import FAR_FIELD_SIZES, Source, mirrored, point_dipole

MM = 1e-3
M_N42 = 1.0e6  # A/m, a round figure of the order of sintered NdFeB (common practice)


def turn(axis, degrees):
    axis = np.asarray(axis, float) / np.linalg.norm(axis)
    K = np.array([[0, -axis[2], axis[1]], [axis[2], 0, -axis[0]], [-axis[1], axis[0], 0]])
    t = np.radians(degrees)
    return np.eye(3) + np.sin(t) * K + (1 - np.cos(t)) * K @ K


def box(part, center, matrix=np.eye(3), size=(6, 4, 3), M=(0.2, -0.3, 1.0)):
    size = np.array(size, float) * MM
    M = np.array(M) * M_N42
    return Source(name=f"box{part}", part=part, kind="box", params=(size,),
                  center=np.array(center, float) * MM, matrix=np.asarray(matrix, float),
                  magnetization=M, size=float(np.linalg.norm(size)),
                  moment=np.asarray(matrix, float) @ M * np.prod(size))


def ring(part, center, matrix=np.eye(3), inner=2.0):
    dims = (8 * MM, inner * MM, 3 * MM) if inner else (8 * MM, 3 * MM)
    M = np.array([0.1, 0.0, 1.0]) * M_N42
    volume = np.pi / 4 * (8**2 - inner**2) * 3 * MM**3
    return Source(name=f"ring{part}", part=part, kind="ring" if inner else "cylinder",
                  params=dims, center=np.array(center, float) * MM,
                  matrix=np.asarray(matrix, float), magnetization=M,
                  size=float(np.hypot(8, 3)) * MM, moment=np.asarray(matrix, float) @ M * volume)


def per_part(sources, points):
    H, G = np.zeros_like(points), np.zeros((len(points), 3, 3))
    for source in sources:
        source.add_closed_form_H(points, True, H, G)
    return H, G


def by_steps(sources, points, gradient=True):
    H, G = np.zeros_like(points), np.zeros((len(points), 3, 3))
    for step in evaluation_steps(sources):
        if isinstance(step, Family):
            step.add_H(points, gradient, H, G)
        else:
            step.add_closed_form_H(points, gradient, H, G)
    return H, G


def near_points(n=400, seed=1):
    """Around and inside the parts, on faces and edges too."""
    rng = np.random.default_rng(seed)
    points = rng.uniform(-25, 25, (n, 3)) * MM
    faces = np.array([[3, 0, 0], [0, 2, 0], [3, 2, 1.5], [13, 0, 0]]) * MM  # box0's faces, a corner
    return np.ascontiguousarray(np.concatenate([points, faces]))


def axis_aligned_scene():
    flip = np.diag([1.0, -1.0, -1.0])  # a right-angle turn: exact entries
    quarter = np.array([[0.0, -1.0, 0.0], [1.0, 0.0, 0.0], [0.0, 0.0, 1.0]])
    sources = [box(0, (0, 0, 0)), box(1, (10, 0, 0), flip), box(2, (0, 10, 0), quarter),
               ring(3, (-12, 0, 0)), ring(4, (0, -12, 0), flip, inner=0.0)]
    images = [mirrored(s, np.array([0, 0, -5 * MM]), np.array([0.0, 0.0, 1.0]), " (image)")
              for s in sources]
    return sources + images


@pytest.mark.parametrize("parallel", [False, True])
def test_axis_aligned_family_equals_the_per_part_path_bit_for_bit(parallel, monkeypatch):
    # every product of the rotation is exact (entries 0, +-1) and the parts are summed in their
    # order: nothing may round differently
    monkeypatch.setattr(families, "PARALLEL_MIN_WORK", 0 if parallel else 10**15)
    sources, points = axis_aligned_scene(), near_points()
    H_ref, G_ref = per_part(sources, points)
    H, G = by_steps(sources, points)
    assert np.array_equal(H, H_ref) and np.array_equal(G, G_ref)
    H_only, _ = by_steps(sources, points, gradient=False)
    assert np.array_equal(H_only, H_ref)


def test_turned_parts_in_the_kernel_agree_to_rounding():
    # the kernel's own 3 x 3 products against BLAS's: rounding only, 1e-13 of the largest value
    # (tolerance chosen before running: a few hundred ulps of the sum over parts)
    turned = [box(0, (0, 0, 0), turn((1, 2, 3), 37)), box(1, (9, 3, -2), turn((0, 0, 1), 45)),
              box(2, (-8, 5, 1), turn((1, -1, 0), 120))]
    points = near_points()
    H_ref, G_ref = per_part(turned, points)
    family = families._packed("box", turned, families._box_dims, families.add_cuboids_H,
                              families._box_radius)
    H, G = np.zeros_like(points), np.zeros((len(points), 3, 3))
    family.add_H(points, True, H, G)
    assert np.abs(H - H_ref).max() <= 1e-13 * np.abs(H_ref).max()
    assert np.abs(G - G_ref).max() <= 1e-13 * np.abs(G_ref).max()


def test_far_points_take_the_point_dipole_of_jackson():
    # beyond FAR_FIELD_SIZES sizes a part is its dipole (Jackson, 3rd ed., eq. 5.56), here from
    # the kernel's own formula against physics.field.sources.point_dipole
    part = box(0, (1, 2, 3), np.diag([1.0, -1.0, -1.0]))
    rng = np.random.default_rng(3)
    directions = rng.normal(size=(50, 3))
    directions /= np.linalg.norm(directions, axis=1)[:, None]
    points = np.ascontiguousarray(part.center + directions * FAR_FIELD_SIZES * part.size
                                  * rng.uniform(1.01, 5.0, (50, 1)))
    H, G = by_steps([part], points)
    H_dip, G_dip = point_dipole(points, part.center, part.moment, gradient=True)
    assert np.allclose(H, H_dip, rtol=1e-12, atol=1e-12 * np.abs(H_dip).max())
    assert np.allclose(G, G_dip, rtol=1e-12, atol=1e-12 * np.abs(G_dip).max())


def test_runs_keep_the_order_of_the_parts():
    sphere = Source(name="ball", part=9, kind="sphere", params=(4 * MM,), center=np.zeros(3),
                    matrix=np.eye(3), magnetization=np.array([0, 0, M_N42]), size=4 * MM,
                    moment=np.zeros(3))
    turned = box(5, (0, 0, 0), turn((0, 0, 1), 30))
    steps = evaluation_steps([box(0, (0, 0, 0)), box(1, (9, 0, 0)), sphere, box(2, (0, 9, 0)),
                              turned, ring(3, (0, 0, 9)), box(4, (9, 9, 0))])
    kinds = [s.name if isinstance(s, Family) else s.kind for s in steps]
    assert kinds == ["box", "sphere", "box", "box", "ring", "box"]
    assert [len(s.centers) for s in steps if isinstance(s, Family)] == [2, 1, 1, 1]


def test_axis_aligned_is_exact_right_angles_only():
    assert axis_aligned(np.eye(3)) and axis_aligned(np.diag([1.0, -1.0, -1.0]))
    assert axis_aligned([[0, 0, 1], [0, 1, 0], [-1, 0, 0]])
    assert not axis_aligned(turn((0, 0, 1), 45))
    assert not axis_aligned(turn((0, 0, 1), 90))  # cos(90 deg) rounds to 6e-17, not 0


def test_bad_dims_are_refused():
    bad = box(0, (0, 0, 0), size=(6, 0, 3))
    with pytest.raises(ValueError):
        evaluation_steps([bad])


CHILD = ("import os, sys\n{before}import trapscape.viewers.cli as cli\ncli.use_thread_policy()\n"
         "print(os.environ.get('OPENBLAS_NUM_THREADS'), os.environ.get('OMP_WAIT_POLICY'))")


@pytest.mark.parametrize("env, before, expected", [
    ({}, "", "1 PASSIVE"),                            # the program's own process: one BLAS thread
    ({"OPENBLAS_NUM_THREADS": "2"}, "", "2 PASSIVE"),  # the user's choice stands
    ({"OMP_NUM_THREADS": "2"}, "", "None PASSIVE"),
    ({}, "import numpy\n", "None None"),              # numpy already loaded: left alone
])
def test_thread_policy_of_the_trapscape_process(env, before, expected):
    import os

    clean = {k: v for k, v in os.environ.items()
             if k not in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS",
                          "OMP_WAIT_POLICY")}
    done = subprocess.run([sys.executable, "-c", CHILD.format(before=before)],
                          env={**clean, **env}, capture_output=True, text=True, check=True)
    assert done.stdout.strip() == expected
