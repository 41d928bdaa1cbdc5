"""What the layers draw from: the analysis of the scene (physics.analysis) and the trap report
the command had it find. The field at a view's grid points is sampled by physics.analysis.views
and kept here, so a render and an export of the same scene share it. Lengths handed to pyvista
are in the scene's unit (so scale bars, exports and STL files read in the unit the user wrote);
physics works in metres.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property

import numpy as np

from trapscape.physics.analysis.display_units import scene_units
from trapscape.physics.analysis.run import Analysis
from trapscape.physics.analysis.trap_words import describe_position
from trapscape.physics.analysis.views import field_samples, headline_of
from trapscape.viewers.layers.traps_data import family_entries
from trapscape.viewers.layers.magnets import world_meshes

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
    analysis: object  # physics.analysis.run.Analysis
    marks_traps: bool = False  # whether the view marks traps: the search runs on first need
    grid_resolution: int = 64  # points on the longest side of the 3D field grid
    section_resolution: int = 220  # points on the longest side of the section map
    progress: object = None  # callable(done, total, stage=None) or None
    # the reader's units of the words on a picture (physics.analysis.display_units.DisplayUnits;
    # None: the scene's length unit, N and mT); the geometry stays in the scene's unit
    display: object = None
    section: Section | None = None  # set by viewers.render.prepare with the view's vectors
    # pyvista geometry the layers made from the analysis's numbers, by name, so a render and an
    # export of one context make it once
    made: dict = field(default_factory=dict)
    _notes: list = field(default_factory=list)

    @classmethod
    def of(cls, analysis, traps: bool = True, **options) -> "ViewContext":
        """The context of a view of `analysis` (an Analysis, or a Scene to analyse); with
        traps, the analysis finds them when a layer first asks (once: it keeps the report), so
        a view of the magnets alone runs no trap search."""
        if not isinstance(analysis, Analysis):
            analysis = Analysis(analysis)
        return cls(analysis, marks_traps=traps, **options)

    @cached_property
    def trap_report(self):
        """What the analysis found (None: the view marks no traps)."""
        if not self.marks_traps:
            return None
        return self.analysis.traps(progress=self.progress)

    @property
    def scene(self):
        return self.analysis.scene

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

    @property
    def shown(self):
        """The DisplayUnits of the words on the picture."""
        return self.display or scene_units(self.scene)

    def length_factor(self) -> float:
        """Display length units per scene unit (1 unless --units names another)."""
        return float(self.shown.L_from(1.0, self.unit))

    def position_words(self, position) -> str:
        """A position in the scene's unit as the reader reads it: '(21.0, 0, -0.2) mm'."""
        shown = self.shown
        return describe_position(shown.L_from(np.asarray(position, float), self.unit),
                                 shown.length_label, shown.L_from(self.size, self.unit))

    def section_words(self) -> str:
        """'y = -2.712 mm': the section plane in the reader's length unit."""
        shown = self.shown
        level = shown.L_from(self.section.level, self.unit)
        level = 0.0 if abs(level) < 1e-9 * max(shown.L_from(self.size, self.unit), 1e-300) \
            else level
        if shown.length == self.unit:
            return f"{self.section.name} {self.unit}"
        return f"{AXIS_NAMES[self.section.axis]} = {level:.4g} {shown.length_label}"

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
        """pyvista ImageData over the search box (scene unit) with the arrays of
        physics.analysis.views.field_samples."""
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
        report = None
        if self.progress is not None:
            def report(done, total):
                self.progress(done, total, "field")
        for name, values in field_samples(self.analysis, points_m, report).items():
            dataset.point_data[name] = values

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
    def equilibria(self) -> list:
        """One marker per family of the trap report (viewers.layers.traps_data.family_entries)."""
        return family_entries(self.trap_report, self.scene)

    @property
    def headline(self):
        """The equilibrium a customer asks about first: the firmest stable one, else the first."""
        return headline_of(self.equilibria)
