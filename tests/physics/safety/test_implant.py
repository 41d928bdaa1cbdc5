"""The implant shell against the dipole's closed form, the field bound, and the near zone."""
from __future__ import annotations

import math

import numpy as np
import pytest

from forces_factory import magnet, scene, sphere_moment
from trapscape.physics.safety.assembly import AssemblyField
from trapscape.physics.safety.implant import bound_radius, implant_shell, implant_shells

MU0 = 4e-7 * math.pi
LIMIT = 0.5e-3


def dipole_radius(moment, level):
    """Where a dipole's |B| falls to `level` on its axis, its strongest direction:
    |B| = mu0 m / (2 pi r^3) (J. D. Jackson, Classical Electrodynamics, 3rd ed., 5.56)."""
    return (MU0 * moment / (2 * math.pi * level)) ** (1 / 3)


@pytest.mark.parametrize("north", [(0, 0, 1), (1, 2, 3)])
def test_a_sphere_shell_reaches_the_dipole_radius_on_its_axis(north):
    # a uniformly magnetised sphere is exactly a dipole outside (Jackson 5.104)
    diameter = 0.010
    field = AssemblyField(scene([magnet("sphere", (diameter,), (0.01, -0.02, 0.003),
                                        north=north)]))
    expected = dipole_radius(sphere_moment(diameter), LIMIT)
    shell = implant_shell(field, LIMIT)
    assert shell.radius == pytest.approx(expected, rel=1e-6)  # tolerance set before looking
    assert shell.distance_from_surface == pytest.approx(expected - diameter / 2, rel=1e-6)
    # every ray: the shell lies between the dipole's equator radius (half the axial field)
    # and its axial radius
    assert np.all(shell.radii <= expected * (1 + 1e-6))
    assert np.all(shell.radii >= expected * 0.5 ** (1 / 3) * (1 - 1e-6))


def test_every_shell_point_is_on_the_level_and_outside_it_is_below():
    # two opposed blocks side by side and one far away: |B| is not monotonic along rays
    parts = [magnet("box", (0.01, 0.01, 0.005), (-0.006, 0, 0), name="a"),
             magnet("box", (0.01, 0.01, 0.005), (0.006, 0, 0), north=(0, 0, -1), name="b"),
             magnet("cylinder", (0.004, 0.002), (0.05, 0.02, 0), name="c")]
    field = AssemblyField(scene(parts))
    shell = implant_shell(field, LIMIT, count=64)
    points = shell.points
    on = np.linalg.norm(field.B(points), axis=1)
    assert np.allclose(on, LIMIT, rtol=1e-6)
    beyond = shell.centre + shell.radii[:, None] * 1.0 ** 0 * shell.directions
    for factor in (1.001, 1.01, 1.1, 1.5, 3.0):
        outside = shell.centre + (shell.radii * factor)[:, None] * shell.directions
        assert np.all(np.linalg.norm(field.B(outside), axis=1) < LIMIT), factor
    assert beyond.shape == points.shape


def test_the_bound_holds_everywhere_beyond_it():
    rng = np.random.default_rng(3)
    parts = [magnet("box", rng.uniform(0.002, 0.02, 3), rng.uniform(-0.03, 0.03, 3),
                    north=rng.normal(size=3), name=f"p{k}") for k in range(4)]
    field = AssemblyField(scene(parts))
    radius = bound_radius(field, LIMIT)
    u = rng.normal(size=(2000, 3))
    u /= np.linalg.norm(u, axis=1, keepdims=True)
    B = np.linalg.norm(field.B(field.centre + radius * u), axis=1)
    assert B.max() < LIMIT


def test_the_multipole_near_zone_moves_the_shell_by_less_than_a_thousandth():
    # convergence of the far-field rule: exact forms everywhere (near_radii = inf) as reference
    parts = [magnet("box", (0.02, 0.01, 0.004), (0, 0, 0), north=(0, 0, 1), name="flat"),
             magnet("box", (0.02, 0.01, 0.004), (0.0, 0.0, 0.03), north=(1, 0, 0), name="top")]
    levels = [0.5e-3, 5e-3]
    exact = implant_shells(AssemblyField(scene(parts), near_radii=np.inf), levels, count=48)
    fast = implant_shells(AssemblyField(scene(parts)), levels, count=48)
    for a, b in zip(exact, fast):
        assert b.radius == pytest.approx(a.radius, rel=1e-3)
        assert b.distance_from_surface == pytest.approx(a.distance_from_surface, rel=1e-3)


def test_more_rays_converge_on_the_largest_distance():
    parts = [magnet("box", (0.02, 0.01, 0.004), (0, 0, 0), north=(1, 1, 0), name="a"),
             magnet("cylinder", (0.01, 0.004), (0.02, 0.0, 0.01), north=(0, 1, 1), name="b")]
    field = AssemblyField(scene(parts))
    coarse, fine = implant_shell(field, LIMIT, count=48), implant_shell(field, LIMIT, count=400)
    assert coarse.radius == pytest.approx(fine.radius, rel=1e-4)
    assert coarse.distance_from_surface == pytest.approx(fine.distance_from_surface, rel=1e-3)


def test_the_shell_mesh_is_closed_and_outward():
    field = AssemblyField(scene([magnet("cylinder", (0.01, 0.005), (0, 0, 0))]))
    shell = implant_shell(field, LIMIT, count=64)
    a, b, c = (shell.points[shell.faces[:, k]] for k in range(3))
    volume = np.einsum("ij,ij->i", a - shell.centre, np.cross(b - shell.centre,
                                                              c - shell.centre)).sum() / 6
    assert volume > 0
    edges = np.sort(np.concatenate([shell.faces[:, [0, 1]], shell.faces[:, [1, 2]],
                                    shell.faces[:, [2, 0]]]), axis=1)
    _, counts = np.unique(edges, axis=0, return_counts=True)
    assert np.all(counts == 2)  # every edge shared by two triangles: closed
