"""Holding on steel: the pull of the magnets on a steel plate against the air gap, the slip
force, the peel torque and the plate-saturation warning.

The plate is a perfect magnetic mirror (DESIGN.md, Physics): the magnets are pulled by their
images. The whole assembly (or one named part) is moved along the plate's normal so that its
nearest surface is `gap` from the face; the pull is the force component towards the plate.
- Whole assembly: the force on the rigid assembly is the sum over its parts of the force of
  the images alone (internal forces cancel, Newton's third law); one part: the force of every
  other source on it (the other magnets stay where they are).
- Several plates: each magnet has one image in each plate (first order: no image of an image),
  and the gap and the pull refer to the plate nearest the moving parts (or the one named).
- Slip: friction x pull, the usual estimate for a magnet sliding on steel (common practice);
  real coefficients vary with paint, oil and surface finish.
- Peel torque: the moment about the weakest edge of the footprint that tips the assembly off,
  at the onset of tipping: pull x (distance from the centre of pull to the nearest support line
  of the footprint, from the parts' exact support functions: sampled over 720 directions, the
  smallest refined by bounded minimisation); the centre of pull is where
  the normal force's line of action crosses the face (from the image torque). As the far side
  lifts the pull moves towards the pivot and falls, so this is the largest moment needed.
- Saturation: physics/saturation.py. The mirror model overstates the pull where the plate
  saturates or is thin.
"""
from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from trapscape.physics.field.model import FieldModel
from trapscape.physics.field.parts import bounding_diagonal
from trapscape.physics.holding.forces import (
    force_on_part,
    lowest_point,
    torque_reference,
)
from trapscape.physics.holding.saturation import footprint, plate_flux_density
from trapscape.scene.model import frozen_array

PEEL_DIRECTIONS = 720
PEEL_REFINED = 3  # sampled local minima refined (a polygon's lever can tie at several edges)
ONSET_STEPS = 40  # bisection steps at most when looking for the gap where saturation starts


@dataclass(frozen=True)
class HoldRow:
    gap: float  # m
    pull: float  # N, normal to the plate, positive towards it
    slip: float | None  # N, friction x pull (None without a friction coefficient)
    peel_torque: float | None  # N m (None when the parts are not pulled to the plate)
    plate_flux_density: float  # T, the estimate of physics/saturation.py
    saturation_warning: bool


def choose_plate(scene, plate: str | None = None, moving=None):
    """(index, plate): the named plate, or the one nearest the moving parts.

    Raises ValueError when the scene has no steel plate or none of that name (physics.analysis
    words it for the user)."""
    if not scene.plates:
        raise ValueError("the scene has no steel plate to pull on")
    if plate is not None:
        names = [p.name for p in scene.plates]
        if plate not in names:
            raise ValueError(f"no steel plate named {plate!r}; the plates are {names}")
        return names.index(plate), scene.plates[names.index(plate)]
    moving = range(len(scene.magnets)) if moving is None else moving
    distances = [min(current_gap(scene, [i], p) for i in moving) for p in scene.plates]
    index = int(np.argmin(distances))
    return index, scene.plates[index]


def moving_parts(scene, part: str | None = None) -> list[int]:
    """Indices of the magnets that move: all of them, or the one named (ValueError if the scene
    has no magnet or none of that name)."""
    if not scene.magnets:
        raise ValueError("the scene has no magnet to pull")
    if part is None:
        return list(range(len(scene.magnets)))
    names = [m.name for m in scene.magnets]
    if part not in names:
        raise ValueError(f"no magnet named {part!r}; the magnets are {names}")
    return [names.index(part)]


def current_gap(scene, moving, plate) -> float:
    """Distance from the plate's face to the nearest surface of the moving parts, m."""
    face = float(np.asarray(plate.point) @ plate.normal)
    return min(lowest_point(scene.magnets[i], plate.normal) for i in moving) - face


def placed_at_gap(scene, moving, plate, gap: float):
    """The scene with the moving parts shifted along the plate's normal to the given gap."""
    shift = (gap - current_gap(scene, moving, plate)) * np.asarray(plate.normal, float)
    magnets = list(scene.magnets)
    for i in moving:
        magnets[i] = replace(magnets[i], position=frozen_array(magnets[i].position + shift, (3,)))
    return replace(scene, magnets=tuple(magnets))


def force_and_torque(scene, moving, about, rtol: float = 1e-6):
    """Force (3,) N on the moving parts and torque (3,) N m about the point `about` (see the
    module docstring for which sources act), with the field model used."""
    model = FieldModel.from_scene(scene)
    whole = len(moving) == len(scene.magnets)
    force, torque = np.zeros(3), np.zeros(3)
    for i in moving:
        f, t = force_on_part(model, i, images_only=whole, rtol=rtol)
        force += f
        torque += t + np.cross(torque_reference(scene.magnets[i]) - about, f)
    return force, torque, model


def peel_lever(shadow, centre) -> float:
    """Distance from a point of the face to the nearest support line of the footprint's hull.

    min over directions d of h(d) - d . c, h the shadow's exact support function (derived
    here; R. Schneider, Convex Bodies, 2nd ed., 1.7): sampled, then the smallest local minima
    refined with a bounded Brent search to 1e-12 rad.

    Parameters
    ----------
    shadow : trapscape.physics.holding.saturation.Footprint
        The moving parts' footprint (its parts give the outline).
    centre : numpy.ndarray, shape (2,)
        The point in plate coordinates, m.

    Returns
    -------
    float
        m; negative when the point lies outside the footprint's hull.
    """
    centre = np.asarray(centre, float)

    def distance(angles):
        directions = np.stack([np.cos(angles), np.sin(angles)], axis=-1).reshape(-1, 2)
        return shadow.support(directions) - directions @ centre

    step = 2.0 * np.pi / PEEL_DIRECTIONS
    angles = np.arange(PEEL_DIRECTIONS) * step
    sampled = distance(angles)
    local = np.flatnonzero((sampled <= np.roll(sampled, 1)) & (sampled <= np.roll(sampled, -1)))
    best = float(sampled.min())
    from scipy.optimize import minimize_scalar  # here: scipy.optimize costs every start 0.6 s

    for k in local[np.argsort(sampled[local])][:PEEL_REFINED]:
        found = minimize_scalar(lambda a: float(distance(np.array([a]))[0]),
                                bounds=(angles[k] - step, angles[k] + step), method="bounded",
                                options={"xatol": 1e-12})
        best = min(best, float(found.fun))
    return best


def peel_torque(pull: float, torque, shadow, about) -> float | None:
    """Pull x the distance from the centre of pull to the footprint's nearest support line.

    Parameters
    ----------
    pull : float
        N, towards the plate.
    torque : numpy.ndarray, shape (3,)
        N m about ``about``.
    shadow : trapscape.physics.holding.saturation.Footprint
        The moving parts' footprint.
    about : numpy.ndarray, shape (3,)
        The torque's reference point on the face, m.

    Returns
    -------
    float or None
        N m; None when the parts are not pulled to the plate.
    """
    if pull <= 0.0 or not shadow.magnets:
        return None
    n = shadow.normal
    # T = a x (-pull n) for a normal force at offset a in the face: a = -(n x T) / pull
    offset = -np.cross(n, torque) / pull
    centre = (np.asarray(about) + offset - shadow.origin) @ shadow.axes.T
    return pull * max(peel_lever(shadow, centre), 0.0)


def _reference_point(scene, moving, plate) -> np.ndarray:
    """The moving parts' mean centre, projected onto the plate's face."""
    centre = np.mean([scene.magnets[i].position for i in moving], axis=0)
    n = np.asarray(plate.normal, float)
    return centre - ((centre - plate.point) @ n) * n


def hold_at(scene, moving, plate, shadow, gap: float, friction=None, rtol: float = 1e-6) -> HoldRow:
    """One row of the pull curve at one gap (m)."""
    placed = placed_at_gap(scene, moving, plate, gap)
    about = _reference_point(placed, moving, plate)
    force, torque, model = force_and_torque(placed, moving, about, rtol)
    pull = float(-force @ plate.normal)
    B_plate = plate_flux_density(model, shadow, plate.thickness)
    return HoldRow(
        gap=float(gap), pull=pull,
        slip=None if friction is None else float(friction) * max(pull, 0.0),
        peel_torque=peel_torque(pull, torque, shadow, about),
        plate_flux_density=B_plate, saturation_warning=bool(B_plate > plate.saturation))


def checked_gaps(gaps, friction=None) -> np.ndarray:
    """The gaps (m) as a flat array; ValueError unless they are finite and >= 0 and the friction
    coefficient (if any) is finite and >= 0."""
    gaps = np.asarray(gaps, float).ravel()
    if not len(gaps) or not np.all(np.isfinite(gaps)) or (gaps < 0).any():
        raise ValueError("gaps must be finite numbers >= 0")
    if friction is not None and not (np.isfinite(friction) and friction >= 0):
        raise ValueError(f"the friction coefficient must be a finite number >= 0, not {friction}")
    return gaps


def pull_curve(scene, gaps, part=None, friction=None, progress=None, plate=None,
               rtol: float = 1e-6) -> list[HoldRow]:
    """The pull (and slip, peel torque, saturation estimate) at each gap (m) of the whole
    assembly, or of one named part, on the nearest (or the named) steel plate."""
    gaps = checked_gaps(gaps, friction)
    moving = moving_parts(scene, part)
    _, chosen = choose_plate(scene, plate, moving)
    shadow = footprint([scene.magnets[i] for i in moving], chosen)
    rows = []
    for k, gap in enumerate(gaps):
        rows.append(hold_at(scene, moving, chosen, shadow, gap, friction, rtol))
        if progress is not None:
            progress(k + 1, len(gaps))
    return rows


def saturation_onset_gap(scene, part=None, plate=None, relative: float = 1e-3) -> float | None:
    """The gap (m) below which the plate-saturation warning holds (None: never, even in
    contact). The estimate falls with the gap; found by bisection."""
    moving = moving_parts(scene, part)
    _, chosen = choose_plate(scene, plate, moving)
    shadow = footprint([scene.magnets[i] for i in moving], chosen)

    def saturated(gap):
        model = FieldModel.from_scene(placed_at_gap(scene, moving, chosen, gap))
        return plate_flux_density(model, shadow, chosen.thickness) > chosen.saturation

    if not saturated(0.0):
        return None
    low = 0.0
    high = max(bounding_diagonal(scene.magnets[i]) for i in moving)
    for _ in range(ONSET_STEPS):
        if not saturated(high):
            break
        low, high = high, 2.0 * high
    else:
        return high
    for _ in range(ONSET_STEPS):
        if high - low <= relative * high:
            break
        middle = (low + high) / 2.0
        low, high = (middle, high) if saturated(middle) else (low, middle)
    return (low + high) / 2.0
