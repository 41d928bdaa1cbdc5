"""A probe large against a magnet, and a magnet small against the search grid (issue: a 3 mm steel
ball on a shrinking N42 cube got a contact force that grew as the cube shrank)."""
from __future__ import annotations

import json
import subprocess
import sys

import numpy as np
import pytest

from trapscape.physics.analysis.run import load_analysis
from trapscape.physics.analysis.scale_checks import plane_limit_force, small_magnet_notes
from trapscape.scene.units import MU0

CUBE_SCENE = """
title = "a small cube under a 3 mm steel ball"
units = "mm"
[params]
S = 0.5
[[magnet]]
name = "cube"
shape = "box"
size = ["S", "S", "S"]
position = [0, 0, 0]
north = "+z"
grade = "N42"
[probe]
kind = "soft"
diameter = 3.0
density = 7850
susceptibility = 1000
saturation = 2.0
[search_box]
min = {box_min}
max = {box_max}
resolution = {resolution}
"""


def cube_scene(tmp_path, box_min="[-5, -5, -5]", box_max="[5, 5, 8]", resolution=40):
    path = tmp_path / "cube.toml"
    path.write_text(CUBE_SCENE.format(box_min=box_min, box_max=box_max, resolution=resolution))
    return path


def _dipole_force_on_charges(m, position, images):
    """Force on a dipole (two magnetic charges q = m / delta, delta -> 0) from image charges:
    F = mu0 q H, H = q' r / (4 pi |r|^3) (the Coulombian model)."""
    delta = 1e-5 * np.linalg.norm(position)
    direction = m / np.linalg.norm(m)
    q = np.linalg.norm(m) / delta
    charges = [(q, position + 0.5 * delta * direction), (-q, position - 0.5 * delta * direction)]
    force = np.zeros(3)
    for charge, at in charges:
        for image_charge, image_at in images(charges):
            r = at - image_at
            force += MU0 * charge * image_charge * r / (4 * np.pi * np.linalg.norm(r) ** 3)
    return force


def _sphere_images(radius):
    """Images of point charges in a perfectly permeable sphere at the origin: the magnetic
    potential is constant on its surface and its net charge is zero, as for an isolated uncharged
    conducting sphere (Jackson, Classical Electrodynamics, 3rd ed., 2.2-2.3): q' = -q a / D at
    a^2 / D^2 r, and +q a / D at the centre."""
    def images(charges):
        result = []
        for q, at in charges:
            D = np.linalg.norm(at)
            result += [(-q * radius / D, at * radius**2 / D**2), (q * radius / D, np.zeros(3))]
        return result
    return images


def _plane_images(charges):
    """Images in the perfectly permeable half-space z < 0: -q at the mirror point (Jackson 4.4,
    mu -> inf)."""
    return [(-q, at * np.array([1.0, 1.0, -1.0])) for q, at in charges]


@pytest.mark.parametrize("orientation", [(0, 0, 1), (1, 0, 0)])
def test_a_permeable_sphere_pulls_a_dipole_less_than_its_tangent_plane_and_tends_to_it(orientation):
    # The premise of the cap: the half-space behind the tangent plane pulls at least as hard as
    # the sphere, and the sphere's pull tends to the plane's as the sphere grows. Checked here on
    # a point dipole with both image systems written out (Jackson 2.2 and 4.4).
    m = 1e-4 * np.asarray(orientation, float)
    gap = 1e-3
    plane = _dipole_force_on_charges(m, np.array([0, 0, gap]), _plane_images)
    # Perpendicular dipole at height s over a mu -> inf plane: 3 mu0 m^2 / (32 pi s^4), attracting;
    # parallel: half of it (two dipoles at 2 s, coaxial or side by side; Jackson 5.6 energy).
    closed = 3 * MU0 * 1e-8 / (32 * np.pi * gap**4) * (1.0 if orientation[2] else 0.5)
    assert plane[2] == pytest.approx(-closed, rel=1e-3)
    ratios = []
    for radius in (2e-3, 2e-2, 2e-1):
        centre = np.array([0, 0, -radius])
        sphere = _dipole_force_on_charges(m, np.array([0, 0, gap]) - centre,
                                          _sphere_images(radius))
        ratios.append(sphere[2] / plane[2])
    assert all(0 < r <= 1 + 1e-6 for r in ratios)
    assert ratios == sorted(ratios) and ratios[-1] > 0.98


def test_the_plane_limit_of_a_cube_far_from_the_plane_is_the_dipole_image_force(tmp_path):
    # A cube's field beyond a few edges is its dipole's (no quadrupole by symmetry), so with the
    # plane 20 edges below its centre the pull is 3 mu0 m^2 / (32 pi h^4) (Jackson 4.4, 5.6) to
    # the octupole's share, (S / h)^2 ~ 1e-3; tolerance 1e-2 chosen before looking.
    analysis = load_analysis(cube_scene(tmp_path))
    model = analysis.model
    S = 0.5e-3
    h = 20 * S
    force = plane_limit_force(model, np.array([0, 0, -h]), np.array([0, 0, 1.0]), [0])
    m = np.linalg.norm(model.sources[0].moment)
    closed = 3 * MU0 * m**2 / (32 * np.pi * h**4)
    assert force[2] == pytest.approx(closed, rel=1e-2)  # on the half-space: up, to the cube
    assert np.hypot(force[0], force[1]) < 1e-6 * closed


def test_the_plane_limit_at_contact_scales_as_the_area_so_it_falls_as_the_magnet_shrinks(tmp_path):
    # Every length scaled by s: the charge integrals give F ~ mu0 M^2 S^2 exactly (dimensional
    # analysis of the Coulombian model, derived here); quadrature tolerance 1e-4 as requested.
    forces = []
    for S in (0.4, 0.2):
        model = load_analysis(cube_scene(tmp_path), [f"S={S}"]).model
        contact = np.array([0, 0, S / 2 * 1e-3])
        forces.append(plane_limit_force(model, contact, np.array([0, 0, 1.0]), [0])[2])
    assert forces[0] < 0 and forces[1] < 0  # the probe above is pulled down onto the cube
    assert forces[0] / forces[1] == pytest.approx(4.0, rel=1e-3)


def test_a_magnet_smaller_than_two_grid_steps_is_named_with_the_resolution_that_resolves_it(
        tmp_path):
    analysis = load_analysis(cube_scene(tmp_path), ["S=0.05"])
    notes = small_magnet_notes(analysis.scene, analysis.model)
    assert len(notes) == 1 and "'cube'" in notes[0] and "resolution to at least" in notes[0]
    needed = int(notes[0].split("at least ")[1].split()[0])
    longest, size = 13.0, 0.05 * np.sqrt(3)
    assert longest / (needed - 1) <= size / 2  # the named resolution puts two steps in the cube
    assert small_magnet_notes(analysis.scene, load_analysis(cube_scene(tmp_path)).model) == []


def _contact_force(tmp_path, S):
    scene = cube_scene(tmp_path, box_min='["-3*S", "-3*S", "-3*S"]',
                       box_max='["3*S", "3*S", "3*S + 3.5"]', resolution=60)
    out = tmp_path / f"traps{S}.json"
    run = subprocess.run([sys.executable, "-m", "trapscape.viewers.cli", "traps", str(scene), "--set",
                          f"S={S}", "-o", str(out)], capture_output=True, text=True, timeout=600, check=False)
    assert run.returncode == 0, run.stderr
    report = json.loads(out.read_text())
    contacts = [e for e in report["equilibria"] if e.get("contact")]
    assert len(contacts) == 1
    return contacts[0], run.stdout


def test_a_large_ball_on_a_shrinking_cube_is_held_less_firmly_and_says_why(tmp_path):
    # Before: 0.363 N at S = 0.5 mm, 3.19 N at 0.2 mm, a traceback (MemoryError) at 0.1 mm.
    first, _ = _contact_force(tmp_path, 0.2)
    second, stdout = _contact_force(tmp_path, 0.1)
    assert second["contact"]["normal_force_N"] < first["contact"]["normal_force_N"]
    assert "tangent-plane limit" in second["note"] and "upper bound" in second["note"]
    assert "Warning: a probe larger than the magnet it rests on" in stdout
    # Both capped at the limit: the magnetic part falls as the cube's area (previous test).
    weight = 7850 * np.pi / 6 * 3e-3**3 * 9.80665  # the ball's weight presses it down too
    magnetic = [eq["contact"]["normal_force_N"] - weight for eq in (first, second)]
    assert magnetic[0] / magnetic[1] == pytest.approx(4.0, rel=1e-2)
