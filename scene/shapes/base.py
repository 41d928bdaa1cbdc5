"""The protocol every shape keeps, and the defaults most shapes share.

A shape is a stateless object; its methods take a `part`: anything with `dims` (the tuple made
by `make_dims`) and, for shapes read from a file, `mesh_vertices` (V, 3) m and `mesh_faces`
(F, 3) int (scene.model.Magnet is one). Everything is in the part's body frame and in SI units.
Errors in dims raise DimError (a ValueError); the scene loader turns them into SceneError.
"""
from __future__ import annotations

from typing import NamedTuple, Protocol

import numpy as np

from trapscape.scene.shapes.axes import intent_axes


class Dim(NamedTuple):
    """One dimension of a shape: its key in a scene file and its kind, which says how it is read
    and converted: "length" (file unit), "angle" (degrees in the file, radians inside) or
    "outline" (a list of [x, y] corners in the file unit)."""

    name: str
    kind: str


class DimError(ValueError):
    """A dimension is invalid. index: which of the shape's dims is at fault (None: their
    combination); the message is one sentence ending with how to fix it."""

    def __init__(self, message: str, index: int | None = None):
        super().__init__(message)
        self.index = index


class Shape(Protocol):
    """What a shape offers the scene loader, the physics and the viewers."""

    name: str  # the `shape` word in a scene file
    dims: tuple  # of Dim, in the order of `size = [...]`
    keys: tuple  # the scene keys it takes beyond the common ones
    size_example: str  # how to write its dimensions, for messages
    takes_size: bool  # accepts size = [...]
    takes_named: bool  # accepts its dims by name (diameter = 10, ...)
    from_file: bool  # its solid comes from a mesh file (no dims)
    radial_ok: bool  # may be magnetised radial-out / radial-in
    is_ball: bool  # a sphere: forces on it have a closed form
    cheap_distance: bool  # sdf is a closed form (else a mesh distance through a tree)
    is_block: bool  # a rectangular block with dims its edges: sdf as box.py (box_distance.py)
    fit_far_field: bool  # a large tessellation may be replaced by fitted dipoles far away
    closed_form: str  # key of physics.field.sources.CLOSED_FORMS that draws its field
    radial_closed_form: str | None  # the key that draws it magnetised radially (None: dipoles)

    def validate(self, values, unit: str) -> None:
        """Raise DimError unless the dims as written (file units, degrees, [x, y] lists) are valid."""

    def make_dims(self, values) -> tuple:
        """The part's dims tuple from validated values converted to SI (m, rad)."""

    def volume(self, part) -> float:
        """Volume of the solid.

        Returns
        -------
        float, m^3.
        """

    def support(self, part, directions) -> np.ndarray:
        """Support function h(d) = max over the solid of d . x, body frame.

        Parameters
        ----------
        part : the placed part (its dims, and mesh for file shapes).
        directions : (K, 3) float, body frame, any length.

        Returns
        -------
        (K,) float64, m (times |d|).

        References
        ----------
        R. Schneider, Convex Bodies: The Brunn-Minkowski Theory, 2nd ed. (2014), 1.7.
        """

    def bounds(self, part) -> tuple:
        """Body-frame bounding box (lower (3,), upper (3,)), m."""

    def largest(self, part) -> float:
        """Largest dimension, m."""

    def smallest(self, part) -> float:
        """Smallest dimension, m (a ring's or arc's wall counts; DESIGN.md Conventions)."""

    def sdf(self, part, points) -> np.ndarray:
        """Signed distance to the surface, negative inside.

        Parameters
        ----------
        part : the placed part.
        points : (N, 3) float, m, body frame.

        Returns
        -------
        (N,) float64, m.
        """

    def inside(self, part, points) -> np.ndarray:
        """(N,) bool for body points (N, 3) in m: strictly inside (the surface is outside)."""

    def tessellation(self, part, segments: int | None = None) -> tuple:
        """Closed outward triangle mesh of the solid, body frame.

        Parameters
        ----------
        part : the placed part.
        segments : int, optional, facets per full turn of a round part (drawing); None: the
            field's tessellation.

        Returns
        -------
        vertices : (V, 3) float64, m.
        faces : (F, 3) int64, counter-clockwise seen from outside.
        """

    def field_params(self, part) -> tuple:
        """Arguments of CLOSED_FORMS[closed_form] before the magnetisation (m)."""

    def radial_field_params(self, part) -> tuple:
        """Arguments of CLOSED_FORMS[radial_closed_form] before the signed radial M (m, rad)."""

    def patches(self, part, volume_charge: bool = False) -> list:
        """The faces (and with volume_charge the volume) as parameter patches (patches.Patches)."""

    def radial_integral(self, part) -> np.ndarray:
        """(3,) integral over the volume of the in-plane radial unit vector, m^3 (radial parts)."""

    def mid_wall(self, part, count: int) -> tuple:
        """(points (K, 3) m, radial unit vectors (K, 3)) on the middle of the wall (radial parts)."""

    def reference_point(self, part) -> np.ndarray:
        """(3,) body point, m, that torques are taken about."""

    def intent_axes(self, part) -> dict:
        """{"axial" | "diametral" | "thickness": unit body vector (3,)} the shape decides
        (magnetization = "axial" etc. in a scene; scene.shapes.axes)."""


def check_positive(shape, values, zero=None) -> None:
    """Raise DimError for the first value that is not positive. zero: {dim name: None (zero is
    allowed) or the message refusing it}."""
    for index, (value, dim) in enumerate(zip(values, shape.dims)):
        if value == 0 and zero and dim.name in zero:
            if zero[dim.name] is None:
                continue
            raise DimError(zero[dim.name], index)
        if value <= 0:
            raise DimError(f"the {dim.name.replace('_', ' ')} must be positive, got {value:g}; "
                           f"give a size above zero.", index)


def as_points(points) -> np.ndarray:
    return np.asarray(points, dtype=float).reshape(-1, 3)


def as_directions(directions) -> np.ndarray:
    return np.asarray(directions, dtype=float).reshape(-1, 3)


class BaseShape:
    """Defaults: bounds and largest dimension from the support function, inside from the signed
    distance, the field from the tessellation through the exact polyhedron form, torques about
    the body origin."""

    name = ""
    dims: tuple = ()
    keys: tuple = ()
    size_example = ""
    takes_size = True
    takes_named = True
    from_file = False
    radial_ok = False
    is_ball = False
    is_block = False
    cheap_distance = True
    fit_far_field = False
    closed_form = "polyhedron"
    radial_closed_form = None

    def validate(self, values, unit: str) -> None:
        """Raise DimError unless every value (file units; angles in degrees) is positive.

        Parameters
        ----------
        values : sequence of float, one per Dim.
        unit : str, the file's length unit (for messages).

        Returns
        -------
        None.

        References
        ----------
        DESIGN.md, Scene format.
        """
        check_positive(self, values)

    def make_dims(self, values) -> tuple:
        """The part's dims (SI: metres, radians) from validated, converted values."""
        return tuple(float(v) for v in values)

    def bounds(self, part) -> tuple:
        """Body-frame bounding box (lower (3,), upper (3,)) in m, from the support function.

        Parameters
        ----------
        part : an object with dims (and mesh_vertices, mesh_faces for file shapes).

        Returns
        -------
        (lower (3,), upper (3,)) float64, m.

        References
        ----------
        Support function of a convex hull (R. Schneider, Convex Bodies, 2nd ed. 2014, 1.7).
        """
        axes = np.eye(3)
        return -self.support(part, -axes), self.support(part, axes)

    def largest(self, part) -> float:
        """The part's largest size in m: the longest side of its body-frame bounding box."""
        lower, upper = self.bounds(part)
        return float(np.max(upper - lower))

    def inside(self, part, points) -> np.ndarray:
        """(N,) bool: body points strictly inside (sdf < 0; a point on the surface is outside)."""
        return self.sdf(part, points) < 0.0

    def search_tree(self, part):
        """The shape's bounding-volume tree (meshtree.MeshTree) when its distance comes from
        one, else None (a closed form)."""
        return None

    def sdf_and_normal(self, part, points) -> tuple:
        """The signed distance (N,) m of body points and its gradient, the outward unit normal
        (N, 3) in the body frame, where the shape knows it from its closest feature; None for
        the normal where it does not (the caller differentiates the distance)."""
        return self.sdf(part, points), None

    def field_params(self, part) -> tuple:
        """The arguments of its closed form before the magnetisation: here (vertices, faces)."""
        return self.tessellation(part)

    def radial_integral(self, part) -> np.ndarray:
        raise ValueError(f"a {self.name} cannot be magnetised radially")

    def mid_wall(self, part, count: int) -> tuple:
        raise ValueError(f"a {self.name} has no wall to magnetise radially")

    def reference_point(self, part) -> np.ndarray:
        """Body point (3,) torques are taken about: the body origin (a primitive's centre)."""
        return np.zeros(3)

    def intent_axes(self, part) -> dict:
        """{"axial" | "diametral" | "thickness": unit body vector (3,)} for the magnetisation
        intents this part's shape decides (here from its tessellation's principal axes; an
        intent the shape leaves open is missing)."""
        return intent_axes(*self.tessellation(part))
