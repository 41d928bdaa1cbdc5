"""The finite-size re-solve (physics/traps/finite_size.py) asks the field and its gradient (what
a force needs) at no batch of sample points twice: the energy of a contact comes with its force,
and Newton's first step from the point model's contacts reuses the field of their finite-size
correction. (The rule check's energies take the field without its gradient, another kernel, and
are not counted.)"""
import numpy as np

from trapscape.physics.field.model import FieldModel
from trapscape.physics.traps.contact import contact_state
from trapscape.physics.traps.contact_equilibria import contact_equilibria
from trapscape.physics.traps.finite_size import finite_probe_model, with_finite_size
from trapscape.physics.traps.problem import TrapProblem
from trapscape.physics.traps.scan import scan
from scene_factory import cylinder_magnet, make_scene, soft_probe


def _problem():
    """A soft ball on a disc magnet, free to move: its traps are contacts on the disc's top."""
    scene = make_scene([cylinder_magnet("disc", (0, 0, 0), 0.01, 0.005)],
                       soft_probe(2e-3, saturation=2.0), (-0.008, -0.008, 0.0025),
                       (0.008, 0.008, 0.008), 1e-3, gravity=(0, 0, -9.81))
    return TrapProblem.from_scene(FieldModel.from_scene(scene), scene, finite_probe=True)


def test_no_batch_of_sample_points_is_evaluated_twice(monkeypatch):
    problem = _problem()
    grid = scan(problem)
    contacts = contact_equilibria(problem, grid)
    assert contacts and all(e.contact is not None for e in contacts)
    batches = []
    original = FieldModel.applied_H

    def recorded(self, points, *args, **kwargs):
        if kwargs.get("gradient"):
            batches.append(np.asarray(points, float).reshape(-1, 3).tobytes())
        return original(self, points, *args, **kwargs)

    monkeypatch.setattr(FieldModel, "applied_H", recorded)
    equilibria, _, summary, _ = with_finite_size(problem, grid, contacts)
    assert summary.used and any(e.contact is not None for e in equilibria)
    assert len(batches) > 10
    assert len(set(batches)) == len(batches)


def test_contact_energy_is_the_models_energy_bit_for_bit():
    problem = _problem()
    points = np.array([[0.0, 0.0, 0.0035], [0.003, 0.001, 0.0035]])  # d/2 above the top face
    model = finite_probe_model(problem.field_model, problem.law, ())
    state = contact_state(model, problem.geometry, points, problem.basis)
    np.testing.assert_array_equal(state.U, model.energy(points))
    np.testing.assert_array_equal(state.F, model.force(points))
