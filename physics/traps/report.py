"""What the trap search hands back: equilibria, their contacts, escape figures and wells, the scan
grid and the finite-probe summary (DESIGN.md, Physics and the `traps` JSON). Plain frozen data."""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trapscape.physics.traps.notes import CAUTION


@dataclass(frozen=True, eq=False)
class Contact:
    """The probe resting pressed against a magnet or a plate.

    Attributes
    ----------
    surface : str
        Name of the magnet or plate the probe rests on.
    normal_force_N : float
        Push of the surface on the probe, N (> 0).
    normal : ndarray, shape (3,)
        Unit vector from the surface towards the probe's centre.
    """

    surface: str
    normal_force_N: float
    normal: np.ndarray


@dataclass(frozen=True, eq=False)
class Escape:
    """The lowest way out of a well.

    Attributes
    ----------
    energy_J : float or None
        Lowest barrier out of the well, J; None when the well is closed in.
    force_N : float or None
        Largest projected force met on the escape path up to the barrier, N.
    exit : str or None
        "box" | "magnet" | "another well", or None (closed in: no escape).
    pass_position : ndarray, shape (3,)
        Where the barrier is, m (the refined saddle when one is there).
    path : ndarray, shape (P, 3)
        Grid points from the well to the exit, m.
    exit_at : str or None
        Where the way out ends: a box face ("box face +x"), the part the probe lands on, or the
        well (or lower ground) it falls into over the pass; None when closed in.
    exit_position : ndarray, shape (3,) or None
        m: the point on the box face, the contact with the part, or the other well's bottom.
    """

    energy_J: float
    force_N: float
    exit: str | None
    pass_position: np.ndarray
    path: np.ndarray
    exit_at: str | None = None
    exit_position: np.ndarray | None = None


@dataclass(frozen=True, eq=False)
class RuleCheck:
    """The finite-size model's quadrature rule at an equilibrium and its error estimate.

    Attributes
    ----------
    rule : str
        The rule the equilibrium was solved with (chosen from its clearance).
    check_rule : str
        A coarser rule of the same model.
    energy_difference_J : float
        |U(rule) - U(check_rule)| there, J: an estimate (from above, for a converging rule) of
        the rule's truncation error.
    stiffness_difference_N_per_m : tuple of float
        |k(rule) - k(check_rule)| along each of the equilibrium's directions, N/m.
    """

    rule: str
    check_rule: str
    energy_difference_J: float
    stiffness_difference_N_per_m: tuple


@dataclass(frozen=True, eq=False)
class Well:
    """The flooded region below the barrier (for the viewers).

    Attributes
    ----------
    cells : ndarray of bool, shape (N,)
        Over the flattened scan grid (reshape to ScanGrid.shape).
    interval_m : tuple of two floats or None
        Line only: (t_min, t_max) along the line from the constraint's point, m.
    """

    cells: np.ndarray
    interval_m: tuple | None


@dataclass(frozen=True, eq=False)
class Equilibrium:
    """One equilibrium of the probe, classified (DESIGN.md, Physics).

    Attributes
    ----------
    position : ndarray, shape (3,)
        m.
    coordinate_m : float or None
        Line: signed distance along the line from the constraint's point, m.
    energy_J : float
        The probe's energy there, J (gravity included).
    classification : str
        stable | saddle | unstable | marginal.
    stable_directions : int
        Eigenvalues above the marginal share of the largest.
    free_directions : int
        Directions the probe may move in here (contact: along the surface).
    stiffness_N_per_m : tuple of float or None
        Ascending eigenvalues of the projected Hessian, N/m (None: undefined).
    directions : ndarray, shape (free_directions, 3)
        Unit eigenvectors, in the order of the stiffnesses.
    frequency_Hz : tuple of float or None
        sqrt(k / m_p) / (2 pi), Hz; None where k <= 0 or undefined.
    B_T : ndarray, shape (3,)
        The magnets' field at the centre, T.
    force_N : ndarray, shape (3,)
        Total force on the probe, N (balanced by the constraint or the contact).
    contact : Contact or None
    escape : Escape or None
    well : Well or None
    family_size : int
        > 1: one of a connected set of marginal equilibria (a circle).
    finite_probe_correction : float or None
        Relative change of the magnetic energy by the probe's finite size.
    finite_probe_shift_m : float or None
        How far the finite size moved the point, m.
    note : str
    rule_check : RuleCheck or None
        The finite-size model's rule there and its error estimate (None: point model).
    family : int
        The number of the family it belongs to (TrapReport.families), 0 before families are
        formed.
    """

    position: np.ndarray
    coordinate_m: float | None
    energy_J: float
    classification: str
    stable_directions: int
    free_directions: int
    stiffness_N_per_m: tuple
    directions: np.ndarray
    frequency_Hz: tuple
    B_T: np.ndarray
    force_N: np.ndarray
    contact: Contact | None = None
    escape: Escape | None = None
    well: Well | None = None
    family_size: int = 1
    finite_probe_correction: float | None = None
    finite_probe_shift_m: float | None = None
    note: str = ""
    rule_check: RuleCheck | None = None
    family: int = 0


@dataclass(frozen=True, eq=False)
class Circle:
    """A circle of equilibria about the scene's axis of rotation.

    Attributes
    ----------
    radius_m : float
        Distance of the members from the axis, m (their mean).
    centre : ndarray, shape (3,)
        The circle's centre on the axis, m.
    axis : ndarray, shape (3,)
        Unit vector along the axis.
    """

    radius_m: float
    centre: np.ndarray
    axis: np.ndarray


@dataclass(frozen=True, eq=False)
class Family:
    """Equilibria that are one answer: images of each other under the scene's symmetry, points
    of one ring about its axis, or neighbouring points of one contact curve.

    Attributes
    ----------
    number : int
        1-based, in the order of the report's equilibria (the lowest member first).
    classification : str
        The members' class (all equal).
    members : tuple of int
        0-based indices into TrapReport.equilibria.
    representative : int
        0-based index of the member shown for the family: the firmest (largest escape force),
        else the first.
    kind : str
        single | circle | symmetric set | contact curve.
    circle : Circle or None
        For kind circle: the circle of contact (or of equilibria) about the axis.
    escape_force_N : tuple of two floats or None
        (smallest, largest) escape force over the members, N.
    energy_J : tuple of two floats
        (lowest, highest) energy over the members, J.
    surfaces : tuple of str
        The parts or plates the members rest on (empty for free equilibria).
    by_symmetry : bool
        Some members are images of others under the scene's symmetry.
    """

    number: int
    classification: str
    members: tuple
    representative: int
    kind: str
    circle: Circle | None
    escape_force_N: tuple | None
    energy_J: tuple
    surfaces: tuple
    by_symmetry: bool = False


@dataclass(frozen=True, eq=False)
class ScanGrid:
    """The point-model energy and force sampled on the grid restricted to the constraint.

    Attributes
    ----------
    kind : str
        line | plane | free.
    origin : ndarray, shape (3,)
        The point with index 0, m.
    axes : ndarray, shape (k, 3)
        Unit vectors of the grid axes (the allowed directions).
    spacing : float
        m.
    shape : tuple of k ints
        The arrays below are flattened in C order.
    points : ndarray, shape (N, 3)
        m.
    inside_box : ndarray of bool, shape (N,)
    admissible : ndarray of bool, shape (N,)
        Inside the box and clearance >= d/2.
    energy_J : ndarray, shape (N,)
        Point-model energy, J (0 where inadmissible).
    force_N : ndarray, shape (N, 3)
        Point-model force, N (0 where inadmissible).
    B_T : ndarray, shape (N, 3)
        T.
    line_start_m : float
        Line: coordinate of the first sample from the constraint's point, m.
    force_is_exact : bool
        False: force_N from differences of energy_J on the grid.
    """

    kind: str
    origin: np.ndarray
    axes: np.ndarray
    spacing: float
    shape: tuple
    points: np.ndarray
    inside_box: np.ndarray
    admissible: np.ndarray
    energy_J: np.ndarray
    force_N: np.ndarray
    B_T: np.ndarray
    line_start_m: float = 0.0
    force_is_exact: bool = True

    @property
    def line_coordinates_m(self) -> np.ndarray | None:
        """Line: each sample's signed distance along the line from the constraint's point, m,
        shape (N,); None for other grids."""
        if self.kind != "line":
            return None
        return self.line_start_m + self.spacing * np.arange(len(self.points))


@dataclass(frozen=True, eq=False)
class FiniteProbe:
    """Whether and how the probe's finite size entered.

    Attributes
    ----------
    used : bool
        The equilibria were re-solved with the finite size.
    model : str
        What the finite-size model is.
    threshold : float
        Relative energy change above which it is used.
    max_relative_correction : float
        Largest |U_finite - U_point| / |U_point| over the equilibria.
    note : str
    """

    used: bool
    model: str
    threshold: float
    max_relative_correction: float
    note: str


@dataclass(frozen=True, eq=False)
class TrapReport:
    """Everything find_traps found.

    Attributes
    ----------
    probe_kind : str
        soft | magnet | weak.
    constraint_kind : str
        free | line | plane.
    free_directions : int
    equilibria : tuple of Equilibrium
        Sorted along the line, else by energy.
    grid : ScanGrid
    finite_probe : FiniteProbe
    earnshaw_note : str or None
    notes : tuple of str
    marginal_ratio : float
        The ratio the equilibria were classified with (classify.rests needs it).
    caution : str
    families : tuple of Family
        One per family, in the order of their first members.
    symmetry : physics.traps.symmetry.Symmetry or None
        The scene's symmetry the families were formed with.
    """

    probe_kind: str
    constraint_kind: str
    free_directions: int
    equilibria: tuple
    grid: ScanGrid
    finite_probe: FiniteProbe
    earnshaw_note: str | None
    notes: tuple
    marginal_ratio: float
    caution: str = CAUTION
    families: tuple = ()
    symmetry: object = None
