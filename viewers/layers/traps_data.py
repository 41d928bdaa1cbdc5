"""The trap report as the layers see it: equilibria in the scene's unit, with their class and
holding force. Viewers draw what physics/traps.py computed; nothing here does field math."""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

CLASSES = ("stable", "saddle", "unstable", "marginal")


@dataclass(frozen=True)
class ViewEquilibrium:
    number: int  # 1-based, in the report's order
    position: np.ndarray  # (3,) scene unit
    kind: str  # stable | saddle | unstable | marginal
    escape_force_N: float | None
    contact: str | None  # the surface it is pressed against, or None
    source: object  # the physics record it came from
    closed_in: bool = False  # a well with no way out inside the search box


def find_report(ctx):
    """Run physics.traps.search.find_traps on the context's field model; None when it cannot."""
    try:
        from trapscape.physics.traps.search import find_traps
    except ImportError:
        ctx.note("traps: physics/traps.py is not available yet, so no equilibria are drawn.")
        return None
    return find_traps(ctx.model, ctx.scene)


def _field(record, *names, default=None):
    for name in names:
        if isinstance(record, dict) and name in record:
            return record[name]
        if hasattr(record, name):
            return getattr(record, name)
    return default


def _finite_or_none(value):
    if value is None:
        return None
    value = float(value)
    return value if np.isfinite(value) else None


def equilibria_of(ctx) -> list:
    report = ctx.trap_report
    if report is None:
        return []
    records = _field(report, "equilibria", default=[]) or []
    result = []
    for number, record in enumerate(records, start=1):
        position_m = np.asarray(_field(record, "position", "position_m"), dtype=float)
        kind = str(_field(record, "classification", "kind", "cls", "class_", "klass", "class",
                          default="unstable"))
        contact = _field(record, "contact")
        surface = _field(contact, "surface") if contact is not None else None
        escape = _field(record, "escape")
        force = _field(escape, "force_N") if escape is not None else _field(record, "escape_force_N")
        exit_kind = _field(escape, "exit") if escape is not None else None
        result.append(ViewEquilibrium(
            number=number, position=ctx.to_units(position_m), kind=kind,
            escape_force_N=_finite_or_none(force), contact=surface, source=record,
            closed_in=escape is not None and exit_kind is None,
        ))
    return result


def headline_of(equilibria):
    """The firmest stable equilibrium, else a marginal one, else the first; None if none."""
    if not equilibria:
        return None
    for kind in ("stable", "marginal"):
        chosen = [e for e in equilibria if e.kind == kind]
        if chosen:
            return max(chosen, key=lambda e: e.escape_force_N or 0.0)
    return equilibria[0]


def describe_force(newtons) -> str:
    """A force in the unit a reader grasps: 3.2 mN, 0.41 N, 12 uN."""
    if newtons is None:
        return "no finite holding force"
    magnitude = abs(newtons)
    for factor, unit in ((1.0, "N"), (1e-3, "mN"), (1e-6, "µN"), (1e-9, "nN")):
        if magnitude >= factor or unit == "nN":
            return f"{newtons / factor:.2g} {unit}" if newtons / factor < 10 else f"{newtons / factor:.0f} {unit}"
    return f"{newtons:.2g} N"


def describe_position(position, unit: str, scale: float | None = None) -> str:
    """'(21.0, 0, -0.2) mm': decimals enough for a thousandth of `scale` (the scene's size)."""
    decimals = 1 if not scale else int(np.clip(np.ceil(2.0 - np.log10(scale)), 0, 4))
    tiny = 0.5 * 10.0**-decimals
    text = ", ".join(f"{v:.{decimals}f}" if abs(v) >= tiny else "0" for v in position)
    return f"({text}) {unit}"
