"""The safety and shipping figures of one scene, computed once (physics.safety), and their JSON
under `safety` and `shipping` in `check` (lengths in the scene's unit, everything else SI)."""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trapscape.physics.field import engine
from trapscape.physics.field.model import FieldModel
from trapscape.physics.holding.forces import part_forces
from trapscape.physics.safety.assembly import AssemblyField
from trapscape.physics.safety.cautions import CAUTIONS, SHIPPING_NOTES
from trapscape.physics.safety.demagnetization import assess, reverse_fields
from trapscape.physics.safety.flux_index import flux_index
from trapscape.physics.safety.implant import implant_shells
from trapscape.physics.safety.limits import limits
from trapscape.physics.safety.shipping import air_transport_class, strongest_H
from trapscape.scene.measures import scene_bounding_box


FORCE_RTOL = 1e-2  # of each part's force scale: enough to choose a glue or a fixture, and fast


@dataclass(frozen=True)
class PartForce:
    """Force (3,) N and torque (3,) N m about the part's centre, from the other parts."""

    name: str
    force_N: np.ndarray
    torque_N_m: np.ndarray


def assembled_forces(field, rtol: float = FORCE_RTOL) -> list:
    """The force and torque on each part from all the others at their assembled positions (what
    the glue or fixture must hold while the assembly is built; the largest is the snap force a
    released part starts with), the magnets alone (`hold` gives the pull of a steel plate).

    Parameters
    ----------
    field : trapscape.physics.safety.assembly.AssemblyField
        The magnets (their exact sources are used).
    rtol : float
        Target error relative to each part's force scale.

    Returns
    -------
    list of PartForce
        In the scene's order.

    References
    ----------
    Coulombian charge model of physics.holding.forces: Akoun & Yonnet, IEEE Trans. Magn. 20,
    1962 (1984); E. P. Furlani, Permanent Magnet and Electromechanical Devices, 2001, ch. 3.
    """
    if len(field.magnets) < 2:
        return [PartForce(m.name, np.zeros(3), np.zeros(3)) for m in field.magnets]
    model = FieldModel(field.scene, field.sources)
    return [PartForce(name, np.asarray(f), np.asarray(t))
            for name, f, t in part_forces(model, rtol=rtol)]


@dataclass(frozen=True, eq=False)
class SafetyFigures:
    """Everything `check` reports under safety and shipping (SI, world frame)."""

    field: AssemblyField
    shells: tuple  # of physics.safety.implant.Shell: the implant limit first, then field_levels
    forces: list  # of PartForce
    demagnetization: list  # of physics.safety.demagnetization.Demagnetization
    flux: list  # of physics.safety.flux_index.FluxIndex
    package: tuple  # (low, high) m
    package_given: bool
    H_near: float  # A/m
    H_far: float
    air_class: str


def safety_figures(scene) -> SafetyFigures:
    """The safety, handling and shipping figures of a scene's magnets (no steel plates).

    Parameters
    ----------
    scene : trapscape.scene.model.Scene
        The loaded scene.

    Returns
    -------
    SafetyFigures

    References
    ----------
    The physics.safety modules name theirs; the levels and their sources are in
    physics/safety/limits.toml.
    """
    table = limits()
    settings = scene.safety
    # many small kernel calls: numba's threads cost more than they give here
    with engine.in_process_mode():
        field = AssemblyField(scene)
        levels = [settings.implant_limit] + [lv["limit_T"] for lv in table["field_levels"]]
        shells = tuple(implant_shells(field, levels))
        forces = assembled_forces(field)
        reverse = reverse_fields(field)
        temperatures = sorted({settings.min_temperature, settings.max_temperature})
        margin = table["demagnetization"]["margin"]
        demag = [assess(m.name, r, m.material, temperatures, margin)
                 for m, r in zip(scene.magnets, reverse)]
        flux = [flux_index(field, k, table["flux_index"]) for k in range(len(scene.magnets))]
        given = settings.package_min is not None
        package = ((settings.package_min, settings.package_max) if given
                   else scene_bounding_box(scene.magnets))
        rules = table["air_transport"]
        h_near = strongest_H(field, *package, rules["near_distance_m"])
        h_far = strongest_H(field, *package, rules["far_distance_m"])
    return SafetyFigures(field=field, shells=shells, forces=forces, demagnetization=demag,
                         flux=flux, package=package, package_given=given, H_near=h_near,
                         H_far=h_far, air_class=air_transport_class(h_near, h_far, rules))


def implant_surface(figures: SafetyFigures, count: int = 640):
    """The implant shell on more rays, for drawing and for the STL/VTP export.

    Parameters
    ----------
    figures : SafetyFigures
        What safety_figures computed (its field and implant limit are reused).
    count : int
        Rays.

    Returns
    -------
    trapscape.physics.safety.implant.Shell
        points (N, 3) and faces (F, 3), m, world frame.
    """
    with engine.in_process_mode():
        return implant_shells(figures.field, [figures.shells[0].limit_T], count, refine=False)[0]


def safety_json(scene, figures: SafetyFigures) -> dict:
    """The `safety` object of `check`.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene
        For the length unit.
    figures : SafetyFigures
        What safety_figures computed.

    Returns
    -------
    dict
        implant_limit_T, implant_distance_from_surface and implant_radius (scene unit),
        field_levels, part_forces, largest_force_N, pinch_force_N, demagnetization,
        flux_index, sources, cautions.
    """
    table = limits()
    unit = scene.unit_scale
    implant = figures.shells[0]
    largest = max((float(np.linalg.norm(f.force_N)) for f in figures.forces), default=0.0)
    pinch = table["handling"]["pinch_force_N"]
    return {
        "implant_limit_T": implant.limit_T,
        "implant_distance_from_surface": implant.distance_from_surface / unit,
        "implant_radius": implant.radius / unit,
        "implant_centre": _tidy(implant.centre, field_size(figures)) / unit,
        "implant_source": table["implant"]["source"],
        "field_levels": [{"limit_T": s.limit_T, "label": lv["label"], "source": lv["source"],
                          "distance_from_surface": s.distance_from_surface / unit,
                          "radius": s.radius / unit}
                         for s, lv in zip(figures.shells[1:], table["field_levels"])],
        "part_forces": [{"name": f.name, "force_N": _tidy(f.force_N, largest),
                         "torque_N_m": _tidy(f.torque_N_m, largest * field_size(figures)),
                         "force_magnitude_N": float(np.linalg.norm(f.force_N))}
                        for f in figures.forces],
        "largest_force_N": largest,
        "pinch_force_N": pinch,
        "pinch_source": table["handling"]["pinch_source"],
        "pinch_warning": largest > pinch,
        "demagnetization": [{
            "name": d.name, "reverse_H_A_per_m": d.reverse_H_A_per_m,
            "reverse_H_at_temperature_A_per_m": d.reverse_H_hot_A_per_m,
            "coercivity_A_per_m": d.coercivity_A_per_m, "temperature_C": d.temperature_C,
            "ratio": d.ratio, "at_risk": d.at_risk, "note": d.note or None}
            for d in figures.demagnetization],
        "demagnetization_margin": table["demagnetization"]["margin"],
        "demagnetization_source": table["demagnetization"]["margin_source"] + "; coercivities "
        "and temperature coefficients of the built-in grades are from memory of supplier "
        "datasheets",
        "flux_index": [{"name": x.name, "B_max_T": x.B_max_T, "pole_area_m2": x.pole_area_m2,
                        "index_kG2_mm2": x.index_kG2_mm2, "small_part": x.small_part,
                        "over_limit": x.over_limit} for x in figures.flux],
        "flux_index_limit_kG2_mm2": table["flux_index"]["limit_kG2_mm2"],
        "flux_index_source": table["flux_index"]["source"],
        "small_part_source": table["flux_index"]["small_part_source"],
        "notes": ["Steel plates are left out: the magnets as handled and shipped, off their "
                  "steel."],
        "cautions": list(CAUTIONS),
    }


def shipping_json(scene, figures: SafetyFigures) -> dict:
    """The `shipping` object of `check`.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene
        For the length unit.
    figures : SafetyFigures
        What safety_figures computed.

    Returns
    -------
    dict
        H_at_2_1m_A_per_m, H_at_4_6m_A_per_m, class, package_size (scene unit), package_min,
        package_max, package_given, limits, regulation, notes.
    """
    rules = limits()["air_transport"]
    low, high = (np.asarray(v, float) for v in figures.package)
    notes = list(SHIPPING_NOTES)
    if not figures.package_given:
        notes.insert(0, package_warning())
    return {
        "H_at_2_1m_A_per_m": figures.H_near,
        "H_at_4_6m_A_per_m": figures.H_far,
        "class": figures.air_class,
        "package_size": (high - low) / scene.unit_scale,
        "package_min": low / scene.unit_scale,
        "package_max": high / scene.unit_scale,
        "package_given": figures.package_given,
        "limit_at_2_1m_A_per_m": rules["near_limit_A_per_m"],
        "limit_at_4_6m_A_per_m": rules["far_limit_A_per_m"],
        "regulation": rules["regulation"],
        "regulation_note": rules["regulation_note"],
        "notes": notes,
    }


def field_size(figures: SafetyFigures) -> float:
    """The assembly's enclosing radius, m (the scale for tidying lengths and torques).

    Parameters
    ----------
    figures : SafetyFigures
        What safety_figures computed.

    Returns
    -------
    float
    """
    return figures.field.enclosing_radius


def _tidy(vector, scale: float) -> np.ndarray:
    """Components below 1e-9 of the scale (round-off of cancelling terms) set to 0."""
    vector = np.asarray(vector, float)
    return np.where(np.abs(vector) <= 1e-9 * scale, 0.0, vector) + 0.0


def package_warning() -> str:
    """The warning when the scene gives no [package].

    Returns
    -------
    str
    """
    return ("no [package] in the scene: the shipping field is taken from the magnets' bounding "
            "box, which overstates it; add [package] size = [w, d, h] (the box's outer edges).")
