"""Geometry and magnetisation of placed parts: volume, mass, magnetisation, moment, extent and
bounding box, each asked of the part's shape (scene.shapes).

No field math: a rigid magnet's magnetisation is M = Br / mu0 along north, or radial for rings
and arcs (DESIGN.md, Physics definitions); its moment is the integral of M over its volume.
"""
from __future__ import annotations

import numpy as np

from trapscape.scene.shapes import shape_of
from trapscape.scene.shapes.meshops import volume_centroid
from trapscape.scene.units import MU0


def volume(magnet) -> float:
    """Volume in m^3 from the closed forms (mesh: its enclosed volume)."""
    return shape_of(magnet).volume(magnet)


def centroid(magnet) -> np.ndarray:
    """World volume centroid (3,) in m: of the part's tessellation (exact for boxes, prisms and
    meshes; round parts within the tessellation's sag), not the body origin, which for a mesh is
    the file's origin and for an arc its axis."""
    body = volume_centroid(*shape_of(magnet).tessellation(magnet))
    return np.asarray(magnet.rotation, float) @ body + np.asarray(magnet.position, float)


def mass(magnet) -> float | None:
    """kg, or None when the part's density is not known (remanence given without density)."""
    density = getattr(magnet, "density", None)
    return None if density is None else density * volume(magnet)


def magnetization_strength(remanence: float) -> float:
    """|M| = Br / mu0 in A/m (rigid magnet, recoil permeability 1; DESIGN.md, Physics)."""
    return remanence / MU0


def magnetization_vector(remanence: float, north) -> np.ndarray:
    """M = Br / mu0 along north (3,), A/m (DESIGN.md, Physics: rigid magnets)."""
    return magnetization_strength(remanence) * np.asarray(north, dtype=float)


def body_magnetization(magnet, body_points) -> np.ndarray:
    """(N, 3) M in A/m, body frame, at body points assumed inside the part: uniform along north,
    or radial (the in-plane unit vector from the axis, signed by radial-out / radial-in)."""
    body_points = np.asarray(body_points, float).reshape(-1, 3)
    if magnet.radial is None:
        return np.broadcast_to(magnetization_vector(magnet.remanence, magnet.north),
                               body_points.shape).copy()
    radial = body_points.copy()
    radial[:, 2] = 0.0
    norm = np.linalg.norm(radial, axis=1, keepdims=True)
    direction = np.divide(radial, norm, out=np.zeros_like(radial), where=norm > 0)
    return radial_sign(magnet) * magnetization_strength(magnet.remanence) * direction


def radial_sign(magnet) -> float:
    return 1.0 if magnet.radial == "radial-out" else -1.0


def moment_body(magnet) -> np.ndarray:
    """The part's magnetic moment in A m^2, body frame: M V, or M0 times the integral of the
    radial unit vector over the volume for radial parts."""
    strength = magnetization_strength(magnet.remanence)
    if magnet.radial is None:
        return strength * volume(magnet) * np.asarray(magnet.north, float)
    return radial_sign(magnet) * strength * shape_of(magnet).radial_integral(magnet)


def moment_world(magnet) -> np.ndarray:
    return magnet.rotation @ moment_body(magnet)


def extent_along(magnet, direction) -> tuple[float, float]:
    """(min, max) of direction . x over the placed part (world frame, m)."""
    direction = np.asarray(direction, float)
    centre = float(direction @ magnet.position)
    local = magnet.rotation.T @ direction  # the direction in the body frame
    reach = shape_of(magnet).support(magnet, np.array([local, -local]))
    return centre - float(reach[1]), centre + float(reach[0])


def bounding_box(magnet) -> tuple[np.ndarray, np.ndarray]:
    """World axis-aligned bounding box (min (3,), max (3,)) in m."""
    spans = [extent_along(magnet, axis) for axis in np.eye(3)]
    return np.array([s[0] for s in spans]), np.array([s[1] for s in spans])


def largest_dimension(magnet) -> float:
    """The part's largest size in m (the longest side of its body-frame bounding box)."""
    return shape_of(magnet).largest(magnet)


def smallest_dimension(magnet) -> float:
    """The part's smallest size in m (a ring's or arc's wall thickness counts)."""
    return shape_of(magnet).smallest(magnet)


def scene_bounding_box(magnets) -> tuple[np.ndarray, np.ndarray]:
    boxes = [bounding_box(m) for m in magnets]
    return (np.min([b[0] for b in boxes], axis=0), np.max([b[1] for b in boxes], axis=0))
