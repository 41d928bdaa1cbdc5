"""Layer "isosurfaces": by default, the surface of equal probe energy that bounds each stable
trap's catchment (the level its flood stops at, from the trap report's scan grid: the level of
the way out); with --iso, surfaces of equal field energy density u = B^2 / (2 mu0) (J/m^3), each
also labelled with the |B| it corresponds to (Jackson, Classical Electrodynamics 3rd ed.,
eq. 5.148, in vacuum). Each surface has its own colour, apart from the magnets' greys and the
field map, and is drawn translucent so the magnets show through."""
from __future__ import annotations

import numpy as np
from scipy import ndimage

from trapscape.scene.errors import SceneError
from trapscape.scene.units import MU0
from trapscape.viewers.layers.cutaway import active, towards_camera

NICE = (1.0, 2.0, 5.0)
QUANTILES = (0.8, 0.93, 0.985)  # of |B| over the free part of the box: wide, middle, close shells
COLOURS = ("#009988", "#ee3377", "#33bbee", "#aa3377")  # Tol's vibrant: not grey, not cividis
OPACITY = 0.3
MAX_WELLS = 4  # catchments drawn, the firmest traps first
MIN_CELLS = 8  # a well of fewer scan cells is too small to draw as a surface


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


def describe_energy(joules: float) -> str:
    magnitude = abs(joules)
    for factor, unit in ((1.0, "J"), (1e-3, "mJ"), (1e-6, "µJ"), (1e-9, "nJ"), (1e-12, "pJ")):
        if magnitude >= factor or unit == "pJ":
            return f"{joules / factor:.3g} {unit}"
    return f"{joules:.3g} J"


def well_shells(ctx) -> list:
    """[(equilibrium, level J, surface)]: for the firmest stable traps of a free probe, the
    surface of the probe's energy at the level where its flooded well stops (between the
    highest flooded cell and the lowest unflooded neighbour: the way out), closed around that
    well only. Interpolated on the trap report's scan grid, so the surface is smooth where
    the well's cells are a staircase."""
    cache = ctx.made.get("well shells")
    if cache is not None:
        return cache
    report = ctx.trap_report
    result = []
    if report is not None and report.grid.kind == "free":
        from trapscape.viewers.layers.markers import ranked

        grid = report.grid
        shape = tuple(int(n) for n in grid.shape)
        energy = _filled(np.asarray(grid.energy_J, float).reshape(shape),
                         np.asarray(grid.admissible, bool).reshape(shape))
        for equilibrium in ranked(ctx.equilibria):
            well = getattr(equilibrium.source, "well", None)
            if equilibrium.kind != "stable" or well is None or len(result) >= MAX_WELLS:
                continue
            mask = np.asarray(well.cells, bool).reshape(shape)
            if mask.sum() < MIN_CELLS:
                continue
            shell, level = _shell(ctx, grid, energy, mask, equilibrium)
            if shell is not None:
                result.append((equilibrium, level, shell))
    ctx.made["well shells"] = result
    return result


def _filled(energy, admissible):
    """Energies where the probe does not fit taken from the nearest cell where it does, so
    the contour does not jump at the magnets' skin."""
    if admissible.all() or not admissible.any():
        return energy
    _, nearest = ndimage.distance_transform_edt(~admissible, return_indices=True)
    return energy[tuple(nearest)]


def _shell(ctx, grid, energy, mask, equilibrium):
    import pyvista as pv

    rim = ndimage.binary_dilation(mask) & ~mask
    inside_top = float(energy[mask].max())
    level = inside_top if not rim.any() else 0.5 * (inside_top + float(energy[rim].min()))
    if not np.isfinite(level):
        return None, None
    near = ndimage.binary_dilation(mask, iterations=2)
    # away from this well the field is lifted above the level, so the surface closes round it
    span = float(np.ptp(energy[near])) + 1e-30
    values = np.where(near, energy, level + span)
    padded = np.pad(values, 1, constant_values=level + span)
    spacing = float(ctx.to_units(grid.spacing))
    image = pv.ImageData(dimensions=padded.shape, spacing=(spacing,) * 3,
                         origin=(-spacing,) * 3)
    image.point_data["U"] = padded.ravel(order="F")  # VTK: first axis fastest
    shell = image.contour([level], scalars="U")
    if shell.n_points == 0:
        return None, None
    shell = shell.smooth_taubin(n_iter=15, pass_band=0.1)
    shell.points = ctx.to_units(grid.origin) + np.asarray(shell.points) @ np.asarray(grid.axes, float)
    shell.point_data.clear()
    return shell.clean(), level


def _chosen(ctx):
    """[(legend text, ASCII name, [surfaces])] the layer shows: --iso shells, else the wells' catchments
    (wells at one level, as symmetric traps have, share a colour and a line), else (no well to
    take a level from) |B| shells across the box."""
    if getattr(ctx, "iso_levels_T", None):
        return [(label(level), f"{level * 1e3:.4g} mT", [shell])
                for level, shell in surfaces(ctx, ctx.iso_levels_T)]
    wells = well_shells(ctx)
    if wells:
        groups = []
        for equilibrium, level, shell in wells:
            for group in groups:
                if abs(level - group[0]) <= 0.02 * abs(group[0]):
                    group[1].append(equilibrium.number)
                    group[2].append(shell)
                    break
            else:
                groups.append([level, [equilibrium.number], [shell]])
        result = []
        for level, numbers, shells in groups:
            traps = f"trap{'s' if len(numbers) > 1 else ''} {', '.join(str(n) for n in numbers)}"
            result.append((f"edge of the catchment of {traps} (probe energy "
                           f"{describe_energy(level)})", f"catchment of {traps}", shells))
        return result
    levels = auto_levels_T(ctx)
    return [(label(level), f"{level * 1e3:.4g} mT", [shell])
            for level, shell in surfaces(ctx, levels)] if levels else []


def meshes(ctx) -> dict:
    """Geometry for exports, named in ASCII (VTK's string arrays take nothing else)."""
    return {f"isosurface {name}" + (f" part {i + 1}" if len(shells) > 1 else ""): shell
            for _, name, shells in _chosen(ctx) for i, shell in enumerate(shells)}


def draw(plotter, ctx, legend, colour_scale=None) -> None:
    chosen = _chosen(ctx)
    if not chosen:
        ctx.note("isosurfaces: no level crosses the search box.")
        return
    for index, (text, _, shells) in enumerate(chosen):
        colour = COLOURS[index % len(COLOURS)]
        for shell in shells:
            if active(ctx):
                shell = shell.clip(normal=towards_camera(ctx),
                                   origin=ctx.section.normal * ctx.section.level, invert=True)
                if shell.n_points == 0:
                    continue
            plotter.add_mesh(shell, color=colour, opacity=OPACITY, smooth_shading=True,
                             specular=0.2, ambient=0.2)
        legend.add(text, colour, "rectangle")
