"""The immutable, validated scene in SI units (metres, tesla, kg/m^3, m/s^2).

Everything here is plain data: the loader (scene.loader) builds it from a TOML file and
physics/ reads it. Arrays are read-only float64 numpy arrays.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from types import MappingProxyType

import numpy as np

from trapscape.scene.grades import Grade
from trapscape.scene.report_settings import ReportSettings
from trapscape.scene.safety_settings import SafetySettings
from trapscape.scene.shapes import SHAPES as SHAPE_REGISTRY
from trapscape.scene.shapes.frames import perpendicular_pair

SHAPES = tuple(SHAPE_REGISTRY)  # box, cylinder, ring, arc, sphere, mesh, prism
CONSTRAINT_KINDS = ("free", "line", "plane")


def frozen_array(values, shape=None) -> np.ndarray:
    """A read-only float64 copy of values (optionally checked against a shape)."""
    array = np.array(values, dtype=float)
    if shape is not None and array.shape != shape:
        raise ValueError(f"expected shape {shape}, got {array.shape}")
    array.setflags(write=False)
    return array


@dataclass(frozen=True, eq=False)
class Magnet:
    """One rigid, uniformly (or radially) magnetised part, as placed in the world.

    dims (metres): box (a, b, c) edge lengths along body x, y, z; cylinder (D, h);
    ring (D_outer, D_inner, h); arc (D_outer, D_inner, h, angle_rad) centred on body +x;
    sphere (D,); prism (outline ((x, y), ...) counter-clockwise, h); mesh () with the solid in
    mesh_vertices/mesh_faces (body frame, metres, outward-oriented, closed). scene.shapes
    knows what each shape's dims mean.
    A point p_body in the body frame is at rotation @ p_body + position in the world.
    """

    name: str
    shape: str
    dims: tuple
    position: np.ndarray  # (3,) metres, world
    rotation: np.ndarray  # (3, 3) body -> world, orthonormal, det +1
    north: np.ndarray | None  # (3,) unit vector in the body frame; None when radial
    radial: str | None  # None | "radial-out" | "radial-in" (rings and arcs only)
    remanence: float  # tesla, > 0
    grade: str | None = None
    mesh_vertices: np.ndarray | None = None  # (V, 3) metres, body frame
    mesh_faces: np.ndarray | None = None  # (F, 3) int
    method: str = "auto"  # auto | exact | dipoles
    cell_size: float | None = None  # metres, for dipole sets; None = from the accuracy target
    origin: str = ""  # where it was defined, for messages: "scene.toml, [[magnet]] 3"
    density: float | None = None  # kg/m^3, from the grade or the magnet's density key; None unknown
    material: Grade | None = None  # the grade's figures (coercivity, temperature coefficients)

    @property
    def north_world(self) -> np.ndarray | None:
        return None if self.north is None else self.rotation @ self.north


@dataclass(frozen=True, eq=False)
class SteelPlate:
    """A thick, highly permeable plate treated as a magnetic mirror (DESIGN.md, Physics)."""

    name: str
    point: np.ndarray  # (3,) a point on the face, metres
    normal: np.ndarray  # (3,) unit, pointing towards the magnets
    thickness: float  # metres
    saturation: float  # tesla (Js)


@dataclass(frozen=True, eq=False)
class Probe:
    """The small sphere whose equilibria we look for."""

    kind: str  # a kind of scene.probe_kinds: soft | magnet | weak
    diameter: float  # metres
    density: float  # kg/m^3
    susceptibility: float | None = None  # SI volume chi (soft, weak)
    saturation: float | None = None  # Js in tesla (soft, optional)
    remanence: float | None = None  # tesla (magnet)
    orientation: np.ndarray | None = None  # magnet: None = free (turns to align), else unit north
    # values of a kind's keys that have no field above (key -> SI value), for kinds declared
    # later in scene.probe_kinds
    extra: MappingProxyType = field(default_factory=lambda: MappingProxyType({}))

    @property
    def volume(self) -> float:
        return np.pi * self.diameter**3 / 6.0

    @property
    def mass(self) -> float:
        return self.density * self.volume


@dataclass(frozen=True, eq=False)
class Constraint:
    kind: str = "free"  # free | line | plane
    point: np.ndarray = field(default_factory=lambda: frozen_array([0.0, 0.0, 0.0]))
    direction: np.ndarray = field(default_factory=lambda: frozen_array([0.0, 0.0, 1.0]))  # unit

    def allowed_directions(self) -> np.ndarray:
        """Orthonormal basis (k, 3) of the directions the probe may move in."""
        if self.kind == "free":
            return np.eye(3)
        d = np.asarray(self.direction, dtype=float)
        if self.kind == "line":
            return d[None, :].copy()
        return perpendicular_pair(d)


@dataclass(frozen=True, eq=False)
class SearchBox:
    min: np.ndarray  # (3,) metres
    max: np.ndarray  # (3,) metres
    spacing: float  # metres

    def shape(self) -> tuple[int, int, int]:
        n = np.floor((self.max - self.min) / self.spacing + 1e-9).astype(int) + 1
        return tuple(int(v) for v in np.maximum(n, 2))


@dataclass(frozen=True, eq=False)
class Scene:
    title: str
    units: str  # mm | cm | m | in
    unit_scale: float  # metres per file unit
    gravity: np.ndarray  # (3,) m/s^2
    magnets: tuple  # of Magnet
    plates: tuple  # of SteelPlate
    probe: Probe
    constraint: Constraint
    search_box: SearchBox
    params: dict  # name -> value (file units), after --set overrides
    path: str  # the scene file, "" when built in code
    digest: str  # sha256 of the scene file's bytes and the overrides
    safety: SafetySettings = field(default_factory=SafetySettings)  # [safety] and [package]
    report: ReportSettings = field(default_factory=ReportSettings)  # [report]: the cover's entries

    def magnet(self, name: str) -> Magnet:
        for m in self.magnets:
            if m.name == name:
                return m
        raise KeyError(name)

    def to_file_units(self, metres):
        return np.asarray(metres) / self.unit_scale
