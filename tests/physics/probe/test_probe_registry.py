"""The two registries of probe kinds (scene.probe_kinds: keys; physics.probe.registry: laws),
and a kind added in the test alone, with no edit to trapscape."""
from dataclasses import dataclass

import numpy as np
import pytest

from trapscape.physics.field.model import FieldModel
from trapscape.physics.probe import registry
from trapscape.physics.probe.finite import AveragedProbe
from trapscape.physics.probe.law import ProbeLaw
from trapscape.physics.probe.laws import PointProbe
from trapscape.scene import probe_kinds
from trapscape.scene.errors import SceneError
from trapscape.scene.loader import load_scene_text
from trapscape.scene.reading import REQUIRED
from scene_factory import magnet_probe, make_scene, soft_probe, weak_probe

MAGNETS = 'units = "mm"\ngravity = [0, 0, -9.81]\n[[magnet]]\nshape = "cylinder"\nsize = [10, 5]\nremanence = 1.2\n'


def probe_table(kind: str) -> str:
    """The [probe] table of a kind with its required keys at their examples."""
    lines = [f'kind = "{kind}"', "diameter = 2"]
    declared = probe_kinds.probe_kind(kind)
    lines += [key.example for key in declared.keys if key.default is REQUIRED]
    if declared.exactly_one_of:
        lines.append(declared.key(declared.exactly_one_of[0]).example)
    return "[probe]\n" + "\n".join(lines) + "\n"


def test_both_registries_list_the_same_kinds():
    assert set(probe_kinds.names()) == set(registry.kinds())
    assert set(registry.kinds()) >= {"soft", "magnet", "weak"}


@pytest.mark.parametrize("kind", probe_kinds.names())
def test_each_declared_kind_loads_into_its_registered_law(kind):
    scene = load_scene_text(MAGNETS + probe_table(kind))
    law = ProbeLaw.from_scene(scene)
    assert type(law) is registry.law_class(kind) and law.kind == kind
    U = PointProbe(FieldModel.from_scene(scene), law).energy(np.array([[0.0, 0.0, 0.01]]))
    assert np.isfinite(U).all() and U[0] != 0.0


@pytest.mark.parametrize("kind", probe_kinds.names())
def test_each_declared_default_is_inside_its_own_range(kind):
    for key in probe_kinds.probe_kind(kind).keys:
        assert key.help and key.reads in ("number", "remanence", "grade", "orientation")
        if isinstance(key.default, float):
            assert not key.positive or key.default > 0
            assert all(key.default > limit.above for limit in key.limits)


def test_an_unknown_kind_is_one_sentence_with_a_suggestion():
    with pytest.raises(SceneError) as caught:
        load_scene_text(MAGNETS + '[probe]\nkind = "magent"\ndiameter = 2\n')
    message = str(caught.value)
    assert message == ('scene.toml, [probe], kind: "magent" is not one of soft, magnet or weak '
                       '(did you mean "magnet"?); choose one of them.')
    assert "\n" not in message


def test_a_key_of_another_kind_names_its_owners():
    with pytest.raises(SceneError, match=r"'susceptibility' is not used by a magnet probe \(it is "
                                         r"for soft and weak probes\)"):
        load_scene_text(MAGNETS + probe_table("magnet") + "susceptibility = 2\n")


def test_an_unregistered_law_is_a_value_error():
    with pytest.raises(ValueError, match="no probe law is registered for kind 'magent'"):
        registry.law_class("magent")
    with pytest.raises(ValueError, match="already registered"):
        registry.register(type("Other", (registry.law_class("soft"),), {}))


@pytest.mark.parametrize("probe", [soft_probe(), soft_probe(saturation=1.0), magnet_probe(),
                                   magnet_probe(orientation=(0, 1, 0)), weak_probe(),
                                   weak_probe(susceptibility=2e-4)])
def test_the_law_answers_what_the_trap_search_asked_by_name(probe):
    # the replacements for the kind branches of physics/traps/search.py and viewers/ (report)
    law = ProbeLaw.from_scene(make_scene([], probe, (-1, -1, -1), (1, 1, 1), 0.1))
    assert law.cone_at_field_zero == (probe.kind == "magnet" and probe.orientation is None)
    assert law.point_model_is_exact == (probe.kind == "magnet")
    assert law.saturates == (probe.kind == "soft" and probe.saturation is not None)
    assert law.stable_in_free_space == (probe.kind == "weak" and probe.susceptibility < 0)
    assert law.weakly_magnetic == (probe.kind == "weak")
    if probe.kind == "weak":
        sign = "diamagnetic" if probe.susceptibility < 0 else "paramagnetic"
        assert law.earnshaw_label == f"{sign} weak"
    else:
        assert law.earnshaw_label == probe.kind
    assert law.subject == {"soft": "The steel probe", "magnet": "The magnet probe"}.get(
        probe.kind, "The probe")


# -- a kind added by the test alone -----------------------------------------------------------

TOY = probe_kinds.ProbeKind(
    name="upright_dipole",
    help="a rigid dipole held along world +z (a toy kind of this test)",
    keys=(probe_kinds.ProbeKey("density", "kg/m^3", "mass density", positive=True,
                               example="density = 7500"),
          probe_kinds.ProbeKey("moment", "A m^2", "dipole moment along +z", positive=True,
                               example="moment = 2e-3")))


@dataclass(frozen=True, eq=False)
class UprightDipoleLaw(ProbeLaw):
    """U = -m B_z, F = m grad B_z (Jackson 5.72 and 5.69 with m fixed along z)."""

    kind = "upright_dipole"
    moment: float

    @classmethod
    def from_probe(cls, probe, gravity):
        return cls(**cls.sphere_values(probe, gravity), moment=probe.extra["moment"])

    def magnetic_energy(self, B):
        return -self.moment * np.asarray(B, float).reshape(-1, 3)[:, 2]

    def magnetic_force(self, B, G):
        return self.moment * np.asarray(G, float).reshape(-1, 3, 3)[:, 2, :]


@pytest.fixture
def toy_kind():
    probe_kinds.declare(TOY)
    registry.register(UprightDipoleLaw)
    try:
        yield
    finally:
        registry.unregister(TOY.name)
        probe_kinds.forget(TOY.name)
    assert TOY.name not in probe_kinds.names() and TOY.name not in registry.kinds()


def test_a_new_kind_needs_only_its_two_entries(toy_kind):
    test_both_registries_list_the_same_kinds()
    scene = load_scene_text(MAGNETS + probe_table("upright_dipole"))
    assert scene.probe.extra["moment"] == 2e-3
    field_model = FieldModel.from_scene(scene)
    model = PointProbe(field_model, ProbeLaw.from_scene(scene))
    points = np.array([[0.0, 0.0, 0.008], [0.004, -0.002, 0.01]])
    U, F = model.energy_and_force(points)
    weight = scene.probe.mass * np.array([0.0, 0.0, -9.81])
    # U = -m B_z - m_p g.x (DESIGN.md, Physics), from the field model's own B
    assert np.allclose(U, -2e-3 * field_model.B(points)[:, 2] - points @ weight, rtol=1e-12)
    h = 1e-7
    for axis in range(3):
        step = np.eye(3)[axis] * h
        dU = (model.energy(points + step) - model.energy(points - step)) / (2 * h)
        assert np.allclose(-dU, F[:, axis], rtol=1e-5, atol=1e-6 * np.abs(F).max())
    finite = model.law.finite_model(field_model, points)
    assert isinstance(finite, AveragedProbe)
    assert np.isfinite(finite.energy(points)).all()
    with pytest.raises(SceneError, match=r"'moment' is not used by a soft probe \(it is for "
                                         r"upright_dipole probes\)"):
        load_scene_text(MAGNETS + probe_table("soft") + "moment = 1\n")
