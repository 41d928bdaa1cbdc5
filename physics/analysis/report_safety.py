"""The safety and shipping figures of `check` (physics.analysis.safety) as the report's rows of
(what, figure), in the reader's display units."""
from __future__ import annotations

import numpy as np

from trapscape.physics.analysis.display_units import DisplayUnits

CLASS_WORDS = {"not-restricted": "not restricted as magnetised material",
               "magnetized-material": "magnetised material (UN2807, class 9): declare it",
               "forbidden": "forbidden without the authorities' approval"}


def safety_rows(check: dict, scene, units: DisplayUnits) -> list:
    """(label, figure) rows of the safety figures.

    Parameters
    ----------
    check : dict
        The `check` result (its lengths in the scene's unit).
    scene : trapscape.scene.model.Scene
    units : DisplayUnits

    Returns
    -------
    list of (str, str)
    """
    safety = check["safety"]
    length = _length(scene, units)
    rows = [(f"Implant shell, |B| = {_field(safety['implant_limit_T'], units)} (ICNIRP 2009)",
             f"reaches {length(safety['implant_distance_from_surface'])} from the nearest "
             f"magnet; keep people with implanted devices outside it")]
    for level in safety["field_levels"]:
        rows.append((f"|B| = {_field(level['limit_T'], units)} ({level['label']})",
                     f"{length(level['distance_from_surface'])} from the magnets"))
    if len(safety["part_forces"]) > 1:
        worst = max(safety["part_forces"], key=lambda f: f["force_magnitude_N"])
        verdict = ("above the pinch level: parts snap together and pinch"
                   if safety["pinch_warning"] else "below the pinch level")
        largest = worst["force_magnitude_N"]
        # below a nanonewton is the quadrature's round-off of a force that cancels (as `check`)
        largest = (f"{_force(largest, units)} on {worst['name']}" if largest > 1e-9
                   else "none (the forces cancel)")
        rows.append(("Largest force between parts, as assembled",
                     f"{largest}, {verdict} "
                     f"of {_force(safety['pinch_force_N'], units)} (common practice)"))
    rated = [d for d in safety["demagnetization"] if d["ratio"] is not None]
    if rated:
        worst = max(rated, key=lambda d: d["ratio"])
        risk = sum(d["at_risk"] for d in rated)
        rows.append(("Demagnetisation (reverse field / coercivity)",
                     f"worst {worst['ratio']:.2f} ({worst['name']}, {worst['temperature_C']:g} °C); "
                     f"{risk} of {len(rated)} part(s) above {safety['demagnetization_margin']:g}"))
    indices = [x for x in safety["flux_index"] if x["index_kG2_mm2"] is not None]
    if indices:
        worst = max(indices, key=lambda x: x["index_kG2_mm2"])
        over = sum(x["over_limit"] for x in indices)
        small = sum(x["small_part"] for x in safety["flux_index"])
        rows.append(("Flux index (toy standards, from memory)",
                     f"largest {worst['index_kG2_mm2']:.3g} kG² mm² (limit "
                     f"{safety['flux_index_limit_kG2_mm2']:g}); {over} part(s) over, {small} "
                     f"small enough to swallow"))
    return rows


def shipping_rows(check: dict, units: DisplayUnits) -> list:
    """(label, figure) rows of the air-transport figures.

    Parameters
    ----------
    check : dict
        The `check` result.
    units : DisplayUnits

    Returns
    -------
    list of (str, str)
    """
    shipping = check["shipping"]
    unit = units.length_label  # the check result's lengths are in the scene's unit
    sizes = units.L_from(np.asarray(shipping["package_size"], float), check["length_unit"])
    size = " x ".join(f"{v:.3g}" for v in sizes)
    given = "" if shipping["package_given"] else " (the magnets' bounding box: no [package] given)"
    return [
        ("Package", f"{size} {unit}{given}"),
        ("Field 2.1 m from the package", f"{shipping['H_at_2_1m_A_per_m']:.3g} A/m (limit "
                                         f"{shipping['limit_at_2_1m_A_per_m']:g} A/m)"),
        ("Field 4.6 m from the package", f"{shipping['H_at_4_6m_A_per_m']:.3g} A/m (limit "
                                         f"{shipping['limit_at_4_6m_A_per_m']:g} A/m)"),
        (f"Air transport ({shipping['regulation']})", CLASS_WORDS.get(shipping["class"],
                                                                      shipping["class"])),
        *(("Note", note) for note in shipping["notes"]),
    ]


def _length(scene, units: DisplayUnits):
    return lambda value: f"{units.L(value * scene.unit_scale):.3g} {units.length_label}"


def _field(tesla: float, units: DisplayUnits) -> str:
    return f"{units.B(tesla):.3g} {units.field_label}"


def _force(newtons: float, units: DisplayUnits) -> str:
    return units.force_text(newtons)
