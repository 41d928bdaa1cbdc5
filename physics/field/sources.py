"""Field sources: each magnet of a scene (and each of its images in a steel plate) as a placed
body-frame closed form or a dipole set.

A source maps a world point x to its body frame by x_b = R^T (x - c), evaluates the body-frame
field there and rotates it back, H = R H_b, dH/dx = R (dH_b/dx_b) R^T. R may be a reflection
(det -1): that is how plate images are placed.
"""
from __future__ import annotations

import importlib
from dataclasses import dataclass, replace
from functools import cached_property

import numpy as np

from trapscape.physics.field.sphere import sphere_H, sphere_H_gradient

# shape -> (module, function stem) of the body-frame closed form (DEVELOPERS.md, Closed forms)
CLOSED_FORMS = {
    "sphere": ("trapscape.physics.field.sphere", "sphere"),
    "box": ("trapscape.physics.field.cuboid", "cuboid"),
    "cylinder": ("trapscape.physics.field.cylinder", "cylinder"),
    "ring": ("trapscape.physics.field.cylinder", "ring"),
    "polyhedron": ("trapscape.physics.field.polyhedron", "polyhedron"),
    "radial_sector": ("trapscape.physics.field.radial", "radial_sector"),
}

# Beyond this many part sizes from its centre a part is replaced by its dipole: the closed forms
# lose digits there (their terms cancel as (size/r)^3), while the dipole's own error is of order
# (size / 2r)^2 < 1e-4 for a centrosymmetric part (its quadrupole vanishes; derived here).
FAR_FIELD_SIZES = 50.0


def closed_form(kind: str, gradient: bool = False):
    """The body-frame H function of a shape, or with gradient=True the one returning (H, dH/dx).

    Parameters
    ----------
    kind : str
        A key of CLOSED_FORMS.
    gradient : bool
        Return the function giving (H (N, 3) in A/m, dH_i/dx_j (N, 3, 3) in A/m^2).

    Returns
    -------
    callable
        f(points (N, 3) m, *params, magnetization (3,) A/m), as in DEVELOPERS.md, Closed forms.
    """
    module_name, stem = CLOSED_FORMS[kind]
    module = importlib.import_module(module_name)
    if not gradient:
        return getattr(module, f"{stem}_H")
    both = getattr(module, f"{stem}_H_and_gradient", None)
    if both is not None:
        return both
    H, G = getattr(module, f"{stem}_H"), getattr(module, f"{stem}_H_gradient")
    return lambda *args: (H(*args), G(*args))


@dataclass(frozen=True, eq=False)
class Source:
    """One placed field source.

    kind: a key of CLOSED_FORMS, or "dipoles". params: the body-frame dims passed to the closed
    form before the magnetisation (for "polyhedron": vertices, faces). For "dipoles" the world
    positions and moments are in dipole_positions / dipole_moments, and a polyhedron may be kept
    in `near` to evaluate exactly at points within near_radius of near_centre.
    """

    name: str
    part: int  # index of the magnet in the scene
    kind: str
    params: tuple
    center: np.ndarray
    matrix: np.ndarray  # body -> world, orthogonal (det +1, or -1 for an image)
    magnetization: np.ndarray | None  # body frame, A/m (uniform parts; (1,) signed for radial)
    size: float  # largest dimension, m
    moment: np.ndarray  # world, A m^2
    is_image: bool = False
    dipole_positions: np.ndarray | None = None
    dipole_moments: np.ndarray | None = None
    near: "Source | None" = None
    near_centre: np.ndarray | None = None  # world; points within near_radius of it use `near`
    near_radius: float = 0.0

    def to_body(self, points: np.ndarray) -> np.ndarray:
        """World points in this source's body frame, x_b = R^T (x - c).

        Parameters
        ----------
        points : numpy.ndarray, shape (N, 3)
            World points, m.

        Returns
        -------
        numpy.ndarray, shape (N, 3)
            Body-frame points, m.
        """
        return (points - self.center) @ self.matrix

    @cached_property
    def unrotated(self) -> bool:
        """The body frame is the world's (the matrix is the identity): every product of the
        rotation is exact (x * 1 + y * 0 + z * 0 = x), so it is skipped."""
        return bool(np.array_equal(self.matrix, np.eye(3)))

    def is_far(self, points: np.ndarray) -> np.ndarray:
        """Which points lie beyond FAR_FIELD_SIZES part sizes from the centre (dipole used there).

        Parameters
        ----------
        points : numpy.ndarray, shape (N, 3)
            World points, m.

        Returns
        -------
        numpy.ndarray of bool, shape (N,)
        """
        distance = np.linalg.norm(points - self.center, axis=1)
        return distance > FAR_FIELD_SIZES * self.size

    def in_near_zone(self, points: np.ndarray) -> np.ndarray:
        """Which points lie within near_radius of near_centre, where ``near`` is evaluated exactly.

        Parameters
        ----------
        points : numpy.ndarray, shape (N, 3)
            World points, m.

        Returns
        -------
        numpy.ndarray of bool, shape (N,)
        """
        return np.linalg.norm(points - self.near_centre, axis=1) < self.near_radius

    def closed_form_H(self, points: np.ndarray, gradient: bool):
        """H (and dH/dx) of a closed-form source at world points, its point dipole far away.

        Parameters
        ----------
        points : numpy.ndarray, shape (N, 3)
            World points, m.
        gradient : bool
            Also compute dH_i/dx_j.

        Returns
        -------
        H : numpy.ndarray, shape (N, 3)
            A/m.
        G : numpy.ndarray, shape (N, 3, 3), or None
            dH_i/dx_j in A/m^2; None without gradient.
        """
        H = np.zeros_like(points)
        G = np.zeros((len(points), 3, 3)) if gradient else None
        self.add_closed_form_H(points, gradient, H, G)
        return H, G

    def add_closed_form_H(self, points, gradient, H, G) -> None:
        """Add this source's H (and dH/dx) at world points into H and G, in place.

        Points beyond FAR_FIELD_SIZES part sizes take the point dipole of the part's moment; the
        others the body-frame closed form, rotated back (H = R H_b, dH/dx = R (dH_b/dx_b) R^T).

        Parameters
        ----------
        points : numpy.ndarray, shape (N, 3)
            World points, m.
        gradient : bool
            Also add dH_i/dx_j into G.
        H : numpy.ndarray, shape (N, 3)
            Accumulator, A/m.
        G : numpy.ndarray, shape (N, 3, 3), or None
            Accumulator, A/m^2 (used only with gradient).

        References
        ----------
        J. D. Jackson, Classical Electrodynamics, 3rd ed., eq. 5.56 (the far-field dipole).
        """
        far = self.is_far(points)
        if far.any():
            H_far, G_far = point_dipole(points[far], self.center, self.moment, gradient)
            H[far] += H_far
            if gradient:
                G[far] += G_far
        near = slice(None) if not far.any() else ~far
        body = self.to_body(points[near])
        if len(body) == 0:
            return
        R = self.matrix
        if gradient:
            H_body, G_body = closed_form(self.kind, True)(body, *self.params, self.magnetization)
            if self.unrotated:
                G[near] += G_body
            else:
                # R G_b R^T for every point, through BLAS (batched 3x3 matmul is slow in numpy)
                rotated = np.tensordot(np.tensordot(G_body, R, axes=([2], [1])), R,
                                       axes=([1], [1]))
                G[near] += rotated.transpose(0, 2, 1)
        else:
            H_body = closed_form(self.kind)(body, *self.params, self.magnetization)
        H[near] += H_body if self.unrotated else H_body @ R.T


def point_dipole(points, center, moment, gradient=False):
    """Field of a point dipole and, optionally, its gradient.

    Parameters
    ----------
    points : numpy.ndarray, shape (N, 3)
        World points, m.
    center : array_like, shape (3,)
        The dipole's position, m.
    moment : array_like, shape (3,)
        Its moment, A m^2.
    gradient : bool
        Also compute dH_i/dx_j.

    Returns
    -------
    H : numpy.ndarray, shape (N, 3)
        A/m.
    G : numpy.ndarray, shape (N, 3, 3), or None
        dH_i/dx_j in A/m^2; None without gradient.

    References
    ----------
    J. D. Jackson, Classical Electrodynamics, 3rd ed., eq. 5.56 (evaluated as a sphere of
    vanishing size, which is exactly a point dipole outside).
    """
    # A sphere of vanishing size is exactly a point dipole outside; reuse its tested formula.
    tiny = 1e-12
    volume = np.pi * tiny**3 / 6.0
    M = np.asarray(moment) / volume
    H = sphere_H(points - center, tiny, M)
    G = sphere_H_gradient(points - center, tiny, M) if gradient else None
    return H, G


def mirrored(source: Source, point: np.ndarray, normal: np.ndarray, name_suffix: str) -> Source:
    """The image of a source in a perfectly permeable plane (textbook image method).

    Geometry reflected, normal component of the magnetisation kept, tangential components
    reversed (world M' = -P M with P the reflection).

    Parameters
    ----------
    source : Source
        The source to mirror (its dipole set and near zone are mirrored too).
    point : numpy.ndarray, shape (3,)
        A point of the plate's face, m.
    normal : numpy.ndarray, shape (3,)
        The face's unit normal.
    name_suffix : str
        Appended to the source's name.

    Returns
    -------
    Source
        With is_image True and a reflection (det -1) as its matrix.
    """
    P = np.eye(3) - 2.0 * np.outer(normal, normal)

    def reflect(x):
        return (x - point) @ P.T + point

    image = replace(
        source,
        name=source.name + name_suffix,
        center=reflect(source.center),
        matrix=P @ source.matrix,
        moment=-(P @ source.moment),
        is_image=True,
    )
    if source.magnetization is not None:
        # world M' = -P M; in the image's body frame (R' = P R): R'^T (-P R M_b) = -M_b
        image = replace(image, magnetization=-source.magnetization)
    if source.dipole_positions is not None:
        image = replace(
            image,
            dipole_positions=reflect(source.dipole_positions),
            dipole_moments=-(source.dipole_moments @ P.T),
        )
    if source.near is not None:
        image = replace(image, near=mirrored(source.near, point, normal, name_suffix),
                        near_centre=reflect(source.near_centre))
    return image
