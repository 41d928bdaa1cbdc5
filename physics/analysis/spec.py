"""A screening spec: the figures a layout must meet, and how passing layouts are ranked.

The spec is a TOML file of our own format::

    title = "level gauge, bead held within 2 mm of the float's plane"
    [[require]]
    figure = "trap_along_line"      # a figure of FIGURES
    between = [-2, 2]               # or at_least = ..., at_most = ...
    [[require]]
    figure = "escape_over_weight"
    at_least = 3
    [[require]]
    figure = "B_at"                 # |B| at a point (the scene's unit), T
    point = [0, 0, 40]
    at_most = 0.005
    [rank]                          # score = sum of weight x figure / its median over the passing
    escape_over_weight = 1.0
    magnet_mass_g = -0.5            # negative: smaller is better

Figures come from the layout's analysis (physics.analysis.run): the main trap is the stable (or
marginal) equilibrium with the largest escape force; a layout with no stable trap has none of the
trap figures, and a requirement on a missing figure fails, naming it.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from trapscape.scene.errors import SceneError
from trapscape.scene.files import read_limited
from trapscape.scene.tomlfile import parse_toml

MAX_SPEC_BYTES = 1 << 20

TRAP_FIGURES = ("trap_along_line", "trap_x", "trap_y", "trap_z", "escape_force_N",
                "escape_over_weight", "smallest_stiffness_N_per_m")
FIGURES = TRAP_FIGURES + ("magnet_mass_g", "implant_distance", "largest_part_force_N",
                          "pull_N", "B_at")
NEEDS = {"pull_N": "gap", "B_at": "point"}  # figures that need one more key
BOUNDS = ("at_least", "at_most", "between")


@dataclass(frozen=True)
class Requirement:
    """One criterion: a figure (with its gap or point) within bounds."""

    figure: str
    low: float = -math.inf
    high: float = math.inf
    gap: float | None = None
    point: tuple | None = None

    @property
    def name(self) -> str:
        where = (f" at gap {self.gap:g}" if self.gap is not None else
                 f" at ({', '.join(f'{c:g}' for c in self.point)})" if self.point else "")
        bounds = (f"between {self.low:g} and {self.high:g}"
                  if math.isfinite(self.low) and math.isfinite(self.high) else
                  f"at least {self.low:g}" if math.isfinite(self.low) else f"at most {self.high:g}")
        return f"{self.figure}{where} {bounds}"

    @property
    def key(self) -> str:
        """The figure's column name (with its gap or point)."""
        if self.gap is not None:
            return f"pull_N@gap={self.gap:g}"
        if self.point is not None:
            return f"B_T@({','.join(f'{c:g}' for c in self.point)})"
        return self.figure


@dataclass(frozen=True)
class Spec:
    """The requirements and the ranking weights of a screening."""

    title: str
    requirements: tuple
    rank: dict

    def needs_traps(self) -> bool:
        return any(f in TRAP_FIGURES for f in self._figures())

    def needs_safety(self) -> bool:
        return any(f in ("implant_distance", "largest_part_force_N") for f in self._figures())

    def _figures(self):
        return [r.figure for r in self.requirements] + list(self.rank)


def load_spec(path) -> Spec:
    """Read and check a spec file.

    Parameters
    ----------
    path : str or os.PathLike

    Returns
    -------
    Spec

    Raises
    ------
    SceneError
        One sentence naming the file and the key at fault.
    """
    where = str(path)
    data = parse_toml(read_limited(path, MAX_SPEC_BYTES, "spec file", "give the spec's .toml "
                                   "file"), where)
    unknown = set(data) - {"title", "require", "rank"}
    if unknown:
        raise SceneError(f"{where}: unknown key {min(unknown)!r}; a spec has title, "
                         f"[[require]] and [rank].")
    requirements = tuple(_requirement(item, f"{where}, [[require]] {i + 1}")
                         for i, item in enumerate(data.get("require", [])))
    if not requirements:
        raise SceneError(f"{where}: no [[require]] table; a spec needs at least one.")
    rank = data.get("rank", {})
    for figure, weight in rank.items():
        if figure not in FIGURES or figure in NEEDS:
            raise SceneError(f"{where}, [rank]: {figure!r} is not a figure to rank by; use "
                             f"one of {', '.join(f for f in FIGURES if f not in NEEDS)}.")
        if not isinstance(weight, (int, float)) or not math.isfinite(weight):
            raise SceneError(f"{where}, [rank] {figure}: the weight must be a finite number.")
    return Spec(str(data.get("title", "")), requirements, {k: float(v) for k, v in rank.items()})


def _requirement(item, where) -> Requirement:
    if not isinstance(item, dict):
        raise SceneError(f"{where}: must be a table.")
    figure = item.get("figure")
    if figure not in FIGURES:
        raise SceneError(f"{where}: figure must be one of {', '.join(FIGURES)}.")
    allowed = {"figure", *BOUNDS, *([NEEDS[figure]] if figure in NEEDS else [])}
    extra = set(item) - allowed
    if extra:
        raise SceneError(f"{where}: unknown key {min(extra)!r} for {figure}.")
    low, high = -math.inf, math.inf
    if "between" in item:
        pair = item["between"]
        if not (isinstance(pair, list) and len(pair) == 2):
            raise SceneError(f"{where}: between = [LOW, HIGH].")
        low, high = (_number(v, where) for v in pair)
    low = _number(item["at_least"], where) if "at_least" in item else low
    high = _number(item["at_most"], where) if "at_most" in item else high
    if not (math.isfinite(low) or math.isfinite(high)) or low > high:
        raise SceneError(f"{where}: give at_least, at_most or between (LOW <= HIGH).")
    extra_key = NEEDS.get(figure)
    if extra_key and extra_key not in item:
        raise SceneError(f"{where}: {figure} needs {extra_key} = ...")
    gap = _number(item["gap"], where) if figure == "pull_N" else None
    point = None
    if figure == "B_at":
        value = item["point"]
        if not (isinstance(value, list) and len(value) == 3):
            raise SceneError(f"{where}: point = [x, y, z] in the scene's unit.")
        point = tuple(_number(v, where) for v in value)
    return Requirement(figure, low, high, gap, point)


def _number(value, where) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise SceneError(f"{where}: {value!r} is not a finite number.")
    return float(value)


def layout_figures(analysis, spec: Spec) -> dict:
    """The figures a spec asks for, computed on one layout (only what it needs).

    Parameters
    ----------
    analysis : Analysis
    spec : Spec

    Returns
    -------
    dict
        Figure key -> value (None where the layout has no such figure, e.g. no stable trap).
    """
    from trapscape.scene.measures import mass  # here: the spec alone loads no shapes (numba)

    scene = analysis.scene
    figures = {"magnet_mass_g": sum(mass(m) or 0.0 for m in scene.magnets) * 1e3}
    if spec.needs_traps():
        figures.update(_trap_figures(analysis))
    if spec.needs_safety():
        safety = analysis.check_result()["safety"]
        figures["implant_distance"] = safety["implant_distance_from_surface"]
        figures["largest_part_force_N"] = safety["largest_force_N"]
    for r in spec.requirements:
        if r.figure == "pull_N":
            result = analysis.hold(np.array([r.gap]) * scene.unit_scale)
            figures[r.key] = float(result.rows[0].pull)
        elif r.figure == "B_at":
            B = analysis.field_at(np.array([r.point]) * scene.unit_scale).B[0]
            figures[r.key] = float(np.linalg.norm(B))
    return figures


def _trap_figures(analysis) -> dict:
    report = analysis.traps()
    weight = float(np.linalg.norm(analysis.point_probe.law.gravity_force()))
    stable = [e for e in report.equilibria if e.classification in ("stable", "marginal")]
    held = [e for e in stable if e.escape is not None and e.escape.force_N is not None]
    if not held:
        return {f: None for f in TRAP_FIGURES}
    main = max(held, key=lambda e: e.escape.force_N)
    position = analysis.scene.to_file_units(main.position)
    k = [v for v in (main.stiffness_N_per_m or ()) if v is not None]
    return {
        "trap_along_line": (None if main.coordinate_m is None
                            else float(analysis.scene.to_file_units(main.coordinate_m))),
        "trap_x": float(position[0]), "trap_y": float(position[1]), "trap_z": float(position[2]),
        "escape_force_N": float(main.escape.force_N),
        "escape_over_weight": float(main.escape.force_N / weight) if weight > 0 else None,
        "smallest_stiffness_N_per_m": float(min(k)) if k else None,
    }


def verdict(spec: Spec, figures: dict) -> tuple:
    """Pass or fail, and the first failing requirement.

    Parameters
    ----------
    spec : Spec
    figures : dict
        layout_figures'.

    Returns
    -------
    passed : bool
    failing : str or None
        The first requirement not met, with the layout's value ("no value" when missing).
    """
    for r in spec.requirements:
        value = figures.get(r.key)
        if value is None:
            return False, f"{r.name}: no value (e.g. no stable trap)"
        if not r.low <= value <= r.high:
            return False, f"{r.name}: {value:.4g}"
    return True, None


def scores(spec: Spec, rows) -> list:
    """Each passing row's score: sum of weight x figure / its median over the passing rows
    (so weights compare figures of different units); None for failing rows.

    Parameters
    ----------
    spec : Spec
    rows : list of dict
        Each with "passed" and "figures".

    Returns
    -------
    list of float or None
    """
    passing = [r for r in rows if r.get("passed")]
    scale = {}
    for figure in spec.rank:
        values = [abs(r["figures"].get(figure)) for r in passing
                  if r["figures"].get(figure) is not None]
        scale[figure] = float(np.median(values)) if values and np.median(values) > 0 else 1.0
    result = []
    for r in rows:
        if not r.get("passed"):
            result.append(None)
            continue
        total = 0.0
        for figure, weight in spec.rank.items():
            value = r["figures"].get(figure)
            total += 0.0 if value is None else weight * value / scale[figure]
        result.append(total)
    return result
