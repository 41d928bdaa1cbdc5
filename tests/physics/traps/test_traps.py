"""The trap finder through find_traps: equilibria, classification, contacts, wells and escape
(physics/traps/search.py)."""
import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from trapscape.scene.units import MU0
from trapscape.physics.field.model import FieldModel
from trapscape.physics.probe.laws import effective_susceptibility
from trapscape.physics.traps.search import classify, find_traps, levitation_threshold
from scene_factory import (constraint, cylinder_magnet,
                           magnet_probe, make_scene, soft_probe, sphere_magnet, weak_probe)



def traps(scene, **options):
    return find_traps(FieldModel.from_scene(scene), scene, **options)


def ring_scene(R=0.02, count=6, scale=1.0, remanence=1.3, chi=1000.0):
    magnets = [sphere_magnet(f"s{i}", scale * R * np.array([np.cos(2 * np.pi * i / count),
                                                            np.sin(2 * np.pi * i / count), 0.0]),
                             scale * 0.005, remanence=remanence) for i in range(count)]
    return make_scene(magnets, soft_probe(scale * 1e-3, chi), scale * np.array([-0.01, -0.01, -0.05]),
                      scale * np.array([0.01, 0.01, 0.05]), scale * 1e-3, constraint("line"))


def positions_and_classes(report):
    return (np.array([e.coordinate_m for e in report.equilibria]),
            [e.classification for e in report.equilibria])


def test_ring_of_parallel_dipoles_on_its_axis():
    # Derived here from the axial dipole field H_z = N m (2 z^2 - R^2) / (4 pi (R^2 + z^2)^(5/2))
    # (Jackson 5.56 summed over the ring): |H|^2 has maxima at z = 0 and z = +-sqrt(3/2) R (a
    # soft probe's wells: U = -mu0 V chi_eff H^2 / 2) and zeros at z = +-R/sqrt(2) (its
    # barriers). The outer wells ~22% beyond R: a fact of the trade, no source.
    R = 0.02
    report = traps(ring_scene(R), finite_probe=False)
    z, classes = positions_and_classes(report)
    expected = np.array([-np.sqrt(1.5), -1 / np.sqrt(2), 0.0, 1 / np.sqrt(2), np.sqrt(1.5)]) * R
    assert classes == ["stable", "unstable", "stable", "unstable", "stable"]
    assert np.allclose(z, expected, atol=1e-7 * R)
    centre = report.equilibria[2]
    # derived here: the barrier from the centre is U(R/sqrt 2) - U(0) = mu0 V chi_eff H(0)^2 / 2
    # with H(0) = N m / (4 pi R^3); the stiffness is U''(0)
    probe = report.equilibria[2]
    V = np.pi * 1e-9 / 6
    m = 1.3 / MU0 * np.pi * 0.005**3 / 6
    H0 = 6 * m / (4 * np.pi * R**3)
    chi_eff = effective_susceptibility(1000.0)
    assert centre.escape.energy_J == pytest.approx(MU0 * V * chi_eff * H0**2 / 2, rel=1e-6)
    zs = np.linspace(0, R / np.sqrt(2), 4001)
    Hz = 6 * m * (2 * zs**2 - R**2) / (4 * np.pi * (R**2 + zs**2) ** 2.5)
    restoring = np.abs(np.gradient(MU0 * V * chi_eff * Hz**2 / 2, zs)).max()
    assert centre.escape.force_N == pytest.approx(restoring, rel=0.03)  # on a 1 mm grid
    low, high = centre.well.interval_m
    assert -R / np.sqrt(2) < low < 0 < high < R / np.sqrt(2)
    # near 0, H_z = -H0 (1 - 9 z^2 / (2 R^2)), so U'' = 9 mu0 V chi_eff H0^2 / R^2
    curvature = 9 * MU0 * V * chi_eff * H0**2 / R**2
    assert probe.stiffness_N_per_m[0] == pytest.approx(curvature, rel=1e-6)
    assert probe.frequency_Hz[0] == pytest.approx(
        np.sqrt(probe.stiffness_N_per_m[0] / (7850 * V)) / (2 * np.pi), rel=1e-12)
    assert report.equilibria[1].frequency_Hz == (None,)


def test_antiparallel_pair_on_the_axis_between_them():
    # Derived here: dipoles +-m z at (+-R, 0, 0) give H = -6 m z R / (4 pi (R^2 + z^2)^(5/2)) x
    # on the z axis; |H|^2 peaks at z = +-R/2 (stable for a soft probe) and vanishes at 0.
    R = 0.01
    magnets = [sphere_magnet("east", (R, 0, 0), 0.004, north=(0, 0, 1)),
               sphere_magnet("west", (-R, 0, 0), 0.004, north=(0, 0, -1))]
    scene = make_scene(magnets, soft_probe(0.5e-3), (-0.003, -0.003, -0.02), (0.003, 0.003, 0.02),
                       0.5e-3, constraint("line"))
    z, classes = positions_and_classes(traps(scene, finite_probe=False))
    assert classes == ["stable", "unstable", "stable"]
    assert np.allclose(z, [-R / 2, 0.0, R / 2], atol=1e-7 * R)


def test_magnet_probe_at_a_field_zero_is_unstable_by_rule():
    # DESIGN.md, Physics: -m|B| is a cone at B = 0; by symmetry B = 0 at the pair's centre
    R = 0.01
    magnets = [sphere_magnet("east", (R, 0, 0), 0.004, north=(0, 0, 1)),
               sphere_magnet("west", (-R, 0, 0), 0.004, north=(0, 0, -1))]
    scene = make_scene(magnets, magnet_probe(0.5e-3), (-0.003, -0.003, -0.02),
                       (0.003, 0.003, 0.02), 0.5e-3, constraint("line"))
    centre = [e for e in traps(scene).equilibria if abs(e.coordinate_m) < 1e-9]
    assert len(centre) == 1 and centre[0].classification == "unstable"
    assert centre[0].stiffness_N_per_m == (None,) and "cone" in centre[0].note


def test_positions_do_not_move_with_remanence_or_susceptibility_and_scale_with_size():
    # derived here: without gravity U scales as Br^2 (and chi_eff) at every point, and a
    # geometry scaled by s gives the same field at scaled points
    base, _ = positions_and_classes(traps(ring_scene(), finite_probe=False))
    stronger, _ = positions_and_classes(traps(ring_scene(remanence=0.4), finite_probe=False))
    weaker, _ = positions_and_classes(traps(ring_scene(chi=20.0), finite_probe=False))
    bigger, _ = positions_and_classes(traps(ring_scene(scale=2.5), finite_probe=False))
    assert np.allclose(stronger, base, atol=1e-9) and np.allclose(weaker, base, atol=1e-9)
    assert np.allclose(bigger, 2.5 * base, atol=1e-9)


def test_water_levitation_threshold():
    # Berry & Geim, Eur. J. Phys. 18, 307 (1997): water floats where |d(B^2/2)/dz| reaches
    # about 1.4e3 T^2/m (chi = -9.0e-6, from memory)
    assert levitation_threshold(1000.0, effective_susceptibility(-9.0e-6)) == pytest.approx(
        1.4e3, rel=0.03)


def opposed_discs(probe, gravity=(0, 0, 0), kind="free", direction=(0, 0, 1)):
    gap, height = 1e-3, 2e-3
    magnets = [cylinder_magnet("top", (0, 0, gap / 2 + height / 2), 4e-3, height, north=(0, 0, -1)),
               cylinder_magnet("bottom", (0, 0, -gap / 2 - height / 2), 4e-3, height,
                               north=(0, 0, 1))]
    return make_scene(magnets, probe, (-0.4e-3, -0.4e-3, -0.44e-3), (0.4e-3, 0.4e-3, 0.44e-3),
                      0.04e-3, constraint(kind, direction=direction), gravity=gravity)


GRAPHITE = weak_probe(0.1e-3, -4.5e-4, density=2200.0)  # chi across the planes, taken isotropic


def test_graphite_floats_in_the_field_zero_between_opposed_discs():
    # At a field zero of an axisymmetric pair B = b (-x/2, -y/2, z) (div B = 0), so
    # U = V |chi_eff| b^2 (x^2/4 + y^2/4 + z^2) / (2 mu0): stiffnesses 1 : 1 : 4 (derived here).
    report = traps(opposed_discs(GRAPHITE), finite_probe=False)
    stable = [e for e in report.equilibria if e.classification == "stable" and e.contact is None]
    assert len(stable) == 1
    k = np.array(stable[0].stiffness_N_per_m)
    assert np.linalg.norm(stable[0].position) < 1e-9
    assert k / k[0] == pytest.approx([1, 1, 4], rel=1e-4)
    assert abs(stable[0].directions[2][2]) == pytest.approx(1.0)  # the stiff one is vertical
    assert report.earnshaw_note is None
    plane = traps(opposed_discs(GRAPHITE, kind="plane", direction=(1, 0, 0)), finite_probe=False)
    k2 = [e.stiffness_N_per_m for e in plane.equilibria if e.classification == "stable"][0]
    assert k2[1] / k2[0] == pytest.approx(4.0, rel=1e-4)


def test_graphite_with_gravity_floats_below_the_centre_at_the_threshold():
    # Berry & Geim 1997; Simon & Geim, J. Appl. Phys. 87, 6200 (2000): the flake floats where
    # d(B^2/2)/dz = -mu0 rho g / |chi_eff|, below the field zero (the field must fall upward)
    scene = opposed_discs(GRAPHITE, gravity=(0, 0, -9.81))
    fm = FieldModel.from_scene(scene)
    report = find_traps(fm, scene, finite_probe=False)
    stable = [e for e in report.equilibria if e.classification == "stable"]
    assert len(stable) == 1 and stable[0].stable_directions == 3
    x = stable[0].position[None]
    assert x[0, 2] < -1e-5 and np.hypot(x[0, 0], x[0, 1]) < 1e-9
    H, G = fm.applied_H(x, gradient=True)
    B, dB = MU0 * H[0], MU0 * G[0]
    slope = B @ dB[:, 2]  # d(B^2/2)/dz
    chi_eff = effective_susceptibility(-4.5e-4)
    assert slope == pytest.approx(-levitation_threshold(2200.0, chi_eff), rel=1e-6)


def test_no_stable_levitation_note_for_a_diamagnet_that_falls():
    weak = weak_probe(0.1e-3, -4.5e-4, density=2e5)  # far too heavy to float
    report = traps(opposed_discs(weak, gravity=(0, 0, -9.81)), finite_probe=False)
    assert not [e for e in report.equilibria if e.classification == "stable" and not e.contact]
    assert "No stable levitation" in report.earnshaw_note


def test_steel_bead_lands_on_the_poles_of_a_sphere_magnet():
    # derived here from the dipole's axial field H = 2 m / (4 pi r^3): the pull on a soft point
    # probe at the pole is mu0 V chi_eff d(H^2/2)/dr = 12 mu0 V chi_eff m^2 / (16 pi^2 r^7)
    scene = make_scene([sphere_magnet("ball", (0, 0, 0), 0.01)], soft_probe(1e-3), (-0.012,) * 3,
                       (0.012,) * 3, 1e-3, gravity=(0, 0, -9.81))
    report = traps(scene, finite_probe=False)
    assert "Earnshaw" in report.earnshaw_note
    assert all(e.contact is not None for e in report.equilibria)
    bottom, top = report.equilibria  # sorted by energy: hanging under it is lower
    r = 0.0055
    assert bottom.position == pytest.approx([0, 0, -r], abs=1e-9)
    assert top.position == pytest.approx([0, 0, r], abs=1e-9)
    V = np.pi * 1e-9 / 6
    m = 1.3 / MU0 * np.pi * 0.01**3 / 6
    pull = 12 * MU0 * V * effective_susceptibility(1000.0) * m**2 / (16 * np.pi**2 * r**7)
    weight = 7850 * V * 9.81
    assert bottom.contact.surface == "ball" and top.contact.surface == "ball"
    assert bottom.contact.normal_force_N == pytest.approx(pull - weight, rel=1e-6)
    assert top.contact.normal_force_N == pytest.approx(pull + weight, rel=1e-6)
    assert top.classification == "stable" and top.free_directions == 2
    assert top.escape.exit == "another well" and top.escape.energy_J > 0


def test_probe_in_a_tube_through_a_magnet_rests_on_its_faces():
    scene = make_scene([sphere_magnet("ball", (0, 0, 0), 0.01)], soft_probe(1e-3), (-0.02,) * 3,
                       (0.02,) * 3, 1e-3, constraint("line", direction=(1, 0, 0)))
    report = traps(scene)
    contacts = [e for e in report.equilibria if e.contact]
    assert [e.coordinate_m for e in contacts] == pytest.approx([-0.0055, 0.0055], abs=1e-12)
    assert all(e.free_directions == 0 and e.classification == "stable" for e in contacts)
    assert all(e.contact.normal_force_N == pytest.approx(abs(e.force_N[0])) for e in contacts)
    coordinates = [e.coordinate_m for e in report.equilibria]
    assert coordinates == sorted(coordinates)  # DESIGN.md: sorted along the line


def test_classification_rules():
    # DESIGN.md, Physics
    assert classify([1.0, 2.0]) == "stable"
    assert classify([-1.0, -2.0]) == "unstable"
    assert classify([-1.0, 2.0]) == "saddle"
    assert classify([1e-7, 2.0]) == "marginal"
    assert classify([]) == "stable"


def test_same_scene_gives_the_same_numbers():
    a = traps(ring_scene())
    b = traps(ring_scene())
    assert [e.energy_J for e in a.equilibria] == [e.energy_J for e in b.equilibria]
    assert [tuple(e.position) for e in a.equilibria] == [tuple(e.position) for e in b.equilibria]


@settings(max_examples=15, deadline=None)
@given(count=st.integers(1, 3), data=st.data(), kind=st.sampled_from(["soft", "magnet", "fixed"]),
       gravity=st.booleans())
def test_no_fully_stable_free_equilibrium_for_soft_or_magnet_probes(count, data, kind, gravity):
    # Earnshaw-Braunbek (DESIGN.md, Physics): |B| is subharmonic outside the magnets
    unit = st.floats(-1.0, 1.0, allow_nan=False)
    magnets = []
    for i in range(count):
        position = np.array([data.draw(unit) for _ in range(3)]) * 0.01
        north = np.array([data.draw(unit) for _ in range(3)]) + np.array([0, 0, 1e-3])
        magnets.append(sphere_magnet(f"m{i}", position, 0.004, north=north))
    probe = {"soft": soft_probe(1e-3), "magnet": magnet_probe(1e-3),
             "fixed": magnet_probe(1e-3, orientation=(0, 0.6, 0.8))}[kind]
    scene = make_scene(magnets, probe, (-0.016,) * 3, (0.016,) * 3, 2e-3,
                       gravity=(0, 0, -9.81) if gravity else (0, 0, 0))
    report = traps(scene, finite_probe=False)
    assert not [e for e in report.equilibria if e.classification == "stable" and e.contact is None]


RING_TOML = """
units = "mm"
gravity = [0, 0, 0]
[[magnet]]
name = "ball"
shape = "sphere"
diameter = 5
position = [20, 0, 0]
north = "+z"
remanence = 1.3
pattern = { kind = "circular", count = 6, axis = [0, 0, 1], center = [0, 0, 0] }
[probe]
kind = "soft"
diameter = 1
[probe.constraint]
kind = "line"
point = [0, 0, 0]
direction = [0, 0, 1]
[search_box]
min = [-10, -10, -50]
max = [10, 10, 50]
spacing = 1
"""


def test_traps_command_writes_the_json_of_the_design(tmp_path, capsys):
    import json

    from trapscape.viewers.cli import main

    scene_file = tmp_path / "ring.toml"
    scene_file.write_text(RING_TOML)
    out = tmp_path / "traps.json"
    assert main(["traps", str(scene_file), "--json", str(out), "--quiet"]) == 0
    table = capsys.readouterr().out
    assert "stable" in table and "unstable" in table and "mm" in table
    text = out.read_text()
    assert "NaN" not in text and "Infinity" not in text
    data = json.loads(text)
    assert data["length_unit"] == "mm" and data["constraint"] == "line"
    assert "scene_sha256" in data and "trapscape_version" in data
    z = [e["position"][2] for e in data["equilibria"]]
    assert z == pytest.approx([-20 * np.sqrt(1.5), -20 / np.sqrt(2), 0, 20 / np.sqrt(2),
                               20 * np.sqrt(1.5)], abs=1e-5)  # in mm: derived above
    keys = {"position", "class", "stable_directions", "free_directions", "stiffness_N_per_m",
            "directions", "frequency_Hz", "B_T", "escape_energy_J", "escape_force_N", "contact"}
    assert all(keys <= set(e) for e in data["equilibria"])
    unstable = data["equilibria"][1]
    assert unstable["class"] == "unstable" and unstable["frequency_Hz"] == [None]
    assert unstable["escape_energy_J"] is None and unstable["contact"] is None


def test_traps_command_rejects_a_line_outside_the_box(tmp_path, capsys):
    from trapscape.viewers.cli import main

    scene_file = tmp_path / "ring.toml"
    scene_file.write_text(RING_TOML.replace("point = [0, 0, 0]", "point = [0, 30, 0]"))
    assert main(["traps", str(scene_file), "--quiet"]) == 2
    assert "search box" in capsys.readouterr().err
