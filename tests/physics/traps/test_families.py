"""Trap families: equilibria that are one answer are reported once (issue 13). The scene's
symmetry is found from its parts; the holding plate's contact rings are one family each and, the
scene being axisymmetric, marginal along the ring only; on a pattern of five blocks every family is
one orbit of the pattern's symmetry, checked with operations the test builds itself."""
from __future__ import annotations

import json
import tomllib

import numpy as np
import pytest
from repo_paths import SAMPLES

from trapscape.physics.analysis.run import load_analysis
from trapscape.physics.traps.problem import TrapProblem
from trapscape.physics.traps.search import find_traps
from trapscape.physics.traps.symmetry import scene_symmetry
from trapscape.viewers.cli import main

PENTA = """
title = "five blocks on a circle"
units = "mm"
[[magnet]]
name = "block"
shape = "box"
size = [4, 4, 3]
position = [10, 0, 0]
north = "+z"
grade = "N42"
pattern = { kind = "circular", count = 5, axis = [0, 0, 1], center = [0, 0, 0] }
[probe]
kind = "soft"
diameter = 1.5
density = 7850
[search_box]
margin = 4
resolution = 30
"""


@pytest.fixture(scope="module")
def holding_plate(tmp_path_factory):
    out = tmp_path_factory.mktemp("plate") / "traps.json"
    assert main(["traps", str(SAMPLES / "holding_plate.toml"), "-o", str(out), "--quiet"]) == 0
    return json.loads(out.read_text())


def test_contact_circles_of_an_axisymmetric_scene_are_marginal_only_along_the_circle():
    # derived here: with every rotation about the axis a symmetry, the energy is constant along
    # a circle of contacts, so its stiffness there is zero and the circle is marginal (DESIGN.md,
    # Physics), while the probe is held across it. The point model (closed forms, no rule) must
    # then give every member the same normal force; 1e-6 relative, chosen before looking.
    analysis = load_analysis(str(SAMPLES / "holding_plate.toml"), [])
    report = find_traps(analysis.model, analysis.scene, finite_probe=False)
    circles = [f for f in report.families if f.kind == "circle"
               and report.equilibria[f.members[0]].contact is not None]
    assert len(circles) >= 2  # the core's and the rim's top faces at least
    for family in circles:
        members = [report.equilibria[i] for i in family.members]
        forces = [e.contact.normal_force_N for e in members]
        assert max(forces) == pytest.approx(min(forces), rel=1e-6)
        for e in members:
            k = np.asarray(e.stiffness_N_per_m)
            assert e.classification == "marginal"
            assert np.sum(np.abs(k) < 1e-6 * np.abs(k).max()) == 1  # along the circle only
            assert k.max() > 0 and k.min() > -1e-6 * k.max()


def test_each_top_face_contact_ring_is_one_family(holding_plate):
    for part in ("core", "rim"):
        top = [e for e in holding_plate["equilibria"] if e["contact"]
               and e["contact"]["surface"] == part and e["position"][2] > 6.0]
        assert len(top) > 4
        assert len({e["family"] for e in top}) == 1
        radii = [np.hypot(*e["position"][:2]) for e in top]
        family = next(f for f in holding_plate["families"] if f["number"] == top[0]["family"])
        assert min(radii) - 0.05 < family["circle"]["radius"] < max(radii) + 0.05
    # every member is kept, each naming a family that lists it
    listed = sorted(n for f in holding_plate["families"] for n in f["members"])
    assert listed == list(range(1, len(holding_plate["equilibria"]) + 1))
    assert len(holding_plate["families"]) < len(holding_plate["equilibria"]) / 5


def test_free_circles_re_solved_with_the_finite_size_converge_as_one_circle(holding_plate):
    # derived here, as for the contact circles: the finite-size rule is not invariant under every
    # rotation, so its stiffness along a circle of free equilibria is its own error (1e-8 of the
    # radial one), which kept Newton's steps along the circle above its test and left members
    # with the point model. Every member must converge, on one circle (1e-9 m, chosen before
    # looking: Newton stops at 1e-10 of the grid step), with no stiffness along it.
    free = [f for f in holding_plate["families"] if f["kind"] == "circle"
            and holding_plate["equilibria"][f["members"][0] - 1]["contact"] is None]
    assert free
    for family in free:
        members = [holding_plate["equilibria"][n - 1] for n in family["members"]]
        assert not any("did not converge" in (e["note"] or "") for e in members)
        radii = [np.hypot(*e["position"][:2]) for e in members]
        heights = [e["position"][2] for e in members]
        assert max(radii) - min(radii) < 1e-6 and max(heights) - min(heights) < 1e-6  # mm
        for e in members:
            k = np.abs(np.asarray(e["stiffness_N_per_m"]))
            assert np.sum(k < 1e-9 * k.max()) == 1


def _pentagon_operations():
    """C5v about z through the origin, built here: 5 rotations and 5 mirror planes."""
    operations = []
    for k in range(5):
        a = 2 * np.pi * k / 5
        c, s = np.cos(a), np.sin(a)
        rotation = np.array([[c, -s, 0], [s, c, 0], [0, 0, 1]])
        mirror_y = np.diag([1.0, -1.0, 1.0])  # the plane through the first block's centre
        operations += [rotation, rotation @ mirror_y]
    return operations


def test_a_five_fold_pattern_gives_families_that_are_its_orbits(tmp_path):
    path = tmp_path / "penta.toml"
    path.write_text(PENTA)
    analysis = load_analysis(str(path), [])
    report = analysis.traps()
    symmetry = report.symmetry
    assert symmetry.order == 5 and symmetry.mirror_planes == 5
    assert abs(symmetry.axis[2]) == pytest.approx(1.0)
    assert np.linalg.norm(symmetry.centre) < 1e-9
    operations = _pentagon_operations()
    tolerance = 0.05 * analysis.scene.search_box.spacing

    def related(a, b):
        return any(np.linalg.norm(R @ a.position - b.position) < tolerance for R in operations)

    equilibria = report.equilibria
    assert max(len(f.members) for f in report.families) >= 5
    for family in report.families:
        members = [equilibria[i] for i in family.members]
        assert all(related(members[0], m) for m in members)
        assert {m.family for m in members} == {family.number}
    for i, a in enumerate(equilibria):  # no orbit split over two families
        for b in equilibria[i + 1:]:
            if a.family != b.family and a.classification == b.classification:
                assert not related(a, b)


def test_a_guide_line_off_the_axis_leaves_only_the_mirror():
    analysis = load_analysis(str(SAMPLES / "level_gauge.toml"), [])
    symmetry = scene_symmetry(TrapProblem.from_scene(analysis.model, analysis.scene))
    # the 8-fold ring of blocks, seen from a tube at y = 0: only the plane y = 0 is kept
    assert symmetry.axis is None and symmetry.mirror_planes == 1
    mirror = next(R for R in symmetry.operations if np.linalg.det(R) < 0)
    assert mirror == pytest.approx(np.diag([1.0, -1.0, 1.0]), abs=1e-9)


def _resting(position, energy, surface):
    from trapscape.physics.traps.report import Contact, Equilibrium

    return Equilibrium(position=np.asarray(position, float), coordinate_m=None, energy_J=energy,
                       classification="stable", stable_directions=2, free_directions=2,
                       stiffness_N_per_m=(1e-4, 7.5), directions=np.eye(3)[:2],
                       frequency_Hz=(1.0, 2.0), B_T=np.zeros(3), force_N=np.zeros(3),
                       contact=Contact(surface, 0.28, np.array([0.0, 0.0, 1.0])))


def test_neighbouring_points_of_one_flat_contact_curve_are_one_family():
    from trapscape.physics.traps.family_grouping import trap_families
    from trapscape.physics.traps.symmetry import Symmetry

    none = Symmetry(np.zeros(3), None, 1, (np.eye(3),), (1,), 0)
    spacing = 2.8e-3
    # as on the separator grate's end rods: one energy, 0.07 to 3 mm apart along the rod
    rod = [_resting((0.0, y, 0.012), -1.206e-3, "rod-1") for y in (0.0, 2.41e-3, -3.19e-3)]
    other = _resting((0.0, 1e-3, 0.012), -1.206e-3, "rod-2")  # another part: another family
    far = _resting((0.0, 20e-3, 0.012), -1.206e-3, "rod-1")  # beyond the reach
    numbered, families = trap_families([*rod, other, far], none, spacing)
    assert [e.family for e in numbered] == [1, 1, 1, 2, 3]
    assert families[0].kind == "contact curve" and len(families[0].members) == 3
    assert [f.kind for f in families[1:]] == ["single", "single"]


def test_the_representative_is_the_firmest_member_and_rounding_never_chooses():
    from dataclasses import replace

    from trapscape.physics.traps.family_grouping import trap_families
    from trapscape.physics.traps.report import Escape
    from trapscape.physics.traps.symmetry import Symmetry

    none = Symmetry(np.zeros(3), None, 1, (np.eye(3),), (1,), 0)

    def rod(forces):
        points = [_resting((0.0, y, 0.012), -1.206e-3, "rod-1") for y in (0.0, 1e-3, 2e-3)]
        return [replace(e, escape=Escape(1e-6, f, "box", np.zeros(3), np.zeros((1, 3))))
                for e, f in zip(points, forces)]

    # images of one trap: escape forces equal but for the last bits, in either order
    assert trap_families(rod([0.3, 0.3 * (1 + 3e-16), 0.1]), none, 2.8e-3)[1][0].representative == 0
    assert trap_families(rod([0.3 * (1 + 3e-16), 0.3, 0.1]), none, 2.8e-3)[1][0].representative == 0
    # a firmer member, however slightly beyond rounding, is chosen
    assert trap_families(rod([0.3, 0.3 * (1 + 1e-5), 0.1]), none, 2.8e-3)[1][0].representative == 1


def test_images_of_a_trap_come_in_an_order_rounding_cannot_change():
    from dataclasses import replace
    from types import SimpleNamespace

    from trapscape.physics.traps.search import _sorted

    free = SimpleNamespace(constraint_kind="free")
    deep = _resting((0.0, 0.0, 0.02), -2.0e-3, "core")
    images = [_resting((x, y, 0.012), -1.206e-3, "rod") for x, y in ((0.04, 0.06), (-0.04, 0.06),
                                                                     (-0.04, -0.06))]
    shallow = _resting((0.0, 0.0, 0.03), -1.0e-3, "core")
    expected = [deep, images[2], images[1], images[0], shallow]  # by energy, then x, y, z
    # contacts' images agree to about 1e-11 m, energies to rounding
    for last_bits in ((1, -1, 2), (-2, 1, 0), (0, 3, -1)):
        jittered = [replace(e, energy_J=e.energy_J * (1 + 1e-15 * b),
                            position=e.position + 3e-11 * b) for e, b in zip(images, last_bits)]
        order = _sorted(free, [shallow, *jittered[::-1], deep])
        assert [np.round(e.position, 6).tolist() for e in order] == \
            [np.round(e.position, 6).tolist() for e in expected]
    # energies apart by more than rounding keep their order by energy, whatever the positions
    a, b = replace(images[0], energy_J=-1.2061e-3), images[1]
    assert _sorted(free, [b, a]) == [a, b]
