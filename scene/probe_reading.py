"""A [probe] table -> scene.model.Probe, read through its kind's key declaration
(scene.probe_kinds): one generic reader for every kind, each problem one SceneError sentence."""
from __future__ import annotations

from dataclasses import fields
from types import MappingProxyType

from trapscape.scene import probe_kinds, reading
from trapscape.scene.errors import SceneError
from trapscape.scene.grades import find_grade
from trapscape.scene.model import Probe, frozen_array
from trapscape.scene.parts import AXIS_WORDS, check_remanence

PROBE_FIELDS = frozenset(f.name for f in fields(Probe)) - {"extra"}


def read_probe(ctx, table: dict, grades: dict, where: str) -> Probe:
    """The probe of a [probe] table (lengths in m), validated against its kind's keys.

    where: "scene.toml, [probe]" for messages; grades: the grade table for a `grade` key.
    """
    kind = reading.word(table, "kind", where, probe_kinds.names())
    declared = probe_kinds.probe_kind(kind)
    where = f"{where} ({kind})"
    _refuse_keys_of_other_kinds(table, declared, where)
    reading.check_keys(table, probe_kinds.COMMON_KEYS + declared.key_names, where)
    values = {"kind": kind,
              "diameter": reading.number(ctx, table, "diameter", where, length=True,
                                         positive=True, example="diameter = 2")}
    _check_exactly_one(table, declared, where)
    for key in declared.keys:
        if key.name not in table:
            if key.default is reading.REQUIRED:
                reading.number(ctx, table, key.name, where, example=key.example)  # says missing
            values.setdefault(key.target, key.default)
            continue
        value, fills = READERS[key.reads](ctx, table, key, grades, where)
        values[key.target] = value
        for name, filled in fills.items():
            if values.get(name) is None:
                values[name] = filled
    for name, value in declared.fallbacks:
        if values.get(name) is None:
            values[name] = value
    return Probe(**{k: v for k, v in values.items() if k in PROBE_FIELDS},
                 extra=MappingProxyType({k: v for k, v in values.items()
                                         if k not in PROBE_FIELDS}))


def _refuse_keys_of_other_kinds(table, declared, where):
    for key in table:
        owners = probe_kinds.owners(key)
        if key not in declared.key_names and owners:
            raise SceneError(f"{where}: '{key}' is not used by a {declared.name} probe (it is "
                             f"for {_and_list(owners)} probes); remove it or change the kind.")


def _check_exactly_one(table, declared, where):
    if not declared.exactly_one_of:
        return
    if sum(name in table for name in declared.exactly_one_of) != 1:
        choices = " or ".join(_example_with_unit(declared.key(name))
                              for name in declared.exactly_one_of)
        raise SceneError(f"{where}: give exactly one of {choices} for a {declared.name} probe.")


def _example_with_unit(key) -> str:
    unit = probe_kinds.UNIT_WORDS.get(key.unit, key.unit)
    return f"{key.example} ({unit})" if unit else key.example


def _and_list(names) -> str:
    names = list(names)
    return names[0] if len(names) == 1 else ", ".join(names[:-1]) + " and " + names[-1]


# -- value readers: (value for the key's field, {other field: value if still unset}) ----------

def _number(ctx, table, key, grades, where):
    value = reading.number(ctx, table, key.name, where, example=key.example,
                           length=key.unit == "length", positive=key.positive)
    for limit in key.limits:
        if value <= limit.above:
            raise SceneError(f"{where}, {key.name}: {limit.fix.format(value=value)}.")
    return value, {}


def _remanence(ctx, table, key, grades, where):
    value, _ = _number(ctx, table, key, grades, where)
    check_remanence(value, f"{where}, {key.name}")
    return value, {}


def _grade(ctx, table, key, grades, where):
    grade = find_grade(table[key.name], grades, f"{where}, {key.name}")
    return grade.remanence, {"density": grade.density}


def _orientation(ctx, table, key, grades, where):
    """None when free to turn, else the fixed north as a unit vector (3,)."""
    value = table[key.name]
    if value == "free":
        return None, {}
    if isinstance(value, str) and value.strip().lower() in AXIS_WORDS:
        return frozen_array(AXIS_WORDS[value.strip().lower()], (3,)), {}
    if isinstance(value, list):
        return frozen_array(reading.unit_vector(ctx, table, key.name, where), (3,)), {}
    raise SceneError(f"{where}, {key.name}: must be \"free\" (the probe turns to align) or a "
                     f"fixed north such as [0, 0, 1] or \"+z\", got {value!r}.")


READERS = {"number": _number, "remanence": _remanence, "grade": _grade,
           "orientation": _orientation}
