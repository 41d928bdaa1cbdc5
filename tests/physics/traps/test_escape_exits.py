"""Escape barriers where the way out ends on a part, and which parts end it (issue 12, item 2):
a graphite bead between opposed discs, against a fine 1D minimax computed here."""
from dataclasses import dataclass, replace

import numpy as np
import pytest

from trapscape.physics.field.model import FieldModel
from trapscape.physics.probe.kinds.weak import WeakLaw
from trapscape.physics.probe.models import PointProbe
from trapscape.physics.traps.problem import TrapProblem
from trapscape.physics.traps.refine import free_equilibria
from trapscape.physics.traps.scan import scan
from trapscape.physics.traps.search import find_traps
from trapscape.physics.traps.wells import with_escapes
from scene_factory import constraint, cylinder_magnet, make_scene, weak_probe

GAP, HEIGHT, DIAMETER = 1e-3, 2e-3, 0.5e-3  # the probe touches a face at |z| = GAP/2 - DIAMETER/2
CONTACT_Z = GAP / 2 - DIAMETER / 2
HALF_BOX = 3e-3  # beyond the discs' rim (radius 2 mm): the way out sideways climbs over it


def discs_scene(gravity=(0, 0, 0)):
    """The probe in the plane y = 0 through the discs' axis (a plane keeps the wide box cheap)."""
    magnets = [cylinder_magnet("top", (0, 0, GAP / 2 + HEIGHT / 2), 4e-3, HEIGHT, north=(0, 0, -1)),
               cylinder_magnet("bottom", (0, 0, -GAP / 2 - HEIGHT / 2), 4e-3, HEIGHT,
                               north=(0, 0, 1))]
    probe = weak_probe(DIAMETER, -4.5e-4, density=2200.0)  # graphite across its planes
    return make_scene(magnets, probe, (-HALF_BOX, -HALF_BOX, -0.44e-3),
                      (HALF_BOX, HALF_BOX, 0.44e-3), 0.04e-3, constraint("plane", direction=(0, 1, 0)),
                      gravity=gravity)


def minimax_along(model, direction, end, count=4001):
    """The 1D minimax from the centre to `end` along a line: max U on the way minus U(0)."""
    t = np.linspace(0.0, end, count)
    U = model.energy(t[:, None] * np.asarray(direction, float)[None, :])
    return float(U.max() - U[0])


def centre_well(report):
    wells = [e for e in report.equilibria if e.escape is not None and e.contact is None
             and np.linalg.norm(e.position) < 1e-7]
    assert len(wells) == 1
    return wells[0]


def test_a_diamagnet_is_pushed_back_by_the_discs_and_leaves_through_the_box():
    # A diamagnet's energy V |chi_eff| B^2 / (2 mu0) rises towards both faces (Berry & Geim,
    # Eur. J. Phys. 18, 307 (1997)): the faces are walls, and the lowest way out is sideways in
    # the mid-plane, over the rim's field, where B^2 is least at each radius (B = b (-x/2, -y/2,
    # z) near the field zero, derived here from div B = 0 and the axial symmetry). Reference: a
    # 4001-point minimax along x to the box face; tolerance 1 %, chosen before looking.
    scene = discs_scene()
    report = find_traps(FieldModel.from_scene(scene), scene, finite_probe=False)
    well = centre_well(report)
    model = PointProbe(FieldModel.from_scene(scene), WeakLaw.from_scene(scene))
    reference = minimax_along(model, (1, 0, 0), HALF_BOX)
    assert well.escape.exit == "box"
    assert well.escape.exit_at.startswith("box face")  # past the rim, up or down or sideways
    assert abs(well.escape.pass_position[0]) > 1.5e-3  # the pass is at the rim
    assert well.escape.energy_J == pytest.approx(reference, rel=1e-2)
    along_axis = minimax_along(model, (0, 0, 1), CONTACT_Z)
    assert well.escape.energy_J > 10 * along_axis  # the old exit, through a face, is far lower
    # convergence of the reference: half the points change it by far less than the tolerance
    assert minimax_along(model, (1, 0, 0), HALF_BOX, 2001) == pytest.approx(reference, rel=1e-4)


@dataclass(frozen=True, eq=False)
class StickyGraphite(WeakLaw):
    """A toy law for this test only: graphite that a part it touches holds (glued on contact)."""

    caught_at_contact = True


def test_a_way_out_that_ends_on_a_part_is_solved_to_the_contact():
    # The same discs with a probe a touching face holds: the lowest way out runs up the axis to
    # the contact at |z| = gap/2 - d/2 = 0.25 mm, and the barrier is U there minus U(0), not U at
    # the last grid cell before it (0.24 mm on this 0.04 mm grid: (0.24/0.25)^2 = 8 % low).
    # Reference: a 4001-point minimax along z up to the contact (derived here); 1 %.
    scene = discs_scene()
    field_model = FieldModel.from_scene(scene)
    problem = TrapProblem.from_scene(field_model, scene, finite_probe=False)
    sticky = StickyGraphite.from_probe(scene.probe, scene.gravity)
    problem = replace(problem, law=sticky, point_model=PointProbe(field_model, sticky))
    grid = scan(problem)
    equilibria = with_escapes(problem, grid, free_equilibria(problem, grid), problem.point_model)
    well = centre_well(type("Report", (), {"equilibria": equilibria}))
    reference = minimax_along(problem.point_model, (0, 0, 1), CONTACT_Z)
    assert well.escape.exit == "magnet" and well.escape.exit_at in {"top", "bottom"}
    assert well.escape.energy_J == pytest.approx(reference, rel=1e-2)
    assert abs(abs(well.escape.exit_position[2]) - CONTACT_Z) < 1e-9
    assert np.linalg.norm(well.escape.exit_position[:2]) < 1e-9
    assert minimax_along(problem.point_model, (0, 0, 1), CONTACT_Z, 2001) == pytest.approx(
        reference, rel=1e-4)


def test_the_laws_say_who_a_part_catches():
    scene = discs_scene()
    assert not WeakLaw.from_scene(scene).caught_at_contact  # a diamagnet: pushed back
    para = replace(scene, probe=weak_probe(DIAMETER, 3e-4))
    assert WeakLaw.from_scene(para).caught_at_contact  # a paramagnet: pulled on
