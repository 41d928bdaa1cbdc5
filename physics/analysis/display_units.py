"""Display units: what a reader of a table, plot or report sees (mT or gauss, N, kgf or lbf, mm
or in, or the scene's own cm or m). Everything inside stays SI and JSON and CSV outputs stay SI
(lengths in the scene's unit); a view converts only when it prints. One place for the factors
and one parser of --units, so every command, plot and report agrees."""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trapscape.scene.errors import SceneError
from trapscape.scene.units import METRES_PER_UNIT

STANDARD_GRAVITY = 9.80665  # m/s^2, exact by definition (CGPM 1901; NIST SP 811, B.8)
FIELD_UNITS = {"mT": 1e3, "gauss": 1e4}  # per tesla: 1 G = 1e-4 T (exact; NIST SP 811, B.8)
FORCE_UNITS = {"N": 1.0, "kgf": 1.0 / STANDARD_GRAVITY,
               "lbf": 1.0 / (0.45359237 * STANDARD_GRAVITY)}  # 1 lb = 0.45359237 kg (exact, 1959)
# metres per unit (1 in = 25.4 mm exactly); divided by, so the scene's own unit reads exactly as
# the scene's lengths divided by its unit_scale always did
LENGTH_UNITS = dict(METRES_PER_UNIT)
LABELS = {"gauss": "G"}
NAMED = "mT or gauss, N, kgf or lbf, mm, cm, m or in"


def describe_force(newtons) -> str:
    """A force in the unit a reader grasps: 3.2 mN, 0.41 N, 12 uN.

    Parameters
    ----------
    newtons : float or None

    Returns
    -------
    str
    """
    if newtons is None:
        return "no finite holding force"
    magnitude = abs(newtons)
    for factor, unit in ((1.0, "N"), (1e-3, "mN"), (1e-6, "µN"), (1e-9, "nN")):
        if magnitude >= factor or unit == "nN":
            value = newtons / factor
            return f"{value:.2g} {unit}" if abs(value) < 10 else f"{value:.0f} {unit}"
    return f"{newtons:.2g} N"


def plain_number(value: float, digits: int = 3) -> str:
    """`digits` significant digits without an exponent a reader must decode: 0.0000725, 3580.

    Parameters
    ----------
    value : float
    digits : int

    Returns
    -------
    str
    """
    if value == 0 or not 1e-7 <= abs(value) < 1e7:
        return f"{value:.{digits}g}"
    return np.format_float_positional(float(f"{value:.{digits}g}"), trim="-")


@dataclass(frozen=True)
class DisplayUnits:
    """The units a reader sees; ``field``, ``force`` and ``length`` name them."""

    field: str = "mT"
    force: str = "N"
    length: str = "mm"

    def B(self, tesla):
        """A flux density in T, in the display unit.

        Parameters
        ----------
        tesla : float or numpy.ndarray
            In T.

        Returns
        -------
        float or numpy.ndarray
        """
        return tesla * FIELD_UNITS[self.field]

    def F(self, newtons):
        """A force in N, in the display unit.

        Parameters
        ----------
        newtons : float or numpy.ndarray
            In N.

        Returns
        -------
        float or numpy.ndarray
        """
        return newtons * FORCE_UNITS[self.force]

    def L(self, metres):
        """A length in m, in the display unit.

        Parameters
        ----------
        metres : float or numpy.ndarray
            In m.

        Returns
        -------
        float or numpy.ndarray
        """
        return metres / LENGTH_UNITS[self.length]

    def V(self, cubic_metres):
        """A volume in m^3, in the display length unit cubed.

        Parameters
        ----------
        cubic_metres : float or numpy.ndarray

        Returns
        -------
        float or numpy.ndarray
        """
        return cubic_metres / LENGTH_UNITS[self.length] ** 3

    def L_from(self, values, unit: str):
        """Lengths given in `unit` (a scene's, as its JSON holds them), in the display unit;
        unchanged when that is the display unit.

        Parameters
        ----------
        values : float or numpy.ndarray
        unit : str
            mm, cm, m or in.

        Returns
        -------
        float or numpy.ndarray
        """
        if unit == self.length:
            return values
        return self.L(values * LENGTH_UNITS[unit])

    def force_text(self, newtons: float) -> str:
        """A force as a reader takes it in: '5 mN' or '0.41 N' in newtons (the prefix chosen),
        three significant digits in kgf or lbf.

        Parameters
        ----------
        newtons : float

        Returns
        -------
        str
        """
        if newtons is None or self.force == "N":
            return describe_force(newtons)
        return f"{plain_number(self.F(newtons))} {self.force}"

    def field_text(self, tesla: float) -> str:
        """'0.5 mT' or '5 G'.

        Parameters
        ----------
        tesla : float

        Returns
        -------
        str
        """
        return f"{self.B(tesla):.3g} {self.field_label}"

    def length_text(self, metres: float) -> str:
        """'44.4 mm' or '1.75 in'.

        Parameters
        ----------
        metres : float

        Returns
        -------
        str
        """
        return f"{self.L(metres):.3g} {self.length_label}"

    @property
    def field_label(self) -> str:
        return LABELS.get(self.field, self.field)

    @property
    def force_label(self) -> str:
        return self.force

    @property
    def length_label(self) -> str:
        return self.length

    def words(self) -> str:
        """'mT, N, mm': what the report says its units are."""
        return f"{self.field_label}, {self.force_label}, {self.length_label}"

    # -- derived quantities: SI (as always printed) while the force is in newtons -----------

    @property
    def strong_field_label(self) -> str:
        """A remanence or a plate's flux density: T, or kG when the reader reads gauss."""
        return "kG" if self.field == "gauss" else "T"

    def strong_B(self, tesla):
        """A flux density of the order of a tesla in `strong_field_label` (T, or kG: 1 kG =
        0.1 T).

        Parameters
        ----------
        tesla : float or numpy.ndarray

        Returns
        -------
        float or numpy.ndarray
        """
        return tesla * 10.0 if self.field == "gauss" else tesla

    @property
    def stiffness_label(self) -> str:
        """N/m while the force is in newtons, else the force per the length unit (lbf/in)."""
        return "N/m" if self.force == "N" else f"{self.force}/{self.length}"

    def stiffness(self, newtons_per_metre):
        """A stiffness in N/m, in `stiffness_label`.

        Parameters
        ----------
        newtons_per_metre : float or numpy.ndarray

        Returns
        -------
        float or numpy.ndarray
        """
        if self.force == "N":
            return newtons_per_metre
        return self.F(newtons_per_metre) / self.L(1.0)

    @property
    def torque_label(self) -> str:
        """N m while the force is in newtons, else the force times the length unit (lbf in)."""
        return "N m" if self.force == "N" else f"{self.force} {self.length}"

    def torque(self, newton_metres):
        """A torque in N m, in `torque_label`.

        Parameters
        ----------
        newton_metres : float or numpy.ndarray

        Returns
        -------
        float or numpy.ndarray
        """
        if self.force == "N":
            return newton_metres
        return self.F(newton_metres) * self.L(1.0)


def scene_units(scene) -> DisplayUnits:
    """What tables and plots showed before --units: the scene's length unit, N and mT.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene

    Returns
    -------
    DisplayUnits
    """
    return DisplayUnits(length=scene.units)


def parse_units(text: str | None, default_length: str = "mm") -> DisplayUnits:
    """--units 'gauss,lbf,in' (any order, any subset) -> DisplayUnits.

    Parameters
    ----------
    text : str or None
        Comma-separated unit names; None or "" keeps the defaults.
    default_length : str
        The length unit when none is named (the scene's).

    Returns
    -------
    DisplayUnits

    Raises
    ------
    SceneError
        A name that is no display unit, or two of one kind.
    """
    chosen = {"field": "mT", "force": "N",
              "length": default_length if default_length in LENGTH_UNITS else "mm"}
    named = set()
    for item in (text or "").replace(" ", "").split(","):
        if not item:
            continue
        kind = _kind_of(item)
        if kind is None:
            raise SceneError(f"--units {text}: {item!r} is not a display unit; choose from "
                             f"{NAMED}, e.g. --units gauss,lbf,in.")
        if kind in named:
            raise SceneError(f"--units {text}: two {kind} units; give one of each kind.")
        named.add(kind)
        chosen[kind] = _canonical(item)
    return DisplayUnits(**chosen)


def _kind_of(name: str):
    for kind, table in (("field", FIELD_UNITS), ("force", FORCE_UNITS), ("length", LENGTH_UNITS)):
        if _canonical(name) in table:
            return kind
    return None


def _canonical(name: str) -> str:
    lowered = name.lower()
    aliases = {"mt": "mT", "g": "gauss", "gauss": "gauss", "n": "N", "kgf": "kgf", "lbf": "lbf",
               "mm": "mm", "cm": "cm", "m": "m", "in": "in", "inch": "in"}
    return aliases.get(lowered, name)
