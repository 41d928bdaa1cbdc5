"""Geometry of placed parts: volume, mass, magnetic moment, extent and bounding box.

No field math: the moment of a uniformly magnetised part is M V with M = Br / mu0 (DESIGN.md,
Physics definitions), and that of a radial ring or arc is the integral of M over its volume.
"""
from __future__ import annotations

import numpy as np

from trapscape.scene.units import MU0


def mesh_volume(vertices: np.ndarray, faces: np.ndarray) -> float:
    """Signed volume of a closed triangle mesh, sum of det(a, b, c) / 6 (divergence theorem)."""
    a, b, c = (vertices[faces[:, k]] for k in range(3))
    return float(np.einsum("ij,ij->i", a, np.cross(b, c)).sum() / 6.0)


def volume(magnet) -> float:
    """Volume in m^3 from the closed forms (mesh: its enclosed volume)."""
    d = magnet.dims
    if magnet.shape == "box":
        return float(d[0] * d[1] * d[2])
    if magnet.shape == "cylinder":
        return float(np.pi * d[0] ** 2 * d[1] / 4.0)
    if magnet.shape == "ring":
        return float(np.pi * (d[0] ** 2 - d[1] ** 2) * d[2] / 4.0)
    if magnet.shape == "arc":  # sector of an annulus: angle/2 (Ro^2 - Ri^2) times the height
        return float(d[3] / 2.0 * ((d[0] / 2) ** 2 - (d[1] / 2) ** 2) * d[2])
    if magnet.shape == "sphere":
        return float(np.pi * d[0] ** 3 / 6.0)
    return mesh_volume(magnet.mesh_vertices, magnet.mesh_faces)


def mass(magnet) -> float | None:
    """kg, or None when the part's density is not known (remanence given without density)."""
    density = getattr(magnet, "density", None)
    return None if density is None else density * volume(magnet)


def moment_body(magnet) -> np.ndarray:
    """The part's magnetic moment in A m^2, body frame."""
    strength = magnet.remanence / MU0
    if magnet.radial is None:
        return strength * volume(magnet) * np.asarray(magnet.north, float)
    sign = 1.0 if magnet.radial == "radial-out" else -1.0
    if magnet.shape == "ring":  # the radial unit vector integrates to zero over a full turn
        return np.zeros(3)
    outer, inner, height, angle = magnet.dims
    # integral of r_hat over the sector: h (Ro^2 - Ri^2) / 2 * 2 sin(angle/2) along +x (derived here)
    along_x = height * ((outer / 2) ** 2 - (inner / 2) ** 2) * np.sin(angle / 2.0)
    return sign * strength * np.array([along_x, 0.0, 0.0])


def moment_world(magnet) -> np.ndarray:
    return magnet.rotation @ moment_body(magnet)


def _arc_outline(dims, samples: int = 181) -> np.ndarray:
    """Body-frame points whose convex hull holds the arc (angle sampled, ends included)."""
    outer, inner, height, angle = dims
    phi = np.linspace(-angle / 2.0, angle / 2.0, samples)
    rings = [np.column_stack([r * np.cos(phi), r * np.sin(phi)]) for r in (outer / 2, inner / 2)]
    flat = np.vstack(rings)
    return np.vstack([np.column_stack([flat, np.full(len(flat), z)])
                      for z in (-height / 2, height / 2)])


def _box_corners(dims) -> np.ndarray:
    half = np.asarray(dims, float) / 2.0
    return np.array([[sx, sy, sz] for sx in (-1, 1) for sy in (-1, 1) for sz in (-1, 1)]) * half


def extent_along(magnet, direction) -> tuple[float, float]:
    """(min, max) of direction . x over the placed part (world frame, m)."""
    direction = np.asarray(direction, float)
    centre = float(direction @ magnet.position)
    local = magnet.rotation.T @ direction  # the direction in the body frame
    if magnet.shape in ("cylinder", "ring", "sphere"):
        radius = magnet.dims[0] / 2.0
        if magnet.shape == "sphere":
            reach = radius * np.linalg.norm(direction)
        else:  # support of a cylinder: |d.a| h/2 + r |d x a| (derived here)
            height = magnet.dims[-1]
            reach = abs(local[2]) * height / 2.0 + radius * np.hypot(local[0], local[1])
        return centre - reach, centre + reach
    if magnet.shape == "box":
        points = _box_corners(magnet.dims)
    elif magnet.shape == "arc":
        points = _arc_outline(magnet.dims)
    else:
        points = magnet.mesh_vertices
    projected = points @ local
    return centre + float(projected.min()), centre + float(projected.max())


def bounding_box(magnet) -> tuple[np.ndarray, np.ndarray]:
    """World axis-aligned bounding box (min (3,), max (3,)) in m."""
    spans = [extent_along(magnet, axis) for axis in np.eye(3)]
    return np.array([s[0] for s in spans]), np.array([s[1] for s in spans])


def largest_dimension(magnet) -> float:
    """The part's largest size in m (box edge, diameter or height, mesh bounding-box edge)."""
    if magnet.shape == "mesh":
        return float(np.ptp(magnet.mesh_vertices, axis=0).max())
    if magnet.shape == "arc":
        return float(max(np.ptp(_arc_outline(magnet.dims), axis=0)))
    return float(max(magnet.dims[:3] if magnet.shape != "sphere" else magnet.dims))


def smallest_dimension(magnet) -> float:
    """The part's smallest size in m (a ring's or arc's wall thickness counts)."""
    d = magnet.dims
    if magnet.shape in ("ring", "arc"):
        return float(min((d[0] - d[1]) / 2.0, d[2]))
    if magnet.shape == "mesh":
        return _mesh_thickness(np.asarray(magnet.mesh_vertices, float), np.asarray(magnet.mesh_faces))
    return float(min(d))


def _mesh_thickness(vertices, faces) -> float:
    """The smaller of the extent along the surface's principal axes (area-weighted triangle
    centroids: a part exported tilted in assembly coordinates is measured across its own
    thickness) and 6 V / A (a cube's edge, a sphere's diameter, three times a thin wall)."""
    triangles = vertices[faces]
    areas = 0.5 * np.linalg.norm(
        np.cross(triangles[:, 1] - triangles[:, 0], triangles[:, 2] - triangles[:, 0]), axis=1)
    centroids = triangles.mean(axis=1)
    centred = centroids - np.average(centroids, axis=0, weights=areas)
    axes = np.linalg.eigh((centred * areas[:, None]).T @ centred)[1]
    along = vertices @ axes
    extents = along.max(axis=0) - along.min(axis=0)
    return float(min(extents.min(), 6.0 * mesh_volume(vertices, faces) / areas.sum()))


def scene_bounding_box(magnets) -> tuple[np.ndarray, np.ndarray]:
    boxes = [bounding_box(m) for m in magnets]
    return (np.min([b[0] for b in boxes], axis=0), np.max([b[1] for b in boxes], axis=0))
