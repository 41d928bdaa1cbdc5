"""Magnet grades: remanence and the figures a designer checks next to it.

SOURCE of the built-in table: typical ranges printed in magnet suppliers' datasheets, written
down FROM MEMORY (not copied from a standard). They follow the usual naming of sintered NdFeB
(the number is (BH)max in MGOe; the suffix sets the coercivity class and the working
temperature), of SmCo ("YX"/"YXG" classes), of hard ferrite (Y30, Y35; C8 in the older US
naming) and of compression-bonded NdFeB (BNP). They are of the same order as the ranges of
IEC 60404-8-1, but have NOT been checked against it: for a design, use your supplier's data
(put it in a materials file, see below).

Nominal remanence: the MIDDLE of the range (lowest and highest Br a supplier guarantees at
20 °C). The middle is the best single guess for a part bought without a measured Br; the lower
end is the conservative choice for a holding force, and can be had with a materials file.

Per grade: remanence_range_T (Br at 20 °C), coercivity_kA_per_m (intrinsic HcJ, minimum),
temperature_coefficient_percent_per_K (reversible coefficient of Br, 20-100 °C),
coercivity_temperature_coefficient_percent_per_K (reversible coefficient of HcJ, 20-100 °C: from
memory of supplier datasheets, like the rest; hard ferrite's is positive, its HcJ falls on cooling),
max_temperature_C (maximum working temperature, for a part of moderate load line, as suppliers
quote it), density_kg_per_m3.

A user's materials file (scene key `materials = "my_grades.toml"`) adds or overrides grades:

    [grade.ACME-N42]
    source = "ACME datasheet NdFeB-2024 rev. B"     # required: where the numbers come from
    remanence = 1.29                                  # T; or remanence_range = [1.28, 1.32]
    coercivity_kA_per_m = 955                         # optional, like the keys below
    temperature_coefficient_percent_per_K = -0.12
    coercivity_temperature_coefficient_percent_per_K = -0.60
    max_temperature_C = 80
    density = 7500                                    # kg/m^3
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path

from trapscape.scene.errors import SceneError
from trapscape.scene.names import did_you_mean
from trapscape.scene.tomlfile import parse_toml

BUILT_IN_SOURCE = "typical supplier datasheet ranges, from memory (not checked against IEC 60404-8-1)"


@dataclass(frozen=True)
class Grade:
    name: str
    family: str
    remanence: float  # T, nominal (middle of the range unless the source gives one value)
    remanence_range: tuple | None  # (low, high) T
    coercivity: float | None  # intrinsic HcJ, A/m, minimum
    temperature_coefficient: float | None  # reversible coefficient of Br, percent per kelvin
    max_temperature: float | None  # degrees Celsius
    density: float | None  # kg/m^3
    source: str
    coercivity_temperature_coefficient: float | None = None  # reversible, of HcJ, percent per K


# Sintered NdFeB: Br range (T) by energy class; the same range for every coercivity suffix
# (a simplification: suppliers' high-coercivity variants often sit 0.01-0.02 T lower).
NDFEB_REMANENCE = {
    "N35": (1.17, 1.22), "N38": (1.22, 1.25), "N40": (1.25, 1.28), "N42": (1.28, 1.32),
    "N45": (1.32, 1.38), "N48": (1.38, 1.42), "N50": (1.40, 1.45), "N52": (1.43, 1.48),
    "N55": (1.46, 1.51),
}
# suffix -> (HcJ min kA/m, max working temperature C, classes made with it)
NDFEB_SUFFIXES = {
    "": (955, 80, ("N35", "N38", "N40", "N42", "N45")),
    "M": (1114, 100, ("N35", "N38", "N40", "N42", "N45", "N48", "N50")),
    "H": (1353, 120, ("N35", "N38", "N40", "N42", "N45", "N48")),
    "SH": (1592, 150, ("N35", "N38", "N40", "N42", "N45")),
    "UH": (1990, 180, ("N35", "N38", "N40")),
    "EH": (2388, 200, ("N35", "N38")),
}
NDFEB_HIGH_ENERGY = {"N48": 876, "N50": 876, "N52": 876, "N55": 876}  # plain grades, HcJ kA/m

# Reversible temperature coefficient of HcJ (beta, %/K, 20-100 °C), by family: typical datasheet
# values FROM MEMORY of supplier datasheets (sintered NdFeB -0.55 to -0.65 by class, SmCo5 about
# -0.30, Sm2Co17 -0.20 to -0.25, hard ferrite +0.2 to +0.4, bonded NdFeB about -0.40).
COERCIVITY_COEFFICIENT = {"sintered NdFeB": -0.60, "SmCo5": -0.30, "Sm2Co17": -0.22,
                          "hard ferrite": 0.30, "bonded NdFeB": -0.40}

# name: (family, Br range T, HcJ min kA/m, alpha(Br) %/K, max temperature C, density kg/m^3)
OTHER_GRADES = {
    "SmCo5-YX18": ("SmCo5", (0.85, 0.90), 1433, -0.04, 250, 8300),
    "SmCo5-YX20": ("SmCo5", (0.88, 0.93), 1433, -0.04, 250, 8300),
    "SmCo5-YX22": ("SmCo5", (0.92, 0.96), 1433, -0.04, 250, 8300),
    "Sm2Co17-YXG26": ("Sm2Co17", (1.02, 1.05), 1433, -0.03, 300, 8400),
    "Sm2Co17-YXG28": ("Sm2Co17", (1.03, 1.08), 1433, -0.03, 300, 8400),
    "Sm2Co17-YXG30": ("Sm2Co17", (1.08, 1.10), 1433, -0.03, 300, 8400),
    "Sm2Co17-YXG32": ("Sm2Co17", (1.10, 1.13), 1433, -0.03, 300, 8400),
    "Y30": ("hard ferrite", (0.37, 0.40), 180, -0.20, 250, 4900),
    "Y35": ("hard ferrite", (0.40, 0.42), 220, -0.20, 250, 4900),
    "C8": ("hard ferrite", (0.38, 0.40), 240, -0.20, 250, 4900),
    "BNP-8": ("bonded NdFeB", (0.60, 0.65), 640, -0.13, 120, 6000),
    "BNP-10": ("bonded NdFeB", (0.66, 0.70), 640, -0.13, 120, 6000),
    "BNP-12": ("bonded NdFeB", (0.74, 0.80), 640, -0.13, 120, 6000),
}
ALIASES = {  # short names people write
    "YX18": "SmCo5-YX18", "YX20": "SmCo5-YX20", "YX22": "SmCo5-YX22",
    "YXG26": "Sm2Co17-YXG26", "YXG28": "Sm2Co17-YXG28", "YXG30": "Sm2Co17-YXG30",
    "YXG32": "Sm2Co17-YXG32", "SmCo5": "SmCo5-YX20", "Sm2Co17": "Sm2Co17-YXG28",
    "ferrite": "Y30",
}


def _ranged(name, family, low_high, coercivity_kA, alpha, t_max, density, source=BUILT_IN_SOURCE):
    low, high = low_high
    return Grade(name=name, family=family, remanence=round((low + high) / 2, 4),
                 remanence_range=(low, high), coercivity=coercivity_kA * 1e3,
                 temperature_coefficient=alpha, max_temperature=t_max, density=density,
                 source=source, coercivity_temperature_coefficient=COERCIVITY_COEFFICIENT[family])


def built_in_grades() -> dict:
    """Upper-case name -> Grade for the built-in table."""
    table = {}
    for suffix, (coercivity, t_max, classes) in NDFEB_SUFFIXES.items():
        for energy in classes:
            table[energy + suffix] = _ranged(energy + suffix, "sintered NdFeB",
                                             NDFEB_REMANENCE[energy], coercivity, -0.12, t_max,
                                             7500)
    for energy, coercivity in NDFEB_HIGH_ENERGY.items():
        table[energy] = _ranged(energy, "sintered NdFeB", NDFEB_REMANENCE[energy], coercivity,
                                -0.12, 80, 7500)
    for name, (family, low_high, coercivity, alpha, t_max, density) in OTHER_GRADES.items():
        table[name] = _ranged(name, family, low_high, coercivity, alpha, t_max, density)
    for alias, target in ALIASES.items():
        table[alias] = table[target]
    return {name.upper(): grade for name, grade in table.items()}


GRADE_KEYS = ("source", "remanence", "remanence_range", "coercivity_kA_per_m",
              "temperature_coefficient_percent_per_K",
              "coercivity_temperature_coefficient_percent_per_K", "max_temperature_C", "density",
              "family")


def load_materials(path: Path, raw: bytes, shown: str) -> dict:
    """Upper-case name -> Grade from a user's materials file (already read as bytes)."""
    document = parse_toml(raw, shown)
    unknown = [k for k in document if k != "grade"]
    if unknown:
        raise SceneError(f"{shown}: unknown key '{unknown[0]}'{did_you_mean(unknown[0], ['grade'])}"
                         f"; a materials file holds only [grade.NAME] tables.")
    grades = document.get("grade", {})
    if not isinstance(grades, dict) or not grades:
        raise SceneError(f"{shown}: no [grade.NAME] tables; add one per grade, each with "
                         f"remanence and source.")
    return {str(name).upper(): _user_grade(str(name), entry, f"{shown}, [grade.{name}]")
            for name, entry in grades.items()}


def _user_grade(name: str, entry, where: str) -> Grade:
    if not isinstance(entry, dict):
        raise SceneError(f"{where}: must be a table; write [grade.{name}] and its keys below it.")
    for key in entry:
        if key not in GRADE_KEYS:
            raise SceneError(f"{where}: unknown key '{key}'{did_you_mean(key, GRADE_KEYS)}; "
                             f"allowed: {', '.join(GRADE_KEYS)}.")
    source = entry.get("source")
    if not isinstance(source, str) or not source.strip():
        raise SceneError(f"{where}: 'source' is missing; say where the numbers come from, e.g. "
                         f"source = \"supplier datasheet, rev. B\".")
    if ("remanence" in entry) == ("remanence_range" in entry):
        raise SceneError(f"{where}: give exactly one of remanence = 1.3 or remanence_range = "
                         f"[1.28, 1.32] (tesla).")
    if "remanence" in entry:
        remanence = _positive(entry["remanence"], f"{where}, remanence")
        low_high = None
    else:
        pair = entry["remanence_range"]
        if not isinstance(pair, list) or len(pair) != 2:
            raise SceneError(f"{where}, remanence_range: must be two numbers [low, high] in "
                             f"tesla.")
        low, high = (_positive(v, f"{where}, remanence_range") for v in pair)
        if low > high:
            raise SceneError(f"{where}, remanence_range: low {low} is above high {high}; "
                             f"swap them.")
        remanence, low_high = (low + high) / 2, (low, high)
    if remanence > 2.0:
        raise SceneError(f"{where}, remanence: {remanence} T is above any permanent magnet "
                         f"(about 1.5 T at most); give it in tesla, not millitesla.")
    optional = {key: _number(entry[key], f"{where}, {key}") if key in entry else None
                for key in ("coercivity_kA_per_m", "temperature_coefficient_percent_per_K",
                            "coercivity_temperature_coefficient_percent_per_K",
                            "max_temperature_C", "density")}
    if optional["density"] is not None and optional["density"] <= 0:
        raise SceneError(f"{where}, density: must be positive (kg/m^3).")
    coercivity = optional["coercivity_kA_per_m"]
    return Grade(name=name, family=str(entry.get("family", "user")), remanence=remanence,
                 remanence_range=low_high,
                 coercivity=None if coercivity is None else coercivity * 1e3,
                 temperature_coefficient=optional["temperature_coefficient_percent_per_K"],
                 max_temperature=optional["max_temperature_C"], density=optional["density"],
                 source=source.strip(), coercivity_temperature_coefficient=optional[
                     "coercivity_temperature_coefficient_percent_per_K"])


def _number(value, where: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise SceneError(f"{where}: must be a finite number, got {value!r}.")
    return float(value)


def _positive(value, where: str) -> float:
    number = _number(value, where)
    if number <= 0:
        raise SceneError(f"{where}: must be positive, got {number}.")
    return number


def find_grade(name, table: dict, where: str) -> Grade:
    """The grade of that name (case-insensitive), or a SceneError with a did-you-mean."""
    if not isinstance(name, str):
        raise SceneError(f"{where}: a grade is a name in quotes, e.g. grade = \"N42\".")
    grade = table.get(name.strip().upper())
    if grade is None:
        hint = did_you_mean(name, sorted({g.name for g in table.values()} | set(ALIASES)))
        raise SceneError(f"{where}: unknown grade \"{name}\"{hint}; use a grade of the built-in "
                         f"table (scene/grades.py), give "
                         f"remanence = <tesla> instead, or add it to a materials file.")
    return grade


def grade_table_version(scene=None) -> str:
    """The built-in grade table's fingerprint (the first 12 hex digits of a sha256 over every
    grade's figures), and the user's materials file's grades where the scene uses them, so a
    report names exactly which numbers it used.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene, optional
        Its parts' grades that are not the built-in ones are named.

    Returns
    -------
    str
        E.g. "built-in sha256 1a2b3c4d5e6f" or "built-in sha256 ..., ACME-N42 from ACME datasheet".
    """
    import hashlib

    table = built_in_grades()
    text = repr([(name, table[name]) for name in sorted(table)])
    words = f"built-in sha256 {hashlib.sha256(text.encode()).hexdigest()[:12]}"
    if scene is not None:
        own = sorted({(m.grade, m.material.source) for m in scene.magnets
                      if m.material is not None and m.material.source != BUILT_IN_SOURCE})
        words += "".join(f"; {name} from {source}" for name, source in own)
    return words
