"""What the customer report says, computed once as plain data: the cover (assembly, probe,
traceability), the answer first (one sentence per trap family and the `traps` headline), the
profile of energy and force along the guide line, the pull against the gap on steel plates,
the safety and shipping figures with their cautions, and what the figures rest on. The HTML
and PDF views (viewers/report) only lay it out; numbers are in the reader's display units."""
from __future__ import annotations

import datetime
import os
from dataclasses import dataclass

import numpy as np

from trapscape.physics.analysis.display_units import DisplayUnits, plain_number
from trapscape.physics.analysis.report_answers import family_answers
from trapscape.physics.analysis.report_profile import Profile, guide_profile, report_line
from trapscape.physics.analysis.report_safety import safety_rows, shipping_rows
from trapscape.physics.analysis.results import tool_version
from trapscape.physics.analysis.trap_words import (describe_position, headline_sentence,
                                                   margin_warnings, multiple, probe_weight_N,
                                                   scene_size)
from trapscape.physics.analysis.views import probe_words
from trapscape.physics.safety.cautions import CAUTIONS
from trapscape.scene.grades import grade_table_version
from trapscape.scene.measures import mass
from trapscape.scene.shapes import shape_of

PULL_GAPS = 9  # points of the pull curve
PULL_REACH = 0.25  # of the largest magnet dimension: the gaps a holding magnet is used at


@dataclass(frozen=True)
class Cover:
    """The first block: what the assembly is, what was probed, and where the numbers come from."""

    title: str
    parts: tuple  # of (count, description) per kind of part
    grades: tuple  # of str
    total_mass: str  # "62.4 g" or "unknown for 2 parts"
    probe: str
    constraint: str
    traceability: tuple  # of (label, value)
    document: tuple  # of (label, value) from the scene's [report] table
    logo: object  # pathlib.Path or None


@dataclass(frozen=True)
class FamilyRow:
    """One row of the trap table (display units)."""

    number: int
    count: int
    kind: str
    position: str
    escape_force: str
    times_weight: str
    field: str
    resting_on: str


@dataclass(frozen=True)
class PullCurve:
    """Pull on a steel plate against the gap (display units)."""

    plate: str
    gaps: np.ndarray
    pull: np.ndarray
    note: str


@dataclass(frozen=True)
class ReportContent:
    """Everything the report shows, in the order it shows it."""

    units: DisplayUnits
    cover: Cover
    headline: str
    answers: tuple  # of str, one per stable family (or why there is none)
    warnings: tuple  # of str
    families: tuple  # of FamilyRow
    notes: tuple  # of str: the Earnshaw note and the trap search's notes
    profile: Profile | None
    pull: PullCurve | None
    safety: tuple  # of (label, value)
    shipping: tuple  # of (label, value)
    cautions: tuple  # of str
    uncertainty: tuple  # of str


def report_content(analysis, units: DisplayUnits, progress=None) -> ReportContent:
    """The report of one analysed scene (finds its traps and safety figures if not done yet).

    Parameters
    ----------
    analysis : trapscape.physics.analysis.run.Analysis
    units : DisplayUnits
    progress : callable, optional
        ``progress(done, total, stage)`` during the trap search.

    Returns
    -------
    ReportContent
    """
    scene = analysis.scene
    report = analysis.traps(progress=progress)
    check = analysis.check_result()
    samples, how = report_line(analysis, report)
    return ReportContent(
        units=units, cover=cover(analysis, check, units),
        headline=headline_sentence(report, scene, units),
        answers=tuple(family_answers(analysis, report, units, samples)),
        warnings=tuple(margin_warnings(report, scene, units)),
        families=tuple(family_rows(report, scene, units)),
        notes=tuple(n for n in (report.earnshaw_note, *report.notes) if n),
        profile=guide_profile(scene, report, units, samples, how),
        pull=pull_curve(analysis, units),
        safety=tuple(safety_rows(check, scene, units)),
        shipping=tuple(shipping_rows(check, units)),
        cautions=tuple(CAUTIONS) + ((report.caution,) if report.caution else ()),
        uncertainty=tuple(uncertainty_statement(analysis, report)),
    )


# -- the cover ----------------------------------------------------------------------------------

def cover(analysis, check: dict, units: DisplayUnits) -> Cover:
    """The cover block of the report.

    Parameters
    ----------
    analysis : trapscape.physics.analysis.run.Analysis
    check : dict
        Its `check` result (for the version stamp and the hash).
    units : DisplayUnits

    Returns
    -------
    Cover
    """
    scene = analysis.scene
    masses = [mass(m) for m in scene.magnets]
    known = [m for m in masses if m is not None]
    total = f"{1e3 * sum(known):.3g} g"
    if len(known) < len(masses):
        total += f" (and {len(masses) - len(known)} part(s) of unknown density)"
    settings = scene.report
    document = tuple((label, value) for label, value in (
        ("Document", settings.document), ("Revision", settings.revision),
        ("Author", settings.author)) if value)
    return Cover(
        title=scene.title, parts=tuple(part_kinds(scene, units)),
        grades=tuple(sorted({m.grade or f"Br = {m.remanence:.3g} T" for m in scene.magnets})),
        total_mass=total, probe=probe_description(scene, units),
        constraint=constraint_description(scene, units),
        traceability=(("Tool version", check["trapscape_version"]),
                      ("Grade table", grade_table_version(scene)),
                      ("Scene file", os.path.basename(scene.path) if scene.path else "(in code)"),
                      ("Scene hash (sha256)", check["scene_sha256"]),
                      ("Date", report_date())),
        document=document, logo=settings.logo)


def report_date() -> str:
    """Today (UTC), or the day SOURCE_DATE_EPOCH names, so a rebuild can be byte-identical."""
    epoch = os.environ.get("SOURCE_DATE_EPOCH")
    moment = (datetime.datetime.fromtimestamp(int(epoch), datetime.timezone.utc)
              if epoch and epoch.isdigit() else datetime.datetime.now(datetime.timezone.utc))
    return moment.strftime("%Y-%m-%d")


def part_kinds(scene, units: DisplayUnits) -> list:
    """The parts, grouped by shape, size and grade.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene
    units : DisplayUnits

    Returns
    -------
    list of (int, str)
        (count, "box, 5 x 5 x 3 mm envelope, N38") in the scene's order.
    """
    kinds: dict = {}
    for magnet in scene.magnets:
        grade = magnet.grade or f"Br {magnet.remanence:.3g} T"
        low, high = (np.asarray(v, float) for v in shape_of(magnet).bounds(magnet))
        size = " x ".join(f"{units.L(v):.3g}" for v in high - low)
        key = f"{magnet.shape}, {size} {units.length_label} envelope, {grade}"
        kinds[key] = kinds.get(key, 0) + 1
    return [(count, key) for key, count in kinds.items()]


def probe_description(scene, units: DisplayUnits) -> str:
    """The probe in words.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene
    units : DisplayUnits

    Returns
    -------
    str
        E.g. "soft-iron bead, 3 mm across, 0.111 g (weight 1.1 mN)".
    """
    probe = scene.probe
    weight = probe_weight_N(scene)
    words = probe_words(scene).noun
    text = (f"{words}, {units.L(probe.diameter):.3g} {units.length_label} across, "
            f"{probe.mass * 1e3:.3g} g")
    if weight > 0:
        text += f" (weight {units.force_text(weight)})"
    return text


def constraint_description(scene, units: DisplayUnits) -> str:
    """How the probe may move, in words.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene
    units : DisplayUnits

    Returns
    -------
    str
    """
    constraint = scene.constraint
    point = describe_position(units.L(np.asarray(constraint.point, float)), units.length_label,
                              units.L(scene_size(scene) * scene.unit_scale))
    from trapscape.physics.analysis.trap_words import direction_words

    if constraint.kind == "line":
        return f"slides along a guide line through {point}, along {direction_words(constraint.direction)}"
    if constraint.kind == "plane":
        return (f"moves on a plane through {point}, normal "
                f"{direction_words(constraint.direction)}")
    return "free to move in every direction"


# -- the trap table -----------------------------------------------------------------------------

def family_rows(report, scene, units: DisplayUnits) -> list:
    """One row per family, as `traps` prints it, in display units.

    Parameters
    ----------
    report : trapscape.physics.traps.search.TrapReport
    scene : trapscape.scene.model.Scene
    units : DisplayUnits

    Returns
    -------
    list of FamilyRow
    """
    weight = probe_weight_N(scene)
    rows = []
    size = units.L(scene_size(scene) * scene.unit_scale)
    for family in report.families:
        eq = report.equilibria[family.representative]
        force = family.escape_force_N
        escape = times = "-"
        if force is not None:
            low, high = (plain_number(units.F(v)) for v in force)
            escape = low if low == high else f"{low} to {high}"
            if weight > 0:
                low, high = multiple(force[0] / weight), multiple(force[1] / weight)
                times = low if low == high else f"{low} to {high}"
        rows.append(FamilyRow(
            number=family.number, count=len(family.members), kind=family.classification,
            position=describe_position(units.L(np.asarray(eq.position, float)),
                                       units.length_label, size),
            escape_force=escape, times_weight=times,
            field=plain_number(units.B(float(np.linalg.norm(eq.B_T)))),
            resting_on=", ".join(family.surfaces) or "free"))
    return rows


# -- the pull on steel ------------------------------------------------------------------------

def pull_curve(analysis, units: DisplayUnits) -> PullCurve | None:
    """The whole assembly's pull on its nearest steel plate against the gap.

    The gaps run from contact to PULL_REACH of the largest magnet dimension.

    Parameters
    ----------
    analysis : trapscape.physics.analysis.run.Analysis
    units : DisplayUnits

    Returns
    -------
    PullCurve or None
        None without a steel plate.
    """
    scene = analysis.scene
    if not scene.plates or not scene.magnets:
        return None
    largest = max(shape_of(m).largest(m) for m in scene.magnets)
    gaps = np.linspace(0.0, PULL_REACH * largest, PULL_GAPS)
    result = analysis.hold(gaps)
    pull = np.array([row.pull for row in result.rows])
    note = ("The plate is taken as a perfect magnetic mirror: thin, saturated, painted or rough "
            "steel holds less.")
    if result.saturation_onset_gap_m is not None:
        note += (f" The plate is expected to saturate below a gap of "
                 f"{units.L(result.saturation_onset_gap_m):.3g} {units.length_label}.")
    return PullCurve(plate=result.plate.name, gaps=units.L(gaps), pull=units.F(pull), note=note)


# -- what the figures rest on ---------------------------------------------------------------

FIELD_ACCURACY = (
    "The field is computed from exact closed forms (boxes, cylinders, rings, spheres, triangle "
    "meshes) or semi-analytic ones (radially magnetised rings and arcs); checked against "
    "handbook formulas and independent quadratures, the default path stays within 1e-3 of the "
    "local field from 10 % of the nearest magnet's smallest dimension outward, and within 1e-2 "
    "down to 2 % of it (README, Physics, accuracy and validation).")


def uncertainty_statement(analysis, report) -> list:
    """What the figures rest on and how far to trust them, one sentence each.

    Parameters
    ----------
    analysis : trapscape.physics.analysis.run.Analysis
    report : trapscape.physics.traps.search.TrapReport

    Returns
    -------
    list of str
    """
    scene = analysis.scene
    lines = [grade_sentence(scene),
             "Magnets are rigid and uniformly magnetised (recoil permeability 1): real sintered "
             "magnets have a recoil permeability a few per cent above 1 (from memory), which "
             "shifts fields near other magnets and steel by a few per cent.",
             probe_model_sentence(report), FIELD_ACCURACY]
    if scene.plates:
        lines.append("Steel plates are perfect magnetic mirrors of infinite extent: this "
                     "overstates forces where real plates are thin, small or saturated.")
    lines.append("Friction, vibration, fluid drag, the guide's own wall and manufacturing "
                 "tolerances are not modelled; keep a margin (common practice: escape forces of "
                 "at least 2 x the load).")
    return lines


def grade_sentence(scene) -> str:
    """Nominal grade values, and what the low end of each grade's range does to forces.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene

    Returns
    -------
    str
    """
    spreads = []
    for magnet in scene.magnets:
        grade = magnet.material
        if grade is not None and grade.remanence_range:
            spreads.append(1.0 - (grade.remanence_range[0] / grade.remanence) ** 2)
    text = ("Magnet strengths are nominal: each grade's remanence is the middle of its range in "
            "the built-in table (from memory of supplier datasheets) or the value of your "
            "materials file.")
    if spreads:
        text += (f" Forces on the probe and on steel scale with the remanence squared, so parts "
                 f"at the low end of their grade's range hold up to {100 * max(spreads):.0f} % "
                 f"less.")
    return text


def probe_model_sentence(report) -> str:
    """Point or finite probe, as the trap search used it.

    Parameters
    ----------
    report : trapscape.physics.traps.search.TrapReport

    Returns
    -------
    str
    """
    finite = report.finite_probe
    if finite.used:
        return ("The probe's finite size is taken into account at the equilibria (" +
                finite.model + "); the scan, wells and escape paths use the point model.")
    return ("The probe is treated as a point (its field energy taken at its centre): its size "
            f"changes the energies by at most {100 * finite.max_relative_correction:.2g} % here.")
