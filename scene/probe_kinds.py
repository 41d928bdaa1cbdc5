"""The [probe] keys of each probe kind, as data: name, unit, default or required, allowed range.

scene.probe_reading reads a [probe] table through the entry of its kind, with no branch on the
kind's name; the kind's law (its physics) is registered under the same name in
trapscape.physics.probe.registry, and a test checks that both list the same kinds. The keys
`kind`, `diameter` and `constraint` are common to every kind (COMMON_KEYS).

A key's value lands in the scene.model.Probe field of the same name (or `field`); a kind added
later whose values have no Probe field finds them in `Probe.extra`.
"""
from __future__ import annotations

from dataclasses import dataclass

from trapscape.scene.reading import REQUIRED

COMMON_KEYS = ("kind", "diameter", "constraint")
UNIT_WORDS = {"T": "tesla"}  # how a unit is spelt out in a sentence


@dataclass(frozen=True)
class Limit:
    """The value must be above `above`; otherwise the error says `fix` ({value} is the value)."""

    above: float
    fix: str


@dataclass(frozen=True)
class ProbeKey:
    """One [probe] key of a kind.

    unit: of the value in the file: "length" (the file's length unit, converted to m), "T",
    "kg/m^3", "" (dimensionless or a word). default: REQUIRED, or the SI value when absent
    (None: optional, no value). reads: how the value is read, one of scene.probe_reading.READERS
    ("number", "remanence", "grade", "orientation").
    """

    name: str
    unit: str
    help: str
    default: object = REQUIRED
    positive: bool = False
    limits: tuple = ()  # of Limit, checked in order on a given value
    example: str = ""
    reads: str = "number"
    field: str = ""  # the Probe field it sets; default: the key's name

    @property
    def target(self) -> str:
        return self.field or self.name


@dataclass(frozen=True)
class ProbeKind:
    """A kind's keys (read in this order), a set of keys of which exactly one must be given,
    and values for fields that no key set."""

    name: str
    help: str
    keys: tuple
    exactly_one_of: tuple = ()
    fallbacks: tuple = ()  # of (field, SI value)

    @property
    def key_names(self) -> tuple:
        return tuple(key.name for key in self.keys)

    def key(self, name: str) -> ProbeKey:
        return next(key for key in self.keys if key.name == name)


PHYSICAL_CHI = Limit(-1.0, "chi = {value:g} is not physical (SI volume susceptibility is above "
                           "-1); a CGS value must be multiplied by 4 pi")
CHI_EXAMPLE = "susceptibility = -4.5e-4"

SOFT = ProbeKind(
    name="soft",
    help="a ferromagnetic sphere (steel): induced M = chi_eff H, optionally saturating",
    keys=(
        ProbeKey("density", "kg/m^3", "mass density; steel by default", default=7850.0,
                 positive=True),
        ProbeKey("susceptibility", "", "SI volume susceptibility chi; chi_eff is ~3 for any "
                 "steel", default=1000.0, example=CHI_EXAMPLE,
                 limits=(PHYSICAL_CHI, Limit(0.0, "a soft (ferromagnetic) probe needs a positive "
                                                  "chi; use kind = \"weak\" for a diamagnet"))),
        ProbeKey("saturation", "T", "saturation polarisation Js; none: linear", default=None,
                 positive=True),
    ))

MAGNET = ProbeKind(
    name="magnet",
    help="a small permanent magnet, free to turn or with a fixed north",
    keys=(
        ProbeKey("density", "kg/m^3", "mass density; default the grade's, else 7500 (sintered "
                 "NdFeB)", default=None, positive=True),
        ProbeKey("grade", "", "a grade of the built-in table or the materials file",
                 default=None, example="grade = \"N42\"", reads="grade", field="remanence"),
        ProbeKey("remanence", "T", "remanence Br", default=None, positive=True,
                 example="remanence = 1.3", reads="remanence"),
        ProbeKey("orientation", "", "\"free\" (turns to align with B) or a fixed north such as "
                 "[0, 0, 1] or \"+z\"", default=None, reads="orientation"),
    ),
    exactly_one_of=("grade", "remanence"),
    fallbacks=(("density", 7500.0),))

WEAK = ProbeKind(
    name="weak",
    help="a weakly magnetic sphere; chi < 0 is a diamagnet (graphite, water, bismuth)",
    keys=(
        ProbeKey("density", "kg/m^3", "mass density", positive=True, example="density = 2200"),
        ProbeKey("susceptibility", "", "SI volume susceptibility chi, negative for diamagnets",
                 example=CHI_EXAMPLE, limits=(PHYSICAL_CHI,)),
    ))

_KINDS: dict[str, ProbeKind] = {kind.name: kind for kind in (SOFT, MAGNET, WEAK)}


def declare(kind: ProbeKind) -> ProbeKind:
    """Add a kind's keys (a new kind, or a test's toy kind); a name is declared once."""
    if _KINDS.get(kind.name, kind) != kind:
        raise ValueError(f"probe kind {kind.name!r} is already declared")
    _KINDS[kind.name] = kind
    return kind


def forget(name: str) -> None:
    """Remove a declared kind (a test's toy kind); unknown names are ignored."""
    _KINDS.pop(name, None)


def names() -> tuple:
    """The declared kinds, in declaration order (soft, magnet, weak first)."""
    return tuple(_KINDS)


def probe_kind(name: str) -> ProbeKind:
    """The declaration of a kind (KeyError for an unknown name: validate with names() first)."""
    return _KINDS[name]


def owners(key: str) -> tuple:
    """The kinds that declare a key."""
    return tuple(name for name, kind in _KINDS.items() if key in kind.key_names)
