"""A trap report in words: the headline sentence (where the probe is caught, how firmly, where it
escapes), the warnings on small margins, each family and the scene's symmetry described, and
forces, positions and directions as a reader takes them in. `traps`, `demo` and the views all
use these, so the same answer reads the same everywhere."""
from __future__ import annotations

import numpy as np

from trapscape.physics.analysis.display_units import describe_force, scene_units
from trapscape.physics.probe.laws import ProbeLaw
from trapscape.physics.traps.classify import rests
from trapscape.physics.traps.family_grouping import firmest

# common practice: a holding force of at least twice the load it must carry (a safety factor
# of 2 on holding magnets), and a barrier of at least 10 kT for a trap meant to hold a small
# particle against Brownian motion (escape rate ~ exp(-barrier / kT), Kramers 1940)
FORCE_MARGIN = 2.0
THERMAL_MARGIN = 10.0
BOLTZMANN_J_PER_K = 1.380649e-23  # exact (SI, 2019)
ROOM_TEMPERATURE_K = 300.0

AXIS_WORDS = ("x", "y", "z")
EXIT_WORDS = {"well": "over a pass into a neighbouring well",
              "lower ground": "over a pass to lower ground"}  # else "to <box face or part>"


def describe_position(position, unit: str, scale: float | None = None) -> str:
    """'(21.0, 0, -0.2) mm': decimals enough for a thousandth of `scale` (the scene's size).

    Parameters
    ----------
    position : array_like, shape (3,)
        In the scene's unit.
    unit : str
    scale : float or None
        The scene's size in its unit.

    Returns
    -------
    str
    """
    decimals = 1 if not scale else int(np.clip(np.ceil(2.0 - np.log10(scale)), 0, 4))
    tiny = 0.5 * 10.0**-decimals
    text = ", ".join(f"{v:.{decimals}f}" if abs(v) >= tiny else "0" for v in position)
    return f"({text}) {unit}"


def where_words(position_m, scene, units=None) -> str:
    """A position in m in words, in the reader's length unit (default: the scene's).

    Parameters
    ----------
    position_m : array_like, shape (3,)
    scene : trapscape.scene.model.Scene
    units : physics.analysis.display_units.DisplayUnits, optional

    Returns
    -------
    str
    """
    units = units or scene_units(scene)
    box = scene.search_box
    size = units.L(float(np.linalg.norm(np.asarray(box.max) - np.asarray(box.min))))
    return describe_position(units.L(np.asarray(position_m, float)), units.length_label, size)


def scene_size(scene) -> float:
    """The search box's diagonal in the scene's unit (the scale of positions in words).

    Parameters
    ----------
    scene : trapscape.scene.model.Scene

    Returns
    -------
    float
    """
    box = scene.search_box
    return float(np.linalg.norm(np.asarray(box.max) - np.asarray(box.min))) / scene.unit_scale


def direction_words(direction, ring=None) -> str:
    """A unit direction in words: along a world axis ("z"), or along, across or around a ring's
    axis ("around the ring", "radial", "along the axis"), else its components.

    Parameters
    ----------
    direction : array_like, shape (3,)
    ring : tuple of (centre (3,), axis (3,), point (3,)) or None
        The ring's centre, axis and the member's position (any unit), to name directions by.

    Returns
    -------
    str
    """
    v = np.asarray(direction, float)
    v = v / max(np.linalg.norm(v), 1e-300)
    named = []
    if ring is not None:
        centre, axis, point = (np.asarray(x, float) for x in ring)
        radial = point - centre - ((point - centre) @ axis) * axis
        if np.linalg.norm(radial) > 0:
            radial /= np.linalg.norm(radial)
            named = [("around the ring", np.cross(axis, radial)), ("radial", radial),
                     ("along the axis", axis)]
    named += [(name, e) for name, e in zip(AXIS_WORDS, np.eye(3))]
    for name, e in named:
        if abs(v @ e) >= np.cos(np.radians(10.0)):
            return name
    return "(" + ", ".join(f"{c:.2f}" for c in v) + ")"


RING_PHRASES = {"around the ring": "around the ring", "radial": "radially",
                "along the axis": "along the axis"}


def along_words(direction, ring=None) -> str:
    """direction_words as it reads after a figure: "along z", "around the ring", "radially",
    "along the axis", "along (0.60, 0.80, 0.00)".

    Parameters
    ----------
    direction : array_like, shape (3,)
    ring : tuple or None
        As direction_words'.

    Returns
    -------
    str
    """
    words = direction_words(direction, ring)
    return RING_PHRASES.get(words, f"along {words}")


def symmetry_words(symmetry, scene, units=None) -> str:
    """The scene's symmetry in a few words.

    Parameters
    ----------
    symmetry : trapscape.physics.traps.symmetry.Symmetry
    scene : trapscape.scene.model.Scene
        For the length unit.
    units : physics.analysis.display_units.DisplayUnits, optional
        The reader's units; default the scene's length unit.

    Returns
    -------
    str
        E.g. "6-fold rotation about the z axis through (0, 0, 4.0) mm, 6 mirror planes,
        alternating polarity", or "none found".
    """
    if symmetry is None or symmetry.trivial:
        return "none found"
    parts = []
    if symmetry.axis is not None:
        axis = direction_words(symmetry.axis)
        axis = f"the {axis} axis" if axis in AXIS_WORDS else f"the axis {axis}"
        centre = where_words(symmetry.centre, scene, units)
        turn = "every rotation" if symmetry.continuous else f"{symmetry.order}-fold rotation"
        parts.append(f"{turn} about {axis} through {centre}")
    if symmetry.mirror_planes:
        planes = symmetry.mirror_planes
        parts.append("mirror planes through the axis" if symmetry.continuous
                     else f"{planes} mirror plane{'s' if planes > 1 else ''}")
    if symmetry.alternating:
        parts.append("some of them with every pole reversed (which the probe does not feel)")
    return ", ".join(parts)


def describe_family(family, report, scene, units=None) -> str:
    """One family in words: what joins its members and how far it extends.

    Parameters
    ----------
    family : trapscape.physics.traps.report.Family
    report : trapscape.physics.traps.search.TrapReport
    scene : trapscape.scene.model.Scene
    units : physics.analysis.display_units.DisplayUnits, optional
        The reader's units; default the scene's length unit and newtons.

    Returns
    -------
    str
    """
    count = len(family.members)
    units = units or scene_units(scene)
    on = f" on {', '.join(family.surfaces)}" if family.surfaces else ""
    force = family.escape_force_N
    holding = ""
    if force is not None:
        low, high = units.force_text(force[0]), units.force_text(force[1])
        holding = f", holding {low}" if low == high else f", holding {low} to {high}"
    if family.kind == "single":
        return f"1 point{on}{holding}"
    if family.kind == "circle":
        circle = family.circle
        centre = where_words(circle.centre, scene, units)
        return (f"{count} points of one circle of radius {units.L(circle.radius_m):.3g}"
                f" {units.length_label} about the {direction_words(circle.axis)} axis, centre {centre}{on}"
                f" (every point of it is equivalent){holding}")
    if family.kind == "symmetric set":
        return f"{count} images of one point under the scene's symmetry{on}{holding}"
    images = " and their images under the scene's symmetry" if family.by_symmetry else ""
    return f"{count} neighbouring points of one contact curve{images}{on}{holding}"


def headline_equilibrium(report):
    """The equilibrium a customer asks about first.

    Parameters
    ----------
    report : trapscape.physics.traps.search.TrapReport or None

    Returns
    -------
    Equilibrium or None
        The firmest one where the probe rests (classify.rests; largest escape force, the first
        in the report's order of those equal to rounding), else the firmest marginal one, else
        the first; None without equilibria.
    """
    if report is None or not report.equilibria:
        return None
    for chosen in ([e for e in report.equilibria if rests(e, report.marginal_ratio)],
                   [e for e in report.equilibria if e.classification == "marginal"]):
        if chosen:
            return chosen[firmest([(_finite(e.escape.force_N if e.escape else None), i)
                                   for i, e in enumerate(chosen)])]
    return report.equilibria[0]


def _finite(value) -> float:
    return float(value) if value is not None and np.isfinite(value) else 0.0


def probe_weight_N(scene) -> float:
    """The probe's weight m_p |g|, N (0 without gravity).

    Parameters
    ----------
    scene : trapscape.scene.model.Scene

    Returns
    -------
    float
    """
    law = ProbeLaw.from_scene(scene)
    return float(np.linalg.norm(law.gravity_force()))


def headline_sentence(report, scene, units=None) -> str:
    """Where the probe is caught, how firmly (escape force, and as a multiple of its weight),
    and where it escapes, in one or two plain sentences.

    Parameters
    ----------
    report : trapscape.physics.traps.search.TrapReport or None
    scene : trapscape.scene.model.Scene
    units : physics.analysis.display_units.DisplayUnits, optional
        The reader's units (the report's); default: the scene's length unit and newtons.

    Returns
    -------
    str
    """
    law = ProbeLaw.from_scene(scene)
    probe = law.subject
    eq = headline_equilibrium(report)
    if eq is None:
        return f"{probe} finds no equilibrium in the search box."
    units = units or scene_units(scene)
    where = where_words(eq.position, scene, units)
    force_words = units.force_text
    kind = scene.constraint.kind
    path = {"line": " on its guide line", "plane": " on its guide plane"}.get(kind, "")
    if not rests(eq, report.marginal_ratio):
        return (f"{probe} has no stable rest point{path}; the closest to one is a "
                f"{eq.classification} equilibrium at {where}.")
    on = f", resting on {eq.contact.surface}" if eq.contact else ""
    among = _equivalents(_family_of(report, eq), units)
    escape = eq.escape
    if escape is not None and escape.exit is None:
        hold = "and cannot get out of its well inside the search box"
        exit_words = ""
    elif escape is not None and escape.force_N is not None and np.isfinite(escape.force_N):
        along = {"line": " along the line", "plane": " in the plane"}.get(kind, "")
        weight = probe_weight_N(scene)
        times = f" ({multiple(escape.force_N / weight)} x its weight)" if weight > 0 else ""
        hold = f"and it takes {force_words(escape.force_N)}{along}{times} to pull it out"
        exit_words = f"; it escapes {EXIT_WORDS.get(escape.exit_at, 'to ' + str(escape.exit_at))}" \
            if escape.exit_at else ""
    else:
        hold, exit_words = "with no escape figure", ""
    return f"{probe} is caught{path} at {where}{on}{among}, {hold}{exit_words}."


def multiple(ratio: float) -> str:
    """A ratio as a reader takes it in: 1.07, 4.61, 35.2, 3450.

    Parameters
    ----------
    ratio : float

    Returns
    -------
    str
    """
    return f"{ratio:.3g}" if ratio < 1000 else f"{ratio:.0f}"


def _equivalents(family, units) -> str:
    """' (one of 20 equivalent points on a circle of radius 12.4 mm about the z axis)'."""
    if family is None or len(family.members) < 2:
        return ""
    count = len(family.members)
    if family.kind == "circle":
        circle = family.circle
        where = (f" on a circle of radius {units.L(circle.radius_m):.3g} {units.length_label}"
                 f" about the {direction_words(circle.axis)} axis")
    elif family.kind == "symmetric set":
        where = ", images of each other under the scene's symmetry"
    else:
        where = " along one contact curve"
    return f" (one of {count} equivalent points{where})"


def _family_of(report, eq):
    for family in report.families:
        if any(report.equilibria[i] is eq for i in family.members):
            return family
    return None


def margin_warnings(report, scene, units=None) -> list:
    """Warnings for stable families held with little margin.

    Over gravity: escape force below FORCE_MARGIN x the probe's weight; over the escape
    barrier: barrier below THERMAL_MARGIN x kT at 300 K (both thresholds common practice).

    Parameters
    ----------
    report : trapscape.physics.traps.search.TrapReport
    scene : trapscape.scene.model.Scene
    units : physics.analysis.display_units.DisplayUnits, optional
        The reader's units; default the scene's length unit and newtons.

    Returns
    -------
    list of str
        One sentence per stable family and margin below its threshold.
    """
    units = units or scene_units(scene)
    weight = probe_weight_N(scene)
    thermal = BOLTZMANN_J_PER_K * ROOM_TEMPERATURE_K
    warnings = []
    for family in report.families:
        if family.classification != "stable":
            continue
        eq = report.equilibria[family.representative]
        escape = eq.escape
        if escape is None or escape.exit is None:
            continue
        label = f"family {family.number} at " + where_words(eq.position, scene, units)
        force = escape.force_N
        small = force is not None and np.isfinite(force) and force < FORCE_MARGIN * weight
        if weight > 0 and small:
            warnings.append(
                f"Warning: {label} is held by {units.force_text(force)}, only "
                f"{multiple(force / weight)} x the probe's weight of {units.force_text(weight)}; "
                f"below {FORCE_MARGIN:g} x (common practice) a knock, vibration or a heavier "
                "probe may dislodge it.")
        barrier = escape.energy_J
        if barrier is not None and np.isfinite(barrier) and barrier < THERMAL_MARGIN * thermal:
            warnings.append(
                f"Warning: {label} has an escape barrier of {barrier:.3g} J, only "
                f"{barrier / thermal:.3g} kT at {ROOM_TEMPERATURE_K:g} K; below "
                f"{THERMAL_MARGIN:g} kT (common practice) thermal motion lets the probe out.")
    return warnings
