"""One analysis of one scene: the scene, its field model, the trap report, pull curves and field
values, each computed on first use and kept, so a command, a view and a report share them."""
from __future__ import annotations

from dataclasses import dataclass, replace
from functools import cached_property

import numpy as np

from trapscape.physics.analysis.holding import hold_analysis
from trapscape.physics.analysis.work_limits import check_search_work
from trapscape.physics.analysis.scale_checks import small_magnet_notes, with_plane_limits
from trapscape.physics.analysis.safety import (
    implant_surface,
    safety_figures,
    safety_json,
    shipping_json,
)
from trapscape.physics.analysis.results import (
    check_json,
    hold_json,
    json_ready,
    stamp,
    traps_json,
)
from trapscape.physics.field.model import FieldModel
from trapscape.physics.probe.laws import PointProbe, ProbeLaw
from trapscape.physics.traps.scan import SearchSetupError
from trapscape.physics.traps.search import find_traps
from trapscape.scene.errors import SceneError
from trapscape.scene.loader import load_scene, parse_overrides


@dataclass(frozen=True)
class FieldValues:
    """The field at points (SI): B (N, 3) in T, H (N, 3) in A/m (the magnets' applied field;
    inside a magnet B = mu0 (H + M)), in_model (N,) False behind a steel plate's face,
    inside_magnet (N,) the index of the magnet holding the point, -1 in air."""

    B: np.ndarray
    H: np.ndarray
    in_model: np.ndarray
    inside_magnet: np.ndarray


def without_rounding_noise(vectors, relative=1e-12, floor=1e-14) -> np.ndarray:
    """Field vectors with the summation's rounding noise set to 0.

    A component below `relative` of its own vector's length, or a vector shorter than `floor`
    of the longest in the set, is the rounding left where fields cancel (float64 sums carry
    about 1e-16 of the largest term), not a field.

    Parameters
    ----------
    vectors : ndarray, shape (N, 3)
    relative, floor : float

    Returns
    -------
    ndarray, shape (N, 3)
    """
    vectors = np.asarray(vectors, float)
    length = np.linalg.norm(vectors, axis=1, keepdims=True)
    largest = float(length.max()) if len(length) else 0.0
    noise = (np.abs(vectors) <= relative * length) | (length <= floor * largest)
    return np.where(noise, 0.0, vectors) + 0.0


def load_analysis(path, overrides=()) -> "Analysis":
    """Load a scene file and start its analysis.

    Parameters
    ----------
    path : str or os.PathLike
        The scene file (TOML).
    overrides : iterable of str or dict, optional
        ``--set`` overrides of [params]: ``["gap=4", ...]`` or ``{"gap": "4"}``.

    Returns
    -------
    Analysis
        Nothing is computed yet.

    Raises
    ------
    SceneError
        The file cannot be read or is not a valid scene, or an override is malformed.
    """
    if not isinstance(overrides, dict):
        overrides = parse_overrides(list(overrides))
    return Analysis(load_scene(path, overrides=overrides))


class Analysis:
    """The results of one scene, computed lazily and once.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene
        A loaded scene (SI).
    model : trapscape.physics.field.model.FieldModel, optional
        Its field model, if already built.
    """

    def __init__(self, scene, model=None):
        self.scene = scene
        if model is not None:
            self.__dict__["model"] = model
        self._traps = None
        self._holds = {}

    @cached_property
    def model(self):
        """The scene's FieldModel (built on first use)."""
        return FieldModel.from_scene(self.scene)

    @cached_property
    def safety(self):
        """The safety, handling and shipping figures (physics.analysis.safety.SafetyFigures)."""
        return safety_figures(self.scene)

    @cached_property
    def implant_surface(self):
        """The implant shell on many rays, for views and exports (physics.safety.implant.Shell)."""
        return implant_surface(self.safety)

    @cached_property
    def point_probe(self):
        """The scene's probe as a point model on the field model (physics.probe.laws)."""
        return PointProbe(self.model, ProbeLaw.from_scene(self.scene))

    def traps(self, progress=None, starts=None):
        """The trap report of the scene's probe, found on the first call.

        Parameters
        ----------
        progress : callable, optional
            ``progress(done, total, stage)`` during the scan of the first call.
        starts : array_like, shape (M, 3), optional
            Points (m) the search also refines from (a sweep's continuation); only the first
            call's are used.

        Returns
        -------
        trapscape.physics.traps.search.TrapReport
        """
        if self._traps is None:
            check_search_work(self.scene)  # before the model: its dipole lattices take time too
            try:
                report = find_traps(self.model, self.scene, progress=progress, starts=starts)
            except SearchSetupError as error:
                raise SceneError(str(error)) from None
            report = with_plane_limits(self.model, self.point_probe.law, report)
            notes = small_magnet_notes(self.scene, self.model)
            self._traps = replace(report, notes=tuple(report.notes) + tuple(notes))
        return self._traps

    def hold(self, gaps_m, part=None, plate=None, friction=None, progress=None):
        """The pull curve on a steel plate; the same request twice is computed once.

        Parameters
        ----------
        gaps_m : array_like
            Air gaps in m.
        part, plate : str, optional
            The moving magnet (default: all) and the plate (default: the nearest).
        friction : float, optional
            Friction coefficient, for the slip force.
        progress : callable, optional
            ``progress(done, total)`` after each gap of the first computation.

        Returns
        -------
        trapscape.physics.analysis.holding.HoldResult

        Raises
        ------
        SceneError
            See physics.analysis.holding.hold_analysis.
        """
        gaps = tuple(float(g) for g in np.asarray(gaps_m, float).ravel())
        key = (gaps, part, plate, friction)
        if key not in self._holds:
            self._holds[key] = hold_analysis(self.scene, gaps, part=part, plate=plate,
                                             friction=friction, progress=progress)
        return self._holds[key]

    def field_at(self, points_m, progress=None) -> FieldValues:
        """B, H and the in-model mask at points.

        Parameters
        ----------
        points_m : array_like, shape (N, 3)
            World points in m.
        progress : callable, optional
            ``progress(done, total)`` while the field is summed.

        Returns
        -------
        FieldValues
        """
        points = np.asarray(points_m, dtype=np.float64).reshape(-1, 3)
        H, B, owner = self.model.H_B_and_owner(points, progress=progress)
        return FieldValues(B=without_rounding_noise(B), H=without_rounding_noise(H),
                           in_model=self.model.in_model(points), inside_magnet=owner)

    # -- the JSON results (stamped and JSON-ready; see physics.analysis.results) -------------

    def check_result(self) -> dict:
        """The `check` result.

        Returns
        -------
        dict
            physics.analysis.results.check_json with its safety and shipping objects
            (physics.analysis.safety), stamped and JSON-ready.
        """
        payload = check_json(self.scene)
        payload["safety"] = safety_json(self.scene, self.safety)
        payload["shipping"] = shipping_json(self.scene, self.safety)
        return json_ready(stamp(self.scene, payload))

    def traps_result(self, progress=None, starts=None) -> dict:
        """The `traps` result (finds the traps if not done yet).

        Parameters
        ----------
        progress, starts : optional
            As for `traps`.

        Returns
        -------
        dict
            physics.analysis.results.traps_json, stamped and JSON-ready.
        """
        return json_ready(stamp(self.scene, traps_json(self.traps(progress, starts), self.scene)))

    def hold_result(self, gaps_m, part=None, plate=None, friction=None, progress=None) -> dict:
        """The `hold` result (computes the pull curve if not done yet).

        Parameters
        ----------
        gaps_m, part, plate, friction, progress
            As for `hold`.

        Returns
        -------
        dict
            physics.analysis.results.hold_json, stamped and JSON-ready.
        """
        result = self.hold(gaps_m, part=part, plate=plate, friction=friction, progress=progress)
        return json_ready(stamp(self.scene, hold_json(self.scene, result)))
