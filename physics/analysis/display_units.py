"""Display units: what a reader of a table, plot or report sees (mT or gauss, N, kgf or lbf, mm
or in). Everything inside stays SI and JSON outputs stay SI; a view converts only when it prints.
One place for the factors, so a report, a plot and a table agree."""
from __future__ import annotations

from dataclasses import dataclass

from trapscape.physics.analysis.trap_words import describe_force
from trapscape.scene.errors import SceneError

STANDARD_GRAVITY = 9.80665  # m/s^2, exact by definition (CGPM 1901)
FIELD_UNITS = {"mT": 1e3, "gauss": 1e4}  # per tesla: 1 G = 1e-4 T (exact, CGS definition)
FORCE_UNITS = {"N": 1.0, "kgf": 1.0 / STANDARD_GRAVITY,
               "lbf": 1.0 / (0.45359237 * STANDARD_GRAVITY)}  # 1 lb = 0.45359237 kg (exact, 1959)
LENGTH_UNITS = {"mm": 1e3, "in": 1.0 / 0.0254}  # per metre: 1 in = 25.4 mm (exact, 1959)
LABELS = {"gauss": "G"}


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
        return metres * LENGTH_UNITS[self.length]

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
        if self.force == "N":
            return describe_force(newtons)
        return f"{self.F(newtons):.3g} {self.force}"

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


def parse_units(text: str | None, default_length: str = "mm") -> DisplayUnits:
    """--units 'gauss,lbf,in' (any order, any subset) -> DisplayUnits.

    Parameters
    ----------
    text : str or None
        Comma-separated unit names; None or "" keeps the defaults.
    default_length : str
        The length unit when none is named (the scene's, when it is mm or in).

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
                             f"mT or gauss, N, kgf or lbf, mm or in, e.g. --units gauss,lbf,in.")
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
               "mm": "mm", "in": "in", "inch": "in"}
    return aliases.get(lowered, name)
