"""Layer "isosurfaces": surfaces of equal magnetic energy density u = B^2 / (2 mu0) (J/m^3), each
also labelled with the |B| it corresponds to (Jackson, Classical Electrodynamics 3rd ed.,
eq. 5.148, in vacuum)."""
from __future__ import annotations

import numpy as np

from trapscape.scene.errors import SceneError
from trapscape.scene.units import MU0
from trapscape.viewers.layers.cutaway import active, towards_camera

NICE = (1.0, 2.0, 5.0)
QUANTILES = (0.8, 0.93, 0.985)  # of |B| over the free part of the box: wide, middle, close shells


def energy_density(B_tesla):
    return np.asarray(B_tesla, float) ** 2 / (2.0 * MU0)


def B_of_energy(u):
    return np.sqrt(2.0 * MU0 * np.asarray(u, float))


def nice_round(value: float) -> float:
    """The 1-2-5 number nearest below or at value."""
    if value <= 0:
        return 0.0
    exponent = np.floor(np.log10(value))
    mantissa = value / 10**exponent
    best = max(n for n in NICE if n <= mantissa + 1e-9)
    return float(best * 10**exponent)


def auto_levels_T(ctx) -> list:
    """Up to three |B| levels (T) at nice values across the field in the box's free space."""
    grid = ctx.grid
    free = (np.asarray(grid["inside_magnet"]) < 0) & (np.asarray(grid["in_model"]) > 0)
    values = np.asarray(grid["B_abs_T"])[free]
    if values.size == 0:
        return []
    levels = sorted({nice_round(float(np.quantile(values, q))) for q in QUANTILES})
    return [b for b in levels if b > 0]


def parse_levels(text: str) -> list:
    """'20,50mT,0.1T,1000J/m3' -> |B| levels in T (a bare number is mT)."""
    levels = []
    for item in (t.strip() for t in text.split(",") if t.strip()):
        lowered = item.lower().replace(" ", "")
        try:
            if lowered.endswith(("j/m3", "j/m^3")):
                levels.append(float(B_of_energy(float(lowered.split("j")[0]))))
            elif lowered.endswith("mt"):
                levels.append(float(lowered[:-2]) * 1e-3)
            elif lowered.endswith("t"):
                levels.append(float(lowered[:-1]))
            else:
                levels.append(float(lowered) * 1e-3)
        except ValueError:
            raise SceneError(f"--iso {text!r}: {item!r} is not a level; write numbers in mT, "
                             "T or J/m3, e.g. --iso 20,50mT,1000J/m3.") from None
    if not levels or any(not 0 < level < float("inf") for level in levels):
        raise SceneError(f"--iso {text!r}: levels must be positive finite numbers, e.g. "
                         "--iso 20,50mT.")
    return sorted(levels)


def surfaces(ctx, levels_T) -> list:
    """[(B level in T, closed-as-can-be surface in scene unit)] of u at each level. Inside the
    magnets u is set above every level, so shells close around them instead of entering."""
    grid = ctx.grid.copy()
    u = energy_density(np.asarray(grid["B_abs_T"]))
    top = energy_density(max(levels_T)) * 10.0
    u = np.where(np.asarray(grid["inside_magnet"]) >= 0, max(top, u.max()), u)
    grid.point_data["u"] = u
    result = []
    for level in levels_T:
        shell = grid.contour([float(energy_density(level))], scalars="u")
        if shell.n_points:
            result.append((level, shell))
    return result


def label(level_T) -> str:
    u = float(energy_density(level_T))
    energy = f"{u:.0f}" if u >= 100 else f"{u:.3g}"
    return f"u = {energy} J/m³ (B = {level_T * 1e3:.3g} mT)"


def meshes(ctx) -> dict:
    levels = getattr(ctx, "iso_levels_T", None) or auto_levels_T(ctx)
    return {f"isosurface {level * 1e3:.4g} mT": shell for level, shell in surfaces(ctx, levels)}


def draw(plotter, ctx, legend, colour_scale) -> None:
    levels = getattr(ctx, "iso_levels_T", None) or auto_levels_T(ctx)
    shells = surfaces(ctx, levels)
    if not shells:
        ctx.note("isosurfaces: no level crosses the search box.")
        return
    opacities = np.linspace(0.15, 0.4, len(shells))  # outer shells fainter: the inner ones show
    for (level, shell), opacity in zip(shells, opacities):
        if active(ctx):
            shell = shell.clip(normal=towards_camera(ctx), origin=ctx.section.normal * ctx.section.level,
                               invert=True)
            if shell.n_points == 0:
                continue
        colour = colour_scale.colour_of(level * 1e3)
        plotter.add_mesh(shell, color=colour, opacity=float(opacity), smooth_shading=True,
                         specular=0.2)
        legend.add(label(level), colour, "rectangle")

