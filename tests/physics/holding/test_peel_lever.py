"""The peel lever: distance from the centre of pull to the footprint's nearest support line,
from the parts' exact outlines (issue 12, item 4: a rasterised shadow gave 4.9425 mm for a
centred 10 mm disc)."""
import math

import numpy as np
import pytest

from forces_factory import magnet, plate
from trapscape.physics.holding.pull import peel_torque
from trapscape.physics.holding.saturation import footprint


def lever_about_origin(magnets, plate_=None):
    """peel_torque with unit pull and no torque about the face's origin: the bare lever, m."""
    plate_ = plate_ or plate()
    shadow = footprint(magnets, plate_)
    return peel_torque(1.0, np.zeros(3), shadow, np.asarray(plate_.point, float))


def z_rotation(angle):
    c, s = math.cos(angle), math.sin(angle)
    return np.array([[c, -s, 0.0], [s, c, 0.0], [0.0, 0.0, 1.0]])


def test_a_centred_disc_tips_about_its_rim():
    # the nearest support line of a disc from its centre is at its radius (elementary geometry)
    R = 0.005
    lever = lever_about_origin([magnet("cylinder", (2 * R, 0.003), (0, 0, 0.0015))])
    assert lever == pytest.approx(R, rel=1e-6)


def test_the_holding_samples_ring_tips_about_its_outer_rim():
    core = magnet("cylinder", (0.016, 0.005), (0, 0, 0.003), north=(0, 0, -1), name="core")
    rim = magnet("ring", (0.032, 0.024, 0.005), (0, 0, 0.003), name="rim")
    # the hull of the union is the ring's outer circle, radius 16 mm (elementary geometry)
    assert lever_about_origin([core, rim]) == pytest.approx(0.016, rel=1e-6)


@pytest.mark.parametrize("turn", [0.0, 0.3, math.pi / 4])
def test_a_box_tips_about_its_nearer_long_edge(turn):
    # a centred rectangle's nearest edge line is at its smaller half-width, whatever its turn
    # about the normal (elementary geometry); 0.3 rad lies between the sampled directions
    box = magnet("box", (0.02, 0.012, 0.004), (0, 0, 0.002), rotation=z_rotation(turn))
    assert lever_about_origin([box]) == pytest.approx(0.006, rel=1e-6)


def test_an_off_centre_point_measures_to_the_nearest_edge():
    # the point (3, 1) mm in a 20 x 12 mm box: nearest edge x = 10 mm at 7 mm, y = 6 mm at 5 mm
    box = magnet("box", (0.02, 0.012, 0.004), (0, 0, 0.002))
    shadow = footprint([box], plate())
    pull, about = 2.0, np.zeros(3)
    # a normal force -pull z at a = (3, 1) mm: T = a x (-pull z)
    torque = np.cross([0.003, 0.001, 0.0], [0.0, 0.0, -pull])
    assert peel_torque(pull, torque, shadow, about) == pytest.approx(pull * 0.005, rel=1e-6)
