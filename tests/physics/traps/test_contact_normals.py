"""Surface normals of the contact search (physics/traps/contact.py) on mesh parts: the closest
feature's normal against central differences of the clearance, and the clearance itself against
the field model's."""
import numpy as np
import pytest

from repo_paths import SAMPLES
from trapscape.physics.field.model import FieldModel
from trapscape.physics.traps import contact
from trapscape.physics.traps.problem import TrapProblem
from trapscape.scene.loader import load_scene


@pytest.fixture(scope="module")
def rotor_geometry():
    scene = load_scene(SAMPLES / "arc_rotor.toml")
    return TrapProblem.from_scene(FieldModel.from_scene(scene), scene).geometry


def _points_near_the_parts(geometry, count=600):
    rng = np.random.default_rng(7)
    points = rng.uniform(geometry.low, geometry.high, (20 * count, 3))
    gap = geometry.clearance(points)
    return points[(gap > 0.2 * geometry.radius) & (gap < 3 * geometry.radius)][:count]


def test_feature_normals_agree_with_differences_of_the_clearance(rotor_geometry, monkeypatch):
    """Central differences of step 1e-6 d/2 are good to about 1e-8 here (Abramowitz & Stegun
    25.3.21 with the distance's rounding), away from ridges where two parts are equally near."""
    points = _points_near_the_parts(rotor_geometry)
    assert len(points) > 100
    differenced = rotor_geometry.clearance_and_normal(points)
    monkeypatch.setattr(contact, "FEATURE_NORMALS", True)
    clearance, normal = rotor_geometry.clearance_and_normal(points)
    np.testing.assert_array_equal(clearance, rotor_geometry.clearance(points))
    np.testing.assert_array_equal(clearance, differenced[0])
    both = np.sort(np.concatenate([rotor_geometry.field_model.part_distances(points),
                                   rotor_geometry.field_model.plate_distances(points)], axis=1), 1)
    clear = both[:, 1] - both[:, 0] > 1e-6 * rotor_geometry.radius  # one part clearly nearest
    np.testing.assert_allclose(normal[clear], differenced[1][clear], atol=1e-6)
