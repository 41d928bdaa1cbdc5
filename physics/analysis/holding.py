"""The hold analysis: the pull curve on a steel plate and the gap where the plate saturates,
with the user's mistakes (no plate, an unknown part or plate, a negative gap) said as the
command line's one-sentence SceneError rather than physics' ValueError."""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trapscape.physics.holding.pull import (checked_gaps, choose_plate, moving_parts, pull_curve,
                                            saturation_onset_gap)
from trapscape.scene.errors import SceneError


@dataclass(frozen=True)
class HoldResult:
    """A pull curve: the plate pulled on, the moving part (None: the whole assembly), the
    friction coefficient asked for, one physics.holding.pull.HoldRow per gap (SI) and the gap
    (m) below which the plate is expected to saturate (None: never)."""

    plate: object
    part: str | None
    friction: float | None
    rows: tuple
    saturation_onset_gap_m: float | None


def hold_analysis(scene, gaps_m, part=None, plate=None, friction=None, progress=None) -> HoldResult:
    """The pull of the assembly (or one part) on a steel plate at each gap.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene
        A loaded scene with at least one [[steel_plate]].
    gaps_m : array_like
        Air gaps in m, each >= 0.
    part : str, optional
        The magnet that moves (default: the whole assembly).
    plate : str, optional
        The plate pulled on (default: the one nearest the moving parts).
    friction : float, optional
        Friction coefficient on the plate, for the slip force.
    progress : callable, optional
        ``progress(done, total)`` after each gap.

    Returns
    -------
    HoldResult

    Raises
    ------
    SceneError
        The scene has no magnet or no steel plate, the part or plate is unknown, a gap is
        negative or the friction coefficient is; one sentence naming the file, part or flag.
    """
    moving, chosen = _moving_and_plate(scene, part, plate)
    try:
        gaps_m = checked_gaps(gaps_m)
    except ValueError:
        raise SceneError("gaps must be zero or positive numbers; e.g. --gap 0..5@11.") from None
    if friction is not None and not (np.isfinite(friction) and friction >= 0):
        raise SceneError(f"--friction {friction}: give a friction coefficient >= 0, e.g. 0.2.")
    rows = pull_curve(scene, gaps_m, part=part, friction=friction, plate=chosen.name,
                      progress=progress)
    onset = saturation_onset_gap(scene, part=part, plate=chosen.name)
    return HoldResult(plate=chosen, part=part, friction=friction, rows=tuple(rows),
                      saturation_onset_gap_m=onset)


def _moving_and_plate(scene, part, plate):
    where = scene.path or "the scene"
    if not scene.magnets:
        raise SceneError(f"{where} has no [[magnet]]; add one to compute a pull.")
    names = [m.name for m in scene.magnets]
    if part is not None and part not in names:
        raise SceneError(f"--part '{part}': no magnet of that name in {where}; "
                         f"use one of {', '.join(names)}.")
    if not scene.plates:
        raise SceneError(f"{where} has no [[steel_plate]]; add one (point, "
                         f"normal, thickness) to compute the pull on steel.")
    plates = [p.name for p in scene.plates]
    if plate is not None and plate not in plates:
        raise SceneError(f"no steel plate named '{plate}' in {where}; "
                         f"choose one of {', '.join(plates)}.")
    moving = moving_parts(scene, part)
    return moving, choose_plate(scene, plate, moving)[1]
