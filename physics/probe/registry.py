"""The probe laws, one class per kind, keyed by the kind's name.

A new probe kind = two entries and a test, no edit elsewhere:
1. its keys: one ProbeKind in trapscape.scene.probe_kinds (name, unit, default or required,
   allowed range, help of each [probe] key; a value with no field of scene.model.Probe lands in
   ``Probe.extra``), added with ``declare``;
2. its law: a subclass of physics.probe.law.ProbeLaw in physics/probe/kinds/<kind>.py with
   ``kind = "<name>"``, ``from_probe``, ``magnetic_energy`` and ``magnetic_force`` (each formula
   with its reference), decorated with ``@register`` and imported by physics/probe/kinds/;
   override the ClassVars and properties of ProbeLaw that differ (saturates, Earnshaw,
   finite-size model, wording);
3. tests/physics/probe/test_<kind>.py against a published result; the registry test already
   checks that both registries list it.
"""
from __future__ import annotations

import importlib

BUILT_IN_KINDS = "trapscape.physics.probe.kinds"  # importing it registers soft, magnet, weak

_LAWS: dict[str, type] = {}


def register(law: type) -> type:
    """Register a law class under its ``kind``; usable as a class decorator.

    Parameters
    ----------
    law : type
        A subclass of ProbeLaw with a non-empty ``kind``.

    Returns
    -------
    type
        ``law`` itself.
    """
    # duck-typed, so that this module needs nothing from physics.probe.law (which imports it)
    if not (isinstance(law, type) and getattr(law, "kind", "") and hasattr(law, "from_probe")):
        raise ValueError(f"{law!r} is not a ProbeLaw subclass with a kind name")
    if _LAWS.get(law.kind, law) is not law:
        raise ValueError(f"probe kind {law.kind!r} is already registered by "
                         f"{_LAWS[law.kind].__qualname__}")
    _LAWS[law.kind] = law
    return law


def unregister(kind: str) -> None:
    """Remove a kind (a test's toy kind); unknown names are ignored.

    Parameters
    ----------
    kind : str
        The kind's name.
    """
    _LAWS.pop(kind, None)


def _laws() -> dict:
    importlib.import_module(BUILT_IN_KINDS)
    return _LAWS


def kinds() -> tuple:
    """The registered kind names, in registration order (soft, magnet, weak first)."""
    return tuple(_laws())


def law_class(kind: str) -> type:
    """The law class of a kind.

    Parameters
    ----------
    kind : str
        A registered kind name.

    Returns
    -------
    type
        The ProbeLaw subclass.

    Raises
    ------
    ValueError
        When no law is registered under that name (scene loading has already refused such a
        scene, so this is a programming error).
    """
    laws = _laws()
    if kind not in laws:
        raise ValueError(f"no probe law is registered for kind {kind!r}; known kinds: "
                         f"{', '.join(laws)}")
    return laws[kind]
