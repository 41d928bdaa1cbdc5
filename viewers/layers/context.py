"""What the layers draw from: the scene, its field model, field samples and the trap report.

Everything is computed on first use and kept, so a render and an export of the same scene share
the field samples. Lengths handed to pyvista are in the scene's unit (so scale bars, exports and
STL files read in the unit the user wrote); physics works in metres.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property

import numpy as np

from trapscape.scene.units import MU0

AXIS_NAMES = ("x", "y", "z")


@dataclass
class Section:
    """An axis-aligned section plane: normal along world axis `axis`, at `level` (scene unit)."""

    axis: int
    level: float

    @property
    def normal(self) -> np.ndarray:
        return np.eye(3)[self.axis]

    @property
    def name(self) -> str:
        level = 0.0 if abs(self.level) < 1e-9 else self.level
        return f"{AXIS_NAMES[self.axis]} = {level:.4g}"


@dataclass
class ViewContext:
    scene: object
    grid_resolution: int = 64  # points on the longest side of the 3D field grid
    section_resolution: int = 220  # points on the longest side of the section map
    progress: object = None  # callable(done, total) or None
    model: object = None
    section: Section | None = None
    _notes: list = field(default_factory=list)

    def __post_init__(self):
        if self.model is None:
            from trapscape.physics.field.model import FieldModel

            self.model = FieldModel.from_scene(self.scene)

    # -- units ------------------------------------------------------------------------------

    @property
    def unit(self) -> str:
        return self.scene.units

    @property
    def scale(self) -> float:
        """Metres per scene unit."""
        return self.scene.unit_scale

    def to_units(self, metres) -> np.ndarray:
        return np.asarray(metres, dtype=float) / self.scale

    def note(self, text: str) -> None:
        """Something the user should read (a layer left out and why); printed by the command."""
        if text not in self._notes:
            self._notes.append(text)

    @property
    def notes(self) -> list:
        return list(self._notes)

    # -- extents ----------------------------------------------------------------------------

    @cached_property
    def box_bounds(self) -> np.ndarray:
        """(2, 3) lower and upper corner of the search box, scene unit."""
        box = self.scene.search_box
        return np.array([self.to_units(box.min), self.to_units(box.max)])

    @cached_property
    def magnet_bounds(self) -> np.ndarray:
        from trapscape.viewers.layers.magnets import world_meshes

        meshes = world_meshes(self)
        if not meshes:
            return self.box_bounds
        lower = np.min([np.array(m.bounds).reshape(3, 2)[:, 0] for m in meshes], axis=0)
        upper = np.max([np.array(m.bounds).reshape(3, 2)[:, 1] for m in meshes], axis=0)
        return np.array([lower, upper])

    @property
    def size(self) -> float:
        """The length of the search box's diagonal, scene unit: the scale of glyphs and labels."""
        return float(np.linalg.norm(self.box_bounds[1] - self.box_bounds[0]))

    # -- the 3D field grid ------------------------------------------------------------------

    @cached_property
    def grid(self):
        """pyvista ImageData over the search box (scene unit) with B_T, B_abs_T, B_abs_mT,
        energy_density_J_per_m3 (B^2 / 2 mu0, vacuum field energy density, Jackson 3rd ed.
        eq. 5.148 with B = mu0 H outside matter), inside_magnet (-1 or the part index) and
        in_model (0 behind a steel plate)."""
        import pyvista as pv

        lower, upper = self.box_bounds
        spacing = float((upper - lower).max()) / (self.grid_resolution - 1)
        dims = np.maximum(np.floor((upper - lower) / spacing + 1e-9).astype(int) + 1, 2)
        grid = pv.ImageData(dimensions=tuple(int(d) for d in dims), spacing=(spacing,) * 3,
                            origin=tuple(lower))
        self._fill_field(grid)
        return grid

    def sample_grid(self, lower, upper, spacing):
        """An ImageData with the field arrays over an arbitrary box (scene unit), for exports."""
        import pyvista as pv

        lower, upper = np.asarray(lower, float), np.asarray(upper, float)
        dims = np.maximum(np.floor((upper - lower) / spacing + 1e-9).astype(int) + 1, 2)
        grid = pv.ImageData(dimensions=tuple(int(d) for d in dims), spacing=(spacing,) * 3,
                            origin=tuple(lower))
        self._fill_field(grid)
        return grid

    def _fill_field(self, dataset) -> None:
        points_m = np.asarray(dataset.points, dtype=float) * self.scale
        B = self.model.B(points_m, progress=self.progress)
        B_abs = np.linalg.norm(B, axis=1)
        dataset.point_data["B_T"] = B
        dataset.point_data["B_abs_T"] = B_abs
        dataset.point_data["B_abs_mT"] = B_abs * 1e3
        dataset.point_data["energy_density_J_per_m3"] = B_abs**2 / (2.0 * MU0)
        dataset.point_data["inside_magnet"] = self.model.inside_magnet(points_m).astype(np.int32)
        dataset.point_data["in_model"] = self.model.in_model(points_m).astype(np.uint8)

    def field_on(self, dataset):
        """Add the field arrays to any pyvista dataset (its points in scene unit) and return it."""
        self._fill_field(dataset)
        return dataset

    # -- colour range of |B| ------------------------------------------------------------------

    @cached_property
    def B_range_mT(self) -> tuple[float, float]:
        """A readable |B| range: the 2nd to 99.5th percentile of the free space in the box (the
        field diverges at edges, which would squash every colour into one end)."""
        grid = self.grid
        free = (grid["inside_magnet"] < 0) & (grid["in_model"] > 0)
        values = grid["B_abs_mT"][free] if free.any() else grid["B_abs_mT"]
        top = float(np.percentile(values, 99.5)) if values.size else 1.0
        low = float(np.percentile(values, 2.0)) if values.size else 0.0
        top = max(top, 1e-6)
        return max(low, top * 1e-3), top

    # -- traps ------------------------------------------------------------------------------

    @cached_property
    def trap_report(self):
        """physics.traps.search' report for this scene, or None while that module is not there."""
        from trapscape.viewers.layers.traps_data import find_report

        return find_report(self)

    @cached_property
    def equilibria(self) -> list:
        from trapscape.viewers.layers.traps_data import equilibria_of

        return equilibria_of(self)

    @property
    def headline(self):
        """The equilibrium a customer asks about first: the firmest stable one, else the first."""
        from trapscape.viewers.layers.traps_data import headline_of

        return headline_of(self.equilibria)
