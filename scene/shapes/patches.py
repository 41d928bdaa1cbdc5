"""Parameter boxes [0, 1]^d mapped onto a part's surface (or volume) in its body frame: the
patches over which physics.holding.forces integrates surface (and volume) charges.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class Patches:
    """A family of parameter boxes [0, 1]^d mapped onto a part's surface (or volume), body frame.

    kind: "parallelogram" (origin, e1, e2), "triangle" (a, b, c; Duffy's collapsed square),
    "annulus" (r0, r1, phi0, phi1, z, normal sign), "lateral" (radius, phi0, phi1, z0, z1,
    normal sign) or "sector_volume" (r0, r1, phi0, phi1, z0, z1). data: (P, k) parameters.
    lengths: (P, d) physical extents, used to size the first panels.
    """

    kind: str
    data: np.ndarray
    lengths: np.ndarray

    @property
    def dimension(self) -> int:
        return 3 if self.kind == "sector_volume" else 2


def map_patches(patches: Patches, index: np.ndarray, t: np.ndarray):
    """Body points, Jacobian and outward normal at parameters t of patches[index].

    Parameters
    ----------
    patches : Patches.
    index : (n,) int, which patch each parameter point belongs to.
    t : (n, d) float in [0, 1]^d (d = patches.dimension).

    Returns
    -------
    points : (n, 3) float64, m, body frame.
    jacobian : (n,) float64, m^2 for surfaces (m^3 for volumes) per unit parameter box.
    normal : (n, 3) float64, outward unit normal (zero for volumes).

    References
    ----------
    Surface and volume elements of the parametrisations (textbook calculus); the triangle as
    a collapsed square: M. G. Duffy, SIAM J. Numer. Anal. 19, 1260 (1982).
    """
    p = patches.data[index]
    kind = patches.kind
    if kind == "parallelogram":
        o, e1, e2 = p[:, 0:3], p[:, 3:6], p[:, 6:9]
        x = o + t[:, :1] * e1 + t[:, 1:2] * e2
        cross = np.cross(e1, e2)
        area = np.linalg.norm(cross, axis=1)
        return x, area, cross / area[:, None]
    if kind == "triangle":
        a, b, c = p[:, 0:3], p[:, 3:6], p[:, 6:9]
        u, v = t[:, :1], t[:, 1:2]
        x = a + u * (b - a) + u * v * (c - b)
        cross = np.cross(b - a, c - b)
        norm = np.linalg.norm(cross, axis=1)
        return x, norm * t[:, 0], cross / norm[:, None]
    if kind == "annulus":
        r = p[:, 0] + t[:, 0] * (p[:, 1] - p[:, 0])
        phi = p[:, 2] + t[:, 1] * (p[:, 3] - p[:, 2])
        x = np.stack([r * np.cos(phi), r * np.sin(phi), p[:, 4]], axis=1)
        normal = np.zeros_like(x)
        normal[:, 2] = p[:, 5]
        return x, r * (p[:, 1] - p[:, 0]) * (p[:, 3] - p[:, 2]), normal
    if kind == "lateral":
        phi = p[:, 1] + t[:, 0] * (p[:, 2] - p[:, 1])
        z = p[:, 3] + t[:, 1] * (p[:, 4] - p[:, 3])
        radial = np.stack([np.cos(phi), np.sin(phi), np.zeros_like(phi)], axis=1)
        return p[:, :1] * radial + z[:, None] * [0.0, 0.0, 1.0], \
            p[:, 0] * (p[:, 2] - p[:, 1]) * (p[:, 4] - p[:, 3]), p[:, 5:6] * radial
    if kind == "sector_volume":
        r = p[:, 0] + t[:, 0] * (p[:, 1] - p[:, 0])
        phi = p[:, 2] + t[:, 1] * (p[:, 3] - p[:, 2])
        z = p[:, 4] + t[:, 2] * (p[:, 5] - p[:, 4])
        x = np.stack([r * np.cos(phi), r * np.sin(phi), z], axis=1)
        jac = r * (p[:, 1] - p[:, 0]) * (p[:, 3] - p[:, 2]) * (p[:, 5] - p[:, 4])
        return x, jac, np.zeros_like(x)
    raise ValueError(kind)


def box_faces(size) -> Patches:
    """The six faces of a box of edges size (3,) m centred at the origin, outward (e1 x e2).

    Parameters
    ----------
    size : (3,) float, m.

    Returns
    -------
    Patches of kind "parallelogram", 6 rows.

    References
    ----------
    Derived here.
    """
    half = np.asarray(size, float) / 2.0
    rows, lengths = [], []
    for k in range(3):
        i, j = (k + 1) % 3, (k + 2) % 3
        for sign in (1.0, -1.0):
            origin = -half.copy()
            origin[k] = sign * half[k]
            e_i, e_j = np.zeros(3), np.zeros(3)
            e_i[i], e_j[j] = 2 * half[i], 2 * half[j]
            first, second = (e_i, e_j) if sign > 0 else (e_j, e_i)  # e1 x e2 points outward
            rows.append(np.concatenate([origin, first, second]))
            lengths.append([np.linalg.norm(first), np.linalg.norm(second)])
    return Patches("parallelogram", np.array(rows), np.array(lengths))


def sector_surfaces(r_in, r_out, height, phi0, phi1, closed_ends) -> list[Patches]:
    """The faces of an annular sector extruded over |z| <= height / 2: its two end faces, outer
    (and inner) walls and, for a sector short of a full turn, its two flat ends.

    Parameters
    ----------
    r_in, r_out : float, m (r_in may be 0).
    height : float, m.
    phi0, phi1 : float, rad.
    closed_ends : bool, whether the flat ends at phi0 and phi1 are faces.

    Returns
    -------
    list of Patches ("annulus", "lateral" and optionally "parallelogram").

    References
    ----------
    Derived here.
    """
    z0, z1 = -height / 2.0, height / 2.0
    span = phi1 - phi0
    ends = Patches("annulus", np.array([[r_in, r_out, phi0, phi1, z1, 1.0],
                                         [r_in, r_out, phi0, phi1, z0, -1.0]]),
                   np.array([[r_out - r_in, r_out * span]] * 2))
    walls = [[r_out, phi0, phi1, z0, z1, 1.0]]
    if r_in > 0:
        walls.append([r_in, phi0, phi1, z0, z1, -1.0])
    lateral = Patches("lateral", np.array(walls), np.array([[w[0] * span, height] for w in walls]))
    families = [ends, lateral]
    if closed_ends:
        rows = []
        for phi, sign in ((phi0, -1.0), (phi1, 1.0)):
            radial = np.array([math.cos(phi), math.sin(phi), 0.0])
            origin = r_in * radial + [0.0, 0.0, z0]
            e_r, e_z = (r_out - r_in) * radial, np.array([0.0, 0.0, height])
            # outward normal of the end at phi1 is +phi_hat = z x r_hat; at phi0 it is -phi_hat
            rows.append(np.concatenate([origin, e_z, e_r] if sign > 0 else [origin, e_r, e_z]))
        families.append(Patches("parallelogram", np.array(rows),
                                np.array([[r_out - r_in, height]] * 2)))
    return families


def sector_volume(r_in, r_out, height, phi0, phi1) -> Patches:
    """The volume of an extruded annular sector as one "sector_volume" patch (radial parts
    carry a volume charge).

    Parameters
    ----------
    r_in, r_out, height : float, m.
    phi0, phi1 : float, rad.

    Returns
    -------
    Patches of kind "sector_volume", one row.

    References
    ----------
    Derived here.
    """
    volume = np.array([[r_in, r_out, phi0, phi1, -height / 2.0, height / 2.0]])
    return Patches("sector_volume", volume, np.array([[r_out - r_in, r_out * (phi1 - phi0), height]]))


def triangle_patches(vertices, faces) -> Patches:
    """Every face of a triangle mesh as a "triangle" patch.

    Parameters
    ----------
    vertices : (V, 3) float, m.
    faces : (F, 3) int.

    Returns
    -------
    Patches of kind "triangle", F rows.

    References
    ----------
    Derived here.
    """
    tri = np.asarray(vertices, float)[faces]
    data = tri.reshape(len(tri), 9)
    lengths = np.stack([np.linalg.norm(tri[:, 1] - tri[:, 0], axis=1),
                        np.linalg.norm(tri[:, 2] - tri[:, 1], axis=1)], axis=1)
    return Patches("triangle", data, lengths)
