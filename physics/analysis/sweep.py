"""A parameter sweep: the trap search at each value of one or two [params], each equilibrium
followed from step to step, and where a stable and an unstable one meet and vanish (a fold: the
trap is lost there) or appear together.

Following: the equilibria of neighbouring steps are matched by position within their class
(stable with stable, saddle or unstable with either of those), the nearest pairs first
(a linear assignment: H. W. Kuhn, Naval Research Logistics Quarterly 2, 83 (1955)), and never
farther than the match distance. A fold between two steps is a stable branch and an unstable one
that end (or start) at the same step, close to each other: the saddle-node bifurcation of an
equilibrium family (S. H. Strogatz, Nonlinear Dynamics and Chaos, 2nd ed. 2015, 3.1). It is
then narrowed by bisection on the parameter: at each midpoint the search says whether the pair
still exists near where it was.
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field

import numpy as np
from scipy.optimize import linear_sum_assignment

from trapscape.physics.analysis.run import load_analysis
from trapscape.physics.traps.notes import CAUTION  # noqa: F401  the sweep's outputs carry it
from trapscape.scene.errors import SceneError

VARY_FORM = re.compile(r"^\s*([A-Za-z_]\w*)\s*=\s*([^.@][^@]*?)\s*\.\.\s*([^@]+?)\s*@\s*(\d+)\s*$")
MAX_STEPS = 400  # a line of this many searches already takes minutes to hours
UNSTABLE = ("saddle", "unstable")


@dataclass(frozen=True)
class Vary:
    """One swept parameter: its name and the values it takes (the scene's unit)."""

    name: str
    values: tuple


def parse_vary(text: str) -> Vary:
    """``NAME=START..STOP@COUNT`` as a Vary (COUNT values, both ends included).

    Parameters
    ----------
    text : str

    Returns
    -------
    Vary

    Raises
    ------
    SceneError
        One sentence naming the form, when the text does not follow it.
    """
    match = VARY_FORM.match(text)
    if not match:
        raise SceneError(f"--vary {text!r}: write NAME=START..STOP@COUNT, e.g. gap=2..6@9.")
    name, start, stop, count = match.groups()
    try:
        start, stop = float(start), float(stop)
    except ValueError:
        raise SceneError(f"--vary {text!r}: START and STOP must be numbers.") from None
    count = int(count)
    if not (np.isfinite(start) and np.isfinite(stop)):
        raise SceneError(f"--vary {text!r}: START and STOP must be finite numbers.")
    if not 2 <= count <= MAX_STEPS or start == stop:
        raise SceneError(f"--vary {text!r}: COUNT must be 2 to {MAX_STEPS} and START differ "
                         f"from STOP.")
    return Vary(name, tuple(float(v) for v in np.linspace(start, stop, count)))


def grid_of(varies) -> list:
    """Every combination of the swept values, the first parameter varying fastest.

    Parameters
    ----------
    varies : sequence of Vary
        One or two.

    Returns
    -------
    list of dict
        {name: value} per step.
    """
    if not 1 <= len(varies) <= 2:
        raise SceneError("sweep: vary one parameter (a line) or two (a grid).")
    if len({v.name for v in varies}) != len(varies):
        raise SceneError("sweep: each --vary names a different parameter.")
    if len(varies) == 1:
        return [{varies[0].name: v} for v in varies[0].values]
    first, second = varies
    if len(first.values) * len(second.values) > MAX_STEPS:
        raise SceneError(f"sweep: {len(first.values)} x {len(second.values)} steps is more "
                         f"than {MAX_STEPS}; use fewer values.")
    return [{first.name: a, second.name: b} for b in second.values for a in first.values]


def step_result(scene_path: str, params: dict, base_overrides=(), starts=None) -> dict:
    """The trap search at one step: its equilibria and the probe's weight.

    Parameters
    ----------
    scene_path : str
    params : dict
        {name: value} of the swept parameters (the scene's unit).
    base_overrides : sequence of str
        The user's other ``--set`` overrides.
    starts : array_like, shape (M, 3), optional
        Positions (the scene's unit) the search also refines from: a neighbouring step's
        equilibria (continuation).

    Returns
    -------
    dict
        ``params``, ``equilibria`` (the traps JSON's), ``weight_N``, ``length_unit``; or
        ``params`` and ``error`` (one sentence) when the scene does not load at this step.
    """
    overrides = list(base_overrides) + [f"{k}={v!r}" for k, v in params.items()]
    try:
        analysis = load_analysis(scene_path, overrides)
        metres = None if starts is None else np.asarray(starts, float) * analysis.scene.unit_scale
        traps = analysis.traps_result(starts=metres)
        weight = float(np.linalg.norm(analysis.point_probe.law.gravity_force()))
    except SceneError as error:
        return {"params": params, "error": str(error)}
    return {"params": params, "equilibria": traps["equilibria"], "weight_N": weight,
            "length_unit": traps.get("length_unit", analysis.scene.units)}


@dataclass
class Track:
    """One equilibrium followed through the steps of a line.

    Attributes
    ----------
    number : int
        1, 2, ... in the order the tracks start.
    stable : bool
        Stable (or marginal) branch, else saddle or unstable.
    members : list of (int, int)
        (step, index of the equilibrium in that step's list).
    """

    number: int
    stable: bool
    members: list = field(default_factory=list)

    @property
    def first(self) -> int:
        return self.members[0][0]

    @property
    def last(self) -> int:
        return self.members[-1][0]


def _is_stable(eq) -> bool:
    return eq["class"] not in UNSTABLE


def _positions(step) -> np.ndarray:
    return np.array([e["position"] for e in step.get("equilibria", [])], float).reshape(-1, 3)


def track_line(steps, match_distance: float) -> list:
    """Follow the equilibria through a line of steps.

    Parameters
    ----------
    steps : sequence of dict
        step_result's, in the order of the parameter.
    match_distance : float
        The farthest an equilibrium may move between two steps and stay the same one (the
        scene's unit).

    Returns
    -------
    list of Track
    """
    tracks, open_tracks = [], {}  # open: index in the previous step -> Track
    previous = None
    for s, step in enumerate(steps):
        equilibria = step.get("equilibria", [])
        here = _positions(step)
        matched = {}
        if previous is not None and len(here) and len(previous):
            cost = np.linalg.norm(previous[:, None] - here[None], axis=2)
            stable_prev = [open_tracks[i].stable if i in open_tracks else None
                           for i in range(len(previous))]
            for i, stable in enumerate(stable_prev):
                for j, eq in enumerate(equilibria):
                    if stable is None or stable != _is_stable(eq):
                        cost[i, j] = np.inf
            finite = np.where(np.isfinite(cost), cost, 1e300)
            rows, cols = linear_sum_assignment(finite)
            matched = {int(j): open_tracks[int(i)] for i, j in zip(rows, cols)
                       if cost[i, j] <= match_distance}
        open_tracks = {}
        for j, eq in enumerate(equilibria):
            track = matched.get(j)
            if track is None:
                track = Track(len(tracks) + 1, _is_stable(eq))
                tracks.append(track)
            track.members.append((s, j))
            open_tracks[j] = track
        previous = here
    return tracks


@dataclass(frozen=True)
class Fold:
    """A stable and an unstable branch meeting between two steps.

    Attributes
    ----------
    kind : str
        "lost" (they end: the trap vanishes as the parameter grows) or "born" (they start).
    tracks : tuple of int
        The stable track's number, then the unstable one's.
    between : tuple of float
        The parameter's values on either side (after narrowing, if it was narrowed).
    position : tuple of float
        Midway between the two equilibria at the last step where both exist (scene unit).
    """

    kind: str
    tracks: tuple
    between: tuple
    position: tuple


def find_folds(steps, tracks, values, match_distance: float) -> list:
    """Pairs of a stable and an unstable track that end (or start) at the same step near each
    other.

    Parameters
    ----------
    steps : sequence of dict
    tracks : list of Track
    values : sequence of float
        The swept parameter at each step.
    match_distance : float
        Scene unit: how near the two must be where they end.

    Returns
    -------
    list of Fold
    """
    folds = []
    for kind, edge, other in (("lost", "last", 1), ("born", "first", -1)):
        paired = set()  # each unstable branch meets one stable branch
        for stable in (t for t in tracks if t.stable):
            s = getattr(stable, edge)
            if not 0 <= s + other < len(steps):
                continue
            partners = [t for t in tracks if not t.stable and getattr(t, edge) == s
                        and t.number not in paired]
            best = _nearest_partner(steps, stable, partners, s, match_distance)
            if best is None:
                continue
            paired.add(best.number)
            a = _position_at(steps, stable, s)
            b = _position_at(steps, best, s)
            lo, hi = sorted((values[s], values[s + other]))
            folds.append(Fold(kind, (stable.number, best.number), (lo, hi),
                              tuple((0.5 * (a + b)).tolist())))
    return folds


def _position_at(steps, track, s) -> np.ndarray:
    j = dict(track.members)[s]
    return np.asarray(steps[s]["equilibria"][j]["position"], float)


def _nearest_partner(steps, stable, partners, s, match_distance):
    here = _position_at(steps, stable, s)
    near = [(np.linalg.norm(_position_at(steps, t, s) - here), t) for t in partners]
    near = [(d, t) for d, t in near if d <= match_distance]
    return min(near, key=lambda pair: pair[0])[1] if near else None


def unexplained_ends(tracks, folds, n_steps: int) -> list:
    """Steps to search again from a neighbour's equilibria (continuation): next to the end of
    a track that no fold explains, where the independent searches may have missed the
    equilibrium (a cell the grid's sign test skipped).

    Parameters
    ----------
    tracks : list of Track
    folds : list of Fold
    n_steps : int

    Returns
    -------
    list of (int, tuple of int)
        (step to search again, the neighbouring steps whose equilibria to start from), in order.
    """
    in_folds = {number for f in folds for number in f.tracks}
    redo = {}
    for track in tracks:
        if track.number in in_folds:
            continue
        if track.last < n_steps - 1:
            redo.setdefault(track.last + 1, set()).add(track.last)
        if track.first > 0:
            redo.setdefault(track.first - 1, set()).add(track.first)
    return [(s, tuple(sorted(redo[s]))) for s in sorted(redo)]


def continued(steps, tracks, folds, search_from) -> tuple:
    """The steps after one round of continuation: each step next to an unexplained track end
    searched once again from its neighbours' equilibria, kept when it finds more equilibria.

    Parameters
    ----------
    steps : list of dict
        step_result's of one line.
    tracks, folds : lists of Track and Fold
        As found on `steps`.
    search_from : callable
        (step index, starts (M, 3) scene unit) -> step_result.

    Returns
    -------
    steps : list of dict
        A new list; a replaced step carries ``continued: true``.
    changed : list of int
        The steps replaced.
    """
    steps, changed = list(steps), []
    for s, neighbours in unexplained_ends(tracks, folds, len(steps)):
        if "error" in steps[s]:
            continue
        starts = np.vstack([_positions(steps[n]) for n in neighbours])  # errored steps: none
        again = search_from(s, starts)
        if len(again.get("equilibria", [])) > len(steps[s].get("equilibria", [])):
            steps[s] = {**again, "continued": True}
            changed.append(s)
    return steps, changed


def pair_near(step, position, match_distance: float):
    """A stable and an unstable equilibrium of a step near a position: their midpoint, or None.

    Parameters
    ----------
    step : dict
        A step_result.
    position : array_like, shape (3,)
        Scene unit.
    match_distance : float
        Scene unit.

    Returns
    -------
    ndarray, shape (3,) or None
        Scene unit: midway between the nearest stable and the nearest unstable one.
    """
    position = np.asarray(position, float)
    near = sorted(((np.linalg.norm(np.asarray(e["position"], float) - position), e)
                   for e in step.get("equilibria", [])), key=lambda pair: pair[0])
    stable = [e for d, e in near if d <= match_distance and _is_stable(e)]
    unstable = [e for d, e in near if d <= match_distance and not _is_stable(e)]
    if not (stable and unstable):
        return None
    return 0.5 * (np.asarray(stable[0]["position"], float) +
                  np.asarray(unstable[0]["position"], float))


def narrowed(fold: Fold, search, match_distance: float, rounds: int) -> Fold:
    """The fold's parameter interval halved `rounds` times by bisection.

    Parameters
    ----------
    fold : Fold
    search : callable
        value -> step_result at that value of the swept parameter.
    match_distance : float
        Scene unit.
    rounds : int

    Returns
    -------
    Fold
        With `between` narrowed (by 2**rounds, or less where the scene refuses a midpoint) and
        `position` the pair's last midpoint.
    """
    lo, hi = fold.between
    exists_at_lo = fold.kind == "lost"  # a lost pair exists below the fold, a born one above
    position = np.asarray(fold.position, float)
    for _ in range(rounds):
        mid = 0.5 * (lo + hi)
        step = search(mid)
        if "error" in step:  # e.g. a count that must be whole: the interval is as narrow as it gets
            break
        pair = pair_near(step, position, match_distance)
        if pair is not None:
            position = pair  # follow the pair as it closes
        if (pair is not None) == exists_at_lo:
            lo = mid
        else:
            hi = mid
    return Fold(fold.kind, fold.tracks, (lo, hi), tuple(position.tolist()))
