"""The magnets alone, fast: each part's exact closed form near it and its second-order
multipole (physics.safety.multipole) beyond NEAR_RADII circumradii of its centroid; no fitted
equivalent sources, so it builds in milliseconds (the scene's FieldModel fits them for large
meshes, which takes seconds). Radially magnetised parts keep their dipole sets.

At 5 circumradii the multipole's error is below 0.2% of a flat box's field (0.4% at 4, against
8% for the plain dipole; measured against the cuboid form, tests/physics/safety/test_assembly.py).
"""
from __future__ import annotations

from dataclasses import replace

import numpy as np

from trapscape.physics.field.dipole_sum import dipole_H
from trapscape.physics.field.parts import part_contains, part_magnetization, part_sources
from trapscape.physics.safety.multipole import multipole_H, second_moments
from trapscape.scene.measures import magnetization_strength
from trapscape.scene.shapes import shape_of
from trapscape.scene.units import MU0

NEAR_RADII = 4.0
MOMENT_SEGMENTS = 96  # facets per turn of a round part for its second moments  # circumradii within which a part's exact closed form is used


class AssemblyField:
    """B and H of a scene's magnets (no plates), exact near each part, dipoles far away.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene
        The loaded scene (SI).
    near_radii : float
        Circumradii of a part within which its exact form is used (inf: everywhere).
    """

    def __init__(self, scene, near_radii: float = NEAR_RADII):
        self.scene = scene
        self.magnets = scene.magnets
        self.near_radii = near_radii
        # radial parts have no closed form: their dipole set is their exact-enough source
        self.sources = [part_sources(m if m.radial else replace(m, method="exact"), i)[0]
                        for i, m in enumerate(scene.magnets)]
        placed = [_placed_moments(m) for m in scene.magnets]
        self.centroids = np.array([p[0] for p in placed]).reshape(-1, 3)
        self.second_moments = [p[1] for p in placed]
        self.radii = np.array([_circumradius(m, c) for m, c in zip(scene.magnets,
                                                                    self.centroids)])
        self.moments = np.array([s.moment for s in self.sources]).reshape(-1, 3)
        # sum of |M| dV: the strength of a part in the field bound (radial parts too)
        self.strengths = np.array([magnetization_strength(m.remanence) * shape_of(m).volume(m)
                                   for m in scene.magnets])
        low = (self.centroids - self.radii[:, None]).min(axis=0)
        high = (self.centroids + self.radii[:, None]).max(axis=0)
        self.centre = (low + high) / 2.0
        self.enclosing_radius = float(np.max(np.linalg.norm(self.centroids - self.centre, axis=1)
                                             + self.radii))

    @property
    def total_moment(self) -> np.ndarray:
        """The assembly's dipole moment (3,), A m^2."""
        return self.moments.sum(axis=0)

    def H(self, points, parts=None) -> np.ndarray:
        """H of the magnets (or of the chosen ones) at world points.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            World points, m.
        parts : iterable of int, optional
            Indices of the magnets to include (default: all).

        Returns
        -------
        numpy.ndarray, shape (N, 3)
            A/m.
        """
        points = np.ascontiguousarray(points, dtype=float).reshape(-1, 3)
        H = np.zeros_like(points)
        for k in range(len(self.magnets)) if parts is None else parts:
            source = self.sources[k]
            if source.kind == "dipoles":
                H += dipole_H(points, source.dipole_positions, source.dipole_moments)
                continue
            near = (np.linalg.norm(points - self.centroids[k], axis=1)
                    < self.near_radii * self.radii[k])
            if near.any():
                H[near] += source.closed_form_H(points[near], False)[0]
            if not near.all():
                M = np.asarray(self.magnets[k].rotation, float) @ source.magnetization
                H[~near] += multipole_H(points[~near], self.centroids[k], self.moments[k], M,
                                        self.second_moments[k])
        return H

    def B(self, points, parts=None) -> np.ndarray:
        """B = mu0 (H + M) of the magnets (or of the chosen ones) at world points.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            World points, m.
        parts : iterable of int, optional
            Indices of the magnets to include (default: all).

        Returns
        -------
        numpy.ndarray, shape (N, 3)
            T.
        """
        points = np.ascontiguousarray(points, dtype=float).reshape(-1, 3)
        return MU0 * (self.H(points, parts) + self.magnetization(points, parts))

    def magnetization(self, points, parts=None) -> np.ndarray:
        """M at world points (zero outside the chosen magnets).

        Parameters
        ----------
        points : array_like, shape (N, 3)
            World points, m.
        parts : iterable of int, optional
            Indices of the magnets to include (default: all).

        Returns
        -------
        numpy.ndarray, shape (N, 3)
            A/m.
        """
        points = np.asarray(points, dtype=float).reshape(-1, 3)
        M = np.zeros_like(points)
        for k in range(len(self.magnets)) if parts is None else parts:
            close = np.linalg.norm(points - self.centroids[k], axis=1) <= self.radii[k]
            if close.any():
                index = np.flatnonzero(close)
                inside = index[part_contains(self.magnets[k], points[index])]
                if len(inside):
                    M[inside] = part_magnetization(self.magnets[k], points[inside])
        return M


def _placed_moments(magnet):
    """World volume centroid (3,) and second moments (3, 3) of a part's tessellation; the
    shape's reference point where the tessellated centroid agrees with it to 1e-3 of the size
    (a primitive is symmetric about its origin; its tessellation only nearly so)."""
    shape = shape_of(magnet)
    # a round part's facets bias Q by O(1/segments^2) (1e-3 of it by default): two facet counts
    # and Richardson's extrapolation take that out (exact for boxes, prisms and meshes alike)
    _, centroid, coarse = second_moments(*shape.tessellation(magnet, MOMENT_SEGMENTS // 2))
    _, _, fine = second_moments(*shape.tessellation(magnet, MOMENT_SEGMENTS))
    Q = (4.0 * fine - coarse) / 3.0
    low, high = shape.bounds(magnet)
    reference = np.asarray(shape.reference_point(magnet), float)
    if np.linalg.norm(centroid - reference) < 1e-3 * np.linalg.norm(high - low):
        centroid = reference
    R = np.asarray(magnet.rotation, float)
    return R @ centroid + np.asarray(magnet.position, float), R @ Q @ R.T


def _circumradius(magnet, centroid) -> float:
    """Radius of a ball about the centroid that holds the part: its body bounding box's
    farthest corner (round parts' tessellations may cut inside their outline)."""
    low, high = shape_of(magnet).bounds(magnet)
    corners = np.array([[x, y, z] for x in (low[0], high[0]) for y in (low[1], high[1])
                        for z in (low[2], high[2])])
    world = corners @ np.asarray(magnet.rotation, float).T + magnet.position
    return float(np.linalg.norm(world - centroid, axis=1).max())
