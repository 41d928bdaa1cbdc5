"""The force and torque on every part from all the others at their assembled positions (what
the glue or the fixture must hold while the assembly is built), from the Coulombian charge model
of physics.holding.forces, with the magnets alone (no steel plate: `hold` gives the pull on one).
The largest of them is the snap force a released part starts with.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trapscape.physics.field.model import FieldModel
from trapscape.physics.holding.forces import part_forces

FORCE_RTOL = 1e-2  # of each part's force scale: enough to choose a glue or a fixture, and fast


@dataclass(frozen=True)
class PartForce:
    """Force (3,) N and torque (3,) N m about the part's centre, from the other parts."""

    name: str
    force_N: np.ndarray
    torque_N_m: np.ndarray


def assembled_forces(field, rtol: float = FORCE_RTOL) -> list:
    """The force and torque on each part from the others.

    Parameters
    ----------
    field : trapscape.physics.safety.assembly.AssemblyField
        The magnets (their exact sources are used).
    rtol : float
        Target error relative to each part's force scale.

    Returns
    -------
    list of PartForce
        In the scene's order.

    References
    ----------
    Coulombian model: Akoun & Yonnet, IEEE Trans. Magn. 20, 1962 (1984); E. P. Furlani,
    Permanent Magnet and Electromechanical Devices, Academic Press 2001, ch. 3.
    """
    if len(field.magnets) < 2:
        return [PartForce(m.name, np.zeros(3), np.zeros(3)) for m in field.magnets]
    model = FieldModel(field.scene, field.sources)
    return [PartForce(name, np.asarray(f), np.asarray(t))
            for name, f, t in part_forces(model, rtol=rtol)]
