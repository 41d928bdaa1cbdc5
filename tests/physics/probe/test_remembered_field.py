"""The probe models' memory of their last field (physics/probe/models.py,
ProbeModel.applied_H_and_gradient): asked again at bit-for-bit the same sample points they answer
without the field model, with the same numbers; any other points go to the field model."""
import numpy as np
import pytest

from trapscape.physics.field.model import FieldModel
from trapscape.physics.probe import models
from trapscape.physics.probe.finite import AveragedProbe, MultipoleProbe
from trapscape.physics.probe.laws import PointProbe, ProbeLaw
from scene_factory import make_scene, soft_probe, sphere_magnet

POINTS = np.array([[0.0, 0.0, 0.009], [0.002, -0.003, 0.008], [-0.004, 0.001, -0.010]])


def _counted(monkeypatch):
    scene = make_scene([sphere_magnet("ball", (0, 0, 0), 0.008)], soft_probe(1e-3), (-0.02,) * 3,
                       (0.02,) * 3, 1e-3)
    field_model, law = FieldModel.from_scene(scene), ProbeLaw.from_scene(scene)
    calls = []
    original = field_model.applied_H

    def applied_H(points, *args, **kwargs):
        calls.append(len(np.asarray(points).reshape(-1, 3)))
        return original(points, *args, **kwargs)

    monkeypatch.setattr(field_model, "applied_H", applied_H)
    return field_model, law, calls


@pytest.mark.parametrize("make", [PointProbe, AveragedProbe,
                                  lambda f, law: MultipoleProbe(f, law, 12)])
def test_the_same_points_again_are_answered_without_the_field(monkeypatch, make):
    field_model, law, calls = _counted(monkeypatch)
    model = make(field_model, law)
    U, F = model.energy_and_force(POINTS)
    assert len(calls) == 1
    again = model.energy_and_force(POINTS.copy())
    assert len(calls) == 1
    np.testing.assert_array_equal(again[0], U)
    np.testing.assert_array_equal(again[1], F)
    fresh = make(field_model, law).energy_and_force(POINTS)  # no memory: the field itself
    np.testing.assert_array_equal(fresh[0], U)
    np.testing.assert_array_equal(fresh[1], F)


def test_other_points_go_to_the_field_and_answers_are_not_shared(monkeypatch):
    field_model, law, calls = _counted(monkeypatch)
    model = PointProbe(field_model, law)
    B, G = model.applied_field(POINTS)
    B[:] = 0.0  # a caller writing into its answer must not change the next one
    np.testing.assert_array_equal(model.applied_field(POINTS)[0], PointProbe(
        field_model, law).applied_field(POINTS)[0])
    moved = POINTS.copy()
    moved[1, 2] = np.nextafter(moved[1, 2], 1.0)  # one bit
    model.applied_field(moved)
    model.applied_field(POINTS[:2])
    assert calls == [3, 3, 3, 2]


def test_no_memory_past_its_bound(monkeypatch):
    field_model, law, calls = _counted(monkeypatch)
    model = PointProbe(field_model, law)
    monkeypatch.setattr(models, "REMEMBERED_SAMPLES", 2)
    model.applied_field(POINTS)
    model.applied_field(POINTS)
    assert calls == [3, 3]
