"""The probe's energy and force along one line of the scene, for the report's plot and for the
push that dislodges a trapped probe either way along its guide line: the guide line itself, or
across the guide plane (or vertically, for a free probe) through the main trap."""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trapscape.physics.analysis.display_units import DisplayUnits
from trapscape.physics.analysis.trap_words import (describe_position, direction_words,
                                                   headline_equilibrium, probe_weight_N,
                                                   scene_size)
from trapscape.physics.analysis.views import guide_direction, probe_energy_and_force

SAMPLES = 801  # along the line: about a thousandth of the box per step, enough for a plot


@dataclass(frozen=True)
class LineSamples:
    """The point probe along a line (SI): s (N,) m from `origin` along `direction`, energy
    (N,) J, force (N,) N along the direction (field and gravity), fits (N,) bool."""

    origin: np.ndarray
    direction: np.ndarray
    s: np.ndarray
    energy: np.ndarray
    force: np.ndarray
    fits: np.ndarray

    def index_of(self, point) -> int:
        """The sample nearest to where a point projects on the line.

        Parameters
        ----------
        point : array_like, shape (3,)
            m.

        Returns
        -------
        int
        """
        return int(np.argmin(np.abs(self.s - (np.asarray(point) - self.origin) @ self.direction)))


@dataclass(frozen=True)
class Push:
    """The push (N) that moves a trapped probe over its barrier one way along the line; None
    when it cannot go that way (a part or wall is in the way: `blocked`), `to_edge` when it is
    held all the way to the search box's edge."""

    force_N: float | None
    blocked: bool = False
    to_edge: bool = False


@dataclass(frozen=True)
class Profile:
    """What the profile plot draws, in display units (energy in J)."""

    caption: str
    axis_label: str
    s: np.ndarray
    energy_J: np.ndarray  # NaN where the probe does not fit
    force: np.ndarray  # along the line, display force unit; NaN where the probe does not fit
    weight: float  # display force unit; 0 without gravity
    traps: tuple  # of (s, class, family number)
    positive_words: str  # what +s means: "up", "towards +x"


def line_through(analysis, report):
    """The report's line: the guide line; across the guide plane through the main trap towards
    its way out; or vertical through the main trap of a free probe.

    Parameters
    ----------
    analysis : trapscape.physics.analysis.run.Analysis
    report : trapscape.physics.traps.search.TrapReport

    Returns
    -------
    tuple of (numpy.ndarray (3,), numpy.ndarray (3,), str)
        A point of it (m), its unit direction, and how it was chosen in words.
    """
    scene = analysis.scene
    constraint = scene.constraint
    if constraint.kind == "line":
        direction = np.asarray(constraint.direction, float)
        return np.asarray(constraint.point, float), direction / np.linalg.norm(direction), \
            "along the guide line"
    eq = headline_equilibrium(report)
    box = scene.search_box
    origin = (np.asarray(eq.position, float) if eq is not None
              else (np.asarray(box.min) + np.asarray(box.max)) / 2)
    if constraint.kind == "free":
        return origin, guide_direction(scene), "vertically through the main trap"
    normal = np.asarray(constraint.direction, float)
    normal = normal / np.linalg.norm(normal)
    wanted = np.array([1.0, 0.0, 0.0])
    if eq is not None and eq.escape is not None and eq.escape.pass_position is not None:
        towards = np.asarray(eq.escape.pass_position, float) - origin
        if np.linalg.norm(towards - (towards @ normal) * normal) > 0:
            wanted = towards
    direction = wanted - (wanted @ normal) * normal
    if np.linalg.norm(direction) < 1e-9:
        direction = np.array([0.0, 1.0, 0.0]) - normal[1] * normal
    return origin, direction / np.linalg.norm(direction), \
        "across the guide plane through the main trap, towards its way out"


def sample_line(analysis, origin, direction, count: int = SAMPLES) -> LineSamples:
    """The point probe's energy and force along the line inside the search box.

    Parameters
    ----------
    analysis : trapscape.physics.analysis.run.Analysis
    origin, direction : array_like, shape (3,)
        A point of the line and its unit direction, m.
    count : int

    Returns
    -------
    LineSamples
    """
    box = analysis.scene.search_box
    low, high = _clip(origin, direction, np.asarray(box.min), np.asarray(box.max))
    s = np.linspace(low, high, count)
    points = origin + s[:, None] * direction
    energy, force, fits = probe_energy_and_force(analysis, points)
    return LineSamples(origin=np.asarray(origin, float), direction=np.asarray(direction, float),
                       s=s, energy=energy, force=force @ direction, fits=fits)


def _clip(origin, direction, low, high):
    """The parameter range of the line inside the box (slab method)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        t1 = (low - origin) / direction
        t2 = (high - origin) / direction
    moving = np.abs(direction) > 1e-12
    start = np.max(np.where(moving, np.minimum(t1, t2), -np.inf))
    stop = np.min(np.where(moving, np.maximum(t1, t2), np.inf))
    return float(start), float(stop)


def push_out(samples: LineSamples, start: int, step: int) -> Push:
    """The push that moves the probe from sample `start` over its barrier towards `step` (+1 or
    -1): the largest restoring force met before the force turns to push it on (past the top of
    the barrier).

    Parameters
    ----------
    samples : LineSamples
    start : int
        The trap's sample.
    step : int
        +1 (along the direction) or -1.

    Returns
    -------
    Push
    """
    restoring = -step * samples.force  # positive: pulls back towards the trap
    largest = 0.0
    index = start + step
    while 0 <= index < len(samples.s):
        if not samples.fits[index]:
            return Push(None, blocked=True)
        if restoring[index] < 0.0:
            return Push(largest)
        largest = max(largest, float(restoring[index]))
        index += step
    return Push(largest, to_edge=True)


def way_words(scene, direction) -> tuple:
    """What moving along and against a direction means to a reader.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene
        For gravity.
    direction : numpy.ndarray, shape (3,)
        A unit vector.

    Returns
    -------
    tuple of (str, str)
        "up"/"down" within 10 degrees of gravity, else "towards +x"-style words.
    """
    gravity = np.asarray(scene.gravity, float)
    if np.linalg.norm(gravity) > 0:
        along = float(direction @ gravity) / np.linalg.norm(gravity)
        if abs(along) > np.cos(np.radians(10.0)):
            return ("down", "up") if along > 0 else ("up", "down")
    name = direction_words(direction)
    if name in ("x", "y", "z"):
        sign = 1 if direction["xyz".index(name)] > 0 else -1
        return ((f"towards +{name}", f"towards -{name}") if sign > 0
                else (f"towards -{name}", f"towards +{name}"))
    return f"along {name}", f"against {name}"


def report_line(analysis, report):
    """(LineSamples, how the line was chosen in words): the line the report plots along.

    Parameters
    ----------
    analysis : trapscape.physics.analysis.run.Analysis
    report : trapscape.physics.traps.search.TrapReport

    Returns
    -------
    tuple of (LineSamples, str)
    """
    origin, direction, how = line_through(analysis, report)
    return sample_line(analysis, origin, direction), how


def guide_profile(scene, report, units: DisplayUnits, samples: LineSamples,
                  how: str) -> Profile | None:
    """The profile plot's data along the report's line.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene
    report : trapscape.physics.traps.search.TrapReport
    units : DisplayUnits
    samples : LineSamples
        From `report_line`.
    how : str
        How the line was chosen, in words.

    Returns
    -------
    Profile or None
        None when the probe fits nowhere on the line.
    """
    if not samples.fits.any():
        return None
    origin, direction = samples.origin, samples.direction
    traps = []
    reach = 2.0 * float(samples.s[1] - samples.s[0])
    for family in report.families:
        eq = report.equilibria[family.representative]
        offset = np.asarray(eq.position, float) - origin
        along = float(offset @ direction)
        if np.linalg.norm(offset - along * direction) <= max(reach, scene.probe.diameter / 4):
            traps.append((units.L(along), family.classification, family.number))
    plus, _ = way_words(scene, direction)
    size = units.L(scene_size(scene) * scene.unit_scale)
    where = describe_position(units.L(origin), units.length_label, size)
    nan = np.where(samples.fits, 1.0, np.nan)
    return Profile(
        caption=f"The probe {how} (through {where}, s = 0 there; +s is {plus})",
        axis_label=f"s, position along the line ({units.length_label}), +s {plus}",
        s=units.L(samples.s), energy_J=samples.energy * nan,
        force=units.F(samples.force) * nan, weight=units.F(probe_weight_N(scene)),
        traps=tuple(traps), positive_words=plus)
