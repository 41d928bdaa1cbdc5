"""The trap search's one input: everything the stages need, built once from (field model, scene)
and frozen, so that no stage reaches back into the scene."""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from trapscape.physics.probe.laws import PointProbe, ProbeLaw, allowed_basis
from trapscape.physics.traps.contact import ProbeGeometry
from trapscape.physics.traps.scan import GridLayout, grid_layout

MARGINAL_RATIO = 1e-6  # |eigenvalue| below this share of the largest: marginal (DESIGN.md)
FINITE_PROBE_THRESHOLD = 1e-2  # relative energy change above which the finite size is used
NEWTON_ITERATIONS = 40
FIELD_ZERO_RATIO = 1e-6  # |B| below this share of the local field scale: a field zero
MAX_CONTACT_STARTS = 600  # lowest boundary cells kept as starts of the surface descent


@dataclass(frozen=True)
class Tolerances:
    """The search's numerical thresholds (all dimensionless or counts).

    Attributes
    ----------
    marginal_ratio : float
        |eigenvalue| below this share of the largest: marginal (DESIGN.md, Physics).
    finite_probe_threshold : float
        Relative energy change above which the finite size is used.
    newton_iterations : int
        Iterations of Newton's method (free equilibria, field zeros).
    field_zero_ratio : float
        |B| below this share of the local field scale s(x): a field zero (DESIGN.md,
        Conventions).
    max_contact_starts : int
        Lowest boundary cells kept as starts of the surface descent.
    """

    marginal_ratio: float = MARGINAL_RATIO
    finite_probe_threshold: float = FINITE_PROBE_THRESHOLD
    newton_iterations: int = NEWTON_ITERATIONS
    field_zero_ratio: float = FIELD_ZERO_RATIO
    max_contact_starts: int = MAX_CONTACT_STARTS


def _frozen(values) -> np.ndarray:
    array = np.array(values, dtype=float)
    array.setflags(write=False)
    return array


@dataclass(frozen=True, eq=False)
class TrapProblem:
    """One trap search's fixed data, SI.

    Attributes
    ----------
    field_model : physics.field.model.FieldModel
        The magnets' (and plate images') field.
    law : physics.probe.laws.ProbeLaw
        The probe's material law, size and mass.
    point_model : physics.probe.laws.PointProbe
        Energy, force and Hessian of the probe as a point.
    geometry : physics.traps.contact.ProbeGeometry
        Admissible points and surfaces for the probe's centre (d/2 from every part).
    constraint_kind : str
        free | line | plane.
    constraint_point : ndarray, shape (3,)
        The constraint's point, m (read-only).
    constraint_direction : ndarray, shape (3,)
        The line's unit direction or the plane's unit normal (read-only).
    basis : ndarray, shape (k, 3)
        Orthonormal rows of the allowed directions, k = 1, 2 or 3 (read-only).
    gravity : ndarray, shape (3,)
        m/s^2 (read-only).
    probe_density : float
        kg/m^3.
    box_low, box_high : ndarray, shape (3,)
        The search box's corners, m (read-only).
    spacing : float
        Grid step, m.
    layout : physics.traps.scan.GridLayout
        The scan grid restricted to the constraint.
    tolerances : Tolerances
    finite_probe : bool or None
        None: use the finite size when the correction exceeds the threshold; True/False force it.
    """

    field_model: object
    law: ProbeLaw
    point_model: PointProbe
    geometry: ProbeGeometry
    constraint_kind: str
    constraint_point: np.ndarray
    constraint_direction: np.ndarray
    basis: np.ndarray
    gravity: np.ndarray
    probe_density: float
    box_low: np.ndarray
    box_high: np.ndarray
    spacing: float
    layout: GridLayout
    tolerances: Tolerances = field(default_factory=Tolerances)
    finite_probe: bool | None = None

    @classmethod
    def from_scene(cls, field_model, scene, finite_probe: bool | None = None) -> "TrapProblem":
        """Build the problem of the scene's probe, constraint and search box.

        Parameters
        ----------
        field_model : physics.field.model.FieldModel
            Built from the same scene.
        scene : scene.model.Scene
            SI.
        finite_probe : bool or None
            See the attribute of that name.

        Returns
        -------
        TrapProblem

        Raises
        ------
        ValueError
            When the constraint's line or plane does not cross the search box (one sentence
            naming the scene file and the keys to change).
        """
        law = ProbeLaw.from_scene(scene)
        c, box = scene.constraint, scene.search_box
        return cls(
            field_model=field_model, law=law, point_model=PointProbe(field_model, law),
            geometry=ProbeGeometry(field_model, scene, law), constraint_kind=c.kind,
            constraint_point=_frozen(c.point), constraint_direction=_frozen(c.direction),
            basis=_frozen(allowed_basis(c)), gravity=_frozen(scene.gravity),
            probe_density=float(scene.probe.density), box_low=_frozen(box.min),
            box_high=_frozen(box.max), spacing=float(box.spacing),
            layout=grid_layout(box, c, scene.path or "the scene"), finite_probe=finite_probe)

    @property
    def free_directions(self) -> int:
        """k, the number of directions the constraint leaves free."""
        return len(self.basis)

    def line_coordinate(self, x) -> float | None:
        """Signed distance along the constraint's line from its point.

        Parameters
        ----------
        x : array_like, shape (3,)
            m.

        Returns
        -------
        float or None
            m; None unless the constraint is a line.
        """
        if self.constraint_kind != "line":
            return None
        return float((np.asarray(x) - self.constraint_point) @ self.constraint_direction)
