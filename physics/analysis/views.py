"""What the views draw, computed here: the field sampled at a view's points, the probe's energy
and force where it fits, and the equilibria as markers. Views only lay the numbers out as
pictures; nothing here knows pyvista."""
from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from trapscape.physics.analysis.trap_words import describe_family
from trapscape.physics.probe.laws import ProbeLaw, allowed_basis, projected_force
from trapscape.scene.measures import centroid, radial_sign
from trapscape.scene.shapes import shape_of
from trapscape.scene.units import MU0

CLASSES = ("stable", "saddle", "unstable", "marginal")


@dataclass(frozen=True)
class ViewEquilibrium:
    """An equilibrium as a view marks it (position in the scene's unit)."""

    number: int  # 1-based, in the report's order
    position: np.ndarray  # (3,) scene unit
    kind: str  # stable | saddle | unstable | marginal
    escape_force_N: float | None
    contact: str | None  # the surface it is pressed against, or None
    source: object  # the physics record it came from
    closed_in: bool = False  # a well with no way out inside the search box
    count: int = 1  # members of its family (one marker stands for them all)
    family: str = ""  # the family in words (physics.analysis.trap_words.describe_family)


@dataclass(frozen=True)
class ProbeWords:
    """How views and sentences name the scene's probe, from its law (not its kind's name)."""

    noun: str  # "soft-iron bead", "diamagnetic probe", ...
    subject: str  # how a sentence about it starts: "The steel probe"
    hovers: bool  # weakly magnetic: the hover sheet (force balancing the weight) is worth drawing


def probe_words(scene) -> ProbeWords:
    """The probe's names and the hover hint, asked of its law.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene

    Returns
    -------
    ProbeWords
    """
    law = ProbeLaw.from_scene(scene)
    return ProbeWords(noun=law.noun, subject=law.subject, hovers=law.weakly_magnetic)


def field_samples(analysis, points_m, progress=None) -> dict:
    """The field arrays a view colours and contours by.

    Parameters
    ----------
    analysis : trapscape.physics.analysis.run.Analysis
    points_m : array_like, shape (N, 3)
        World points in m.
    progress : callable, optional
        ``progress(done, total)`` while the field is summed.

    Returns
    -------
    dict of str to numpy.ndarray
        B_T (N, 3); B_abs_T, B_abs_mT; energy_density_J_per_m3 (B^2 / 2 mu0, the vacuum field
        energy density, Jackson 3rd ed. eq. 5.148 with B = mu0 H outside matter);
        inside_magnet (int32, -1 or the part index); in_model (uint8, 0 behind a steel plate).
    """
    points_m = np.asarray(points_m, dtype=float).reshape(-1, 3)
    model = analysis.model
    _, B, owner = model.H_B_and_owner(points_m, progress=progress)  # one pass: B and the owner
    B_abs = np.linalg.norm(B, axis=1)
    return {
        "B_T": B,
        "B_abs_T": B_abs,
        "B_abs_mT": B_abs * 1e3,
        "energy_density_J_per_m3": B_abs**2 / (2.0 * MU0),
        "inside_magnet": np.asarray(owner).astype(np.int32),
        "in_model": model.in_model(points_m).astype(np.uint8),
    }


def magnetisation_arrows(scene, index: int) -> list:
    """Where a part's magnetisation arrows start and which way they point.

    A uniformly magnetised part: one arrow from its volume centroid along north (a mesh's body
    origin is the file's origin, which may lie far from the part). A radial part: four from the
    middle of its wall, outward or inward.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene
    index : int
        The magnet's index in the scene.

    Returns
    -------
    list of (numpy.ndarray, numpy.ndarray)
        (start (3,) world point in m, unit direction (3,)) per arrow.
    """
    magnet = scene.magnets[index]
    R = np.asarray(magnet.rotation, float)
    if magnet.radial is None:
        north = R @ np.asarray(magnet.north, float)
        return [(centroid(magnet), north / np.linalg.norm(north))]
    mids, radial = shape_of(magnet).mid_wall(magnet, 4)
    return [(magnet.position + R @ middle, radial_sign(magnet) * (R @ outward))
            for middle, outward in zip(mids, radial)]


def admissible(analysis, points_m) -> np.ndarray:
    """(N,) bool: the probe's centre can be at the points (clearance >= d/2, in front of every
    plate).

    Parameters
    ----------
    analysis : trapscape.physics.analysis.run.Analysis
    points_m : array_like, shape (N, 3)
        World points in m.

    Returns
    -------
    numpy.ndarray of bool, shape (N,)
    """
    points_m = np.asarray(points_m, float).reshape(-1, 3)
    model = analysis.model
    clearance = model.clearance(points_m)
    return (clearance >= analysis.scene.probe.diameter / 2.0) & model.in_model(points_m)


def probe_energy_and_force(analysis, points_m):
    """The point probe's energy and force (magnetic and gravity) where it fits.

    Parameters
    ----------
    analysis : trapscape.physics.analysis.run.Analysis
    points_m : array_like, shape (N, 3)
        World points in m.

    Returns
    -------
    U : numpy.ndarray, shape (N,)
        Energy in J, 0 where the probe does not fit.
    F : numpy.ndarray, shape (N, 3)
        Force in N, 0 where the probe does not fit.
    ok : numpy.ndarray of bool, shape (N,)
        Where the probe fits (see `admissible`).
    """
    points_m = np.asarray(points_m, float).reshape(-1, 3)
    ok = admissible(analysis, points_m)
    U = np.zeros(len(points_m))
    F = np.zeros((len(points_m), 3))
    if ok.any():
        U[ok], F[ok] = analysis.point_probe.energy_and_force(points_m[ok])
    return U, F, ok


def allowed_force(scene, force) -> np.ndarray:
    """The part of forces (N, 3) that the scene's constraint does not take up.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene
    force : array_like, shape (N, 3)

    Returns
    -------
    numpy.ndarray, shape (N, 3)
    """
    return projected_force(force, allowed_basis(scene.constraint))


def guide_direction(scene) -> np.ndarray:
    """The direction of a family of parallel guide lines: the constraint's line, else up
    (against gravity), else world z.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene

    Returns
    -------
    numpy.ndarray, shape (3,)
        A unit vector.
    """
    constraint = scene.constraint
    if constraint.kind == "line":
        direction = np.asarray(constraint.direction, float)
    else:
        gravity = np.asarray(scene.gravity, float)
        direction = -gravity if np.linalg.norm(gravity) > 0 else np.array([0.0, 0.0, 1.0])
    return direction / np.linalg.norm(direction)


def trap_markers(report, scene) -> list:
    """The equilibria of a trap report as a view marks them.

    Parameters
    ----------
    report : trapscape.physics.traps.search.TrapReport or None
    scene : trapscape.scene.model.Scene
        For the length unit.

    Returns
    -------
    list of ViewEquilibrium
        In the report's order, numbered from 1; empty without a report.
    """
    if report is None:
        return []
    result = []
    for number, record in enumerate(report.equilibria, start=1):
        escape = record.escape
        contact = record.contact
        result.append(ViewEquilibrium(
            number=number, position=np.asarray(record.position, float) / scene.unit_scale,
            kind=str(record.classification),
            escape_force_N=_finite_or_none(escape.force_N if escape is not None else None),
            contact=contact.surface if contact is not None else None, source=record,
            closed_in=escape is not None and escape.exit is None,
        ))
    return result


def family_markers(report, scene) -> list:
    """One marker per family of a trap report: its representative, numbered by the family.

    Parameters
    ----------
    report : trapscape.physics.traps.search.TrapReport or None
    scene : trapscape.scene.model.Scene
        For the length unit.

    Returns
    -------
    list of ViewEquilibrium
        In the order of the families (their numbers, as `traps` prints them), each with the
        family's member count and description; empty without a report. A report without
        families (none formed) gives one marker per equilibrium.
    """
    if report is None:
        return []
    if not report.families:
        return trap_markers(report, scene)
    every = trap_markers(report, scene)
    return [replace(every[f.representative], number=f.number, count=len(f.members),
                    family=describe_family(f, report, scene)) for f in report.families]


def headline_of(equilibria):
    """The equilibrium a customer asks about first.

    Parameters
    ----------
    equilibria : list of ViewEquilibrium

    Returns
    -------
    ViewEquilibrium or None
        The firmest stable one, else a marginal one, else the first; None if there is none.
    """
    if not equilibria:
        return None
    for kind in ("stable", "marginal"):
        chosen = [e for e in equilibria if e.kind == kind]
        if chosen:
            return max(chosen, key=lambda e: e.escape_force_N or 0.0)
    return equilibria[0]


def _finite_or_none(value):
    if value is None:
        return None
    value = float(value)
    return value if np.isfinite(value) else None
