"""Scenes built in code for the force and holding tests (no loader needed)."""
from __future__ import annotations

import math

import numpy as np

from trapscape.scene.model import (Constraint, Magnet, Probe, Scene, SearchBox, SteelPlate, frozen_array)

N42_REMANENCE = 1.30  # tesla, typical of N42 (from memory)


def magnet(shape, dims, position, north=(0, 0, 1), name=None, remanence=N42_REMANENCE,
           rotation=None, radial=None, **extra) -> Magnet:
    return Magnet(
        name=name or f"{shape}-{np.round(position, 6).tolist()}", shape=shape,
        dims=tuple(float(d) for d in dims), position=frozen_array(position, (3,)),
        rotation=frozen_array(np.eye(3) if rotation is None else rotation, (3, 3)),
        north=None if radial else frozen_array(np.asarray(north, float) / np.linalg.norm(north)),
        radial=radial, remanence=float(remanence), **extra)


def plate(point=(0, 0, 0), normal=(0, 0, 1), thickness=0.02, saturation=2.0, name="plate") -> SteelPlate:
    n = np.asarray(normal, float)
    return SteelPlate(name=name, point=frozen_array(point, (3,)),
                      normal=frozen_array(n / np.linalg.norm(n), (3,)),
                      thickness=float(thickness), saturation=float(saturation))


def scene(magnets, plates=(), units="mm") -> Scene:
    scale = {"mm": 1e-3, "cm": 1e-2, "m": 1.0, "in": 0.0254}[units]
    return Scene(
        title="test", units=units, unit_scale=scale, gravity=frozen_array([0, 0, 0]),
        magnets=tuple(magnets), plates=tuple(plates),
        probe=Probe(kind="soft", diameter=1e-3, density=7850.0, susceptibility=1000.0),
        constraint=Constraint(), search_box=SearchBox(frozen_array([-0.05] * 3),
                                                      frozen_array([0.05] * 3), 1e-3),
        params={}, path="", digest="test")


def sphere_moment(diameter, remanence=N42_REMANENCE) -> float:
    """m = Br V / mu0 (DESIGN.md, Physics)."""
    return remanence / (4e-7 * math.pi) * math.pi * diameter**3 / 6.0


# -- Akoun & Yonnet, IEEE Trans. Magn. 20, 1962 (1984): force between two cuboids whose
# magnetisations are both along z, edges parallel; magnet 1 of half-sizes (a, b, c) centred at the
# origin, magnet 2 of half-sizes (A, B, C) centred at (alpha, beta, gamma). Written here from the
# paper's formula, independently of physics/ (it never calls the field model).


def _akoun_yonnet_phi(u, v, w, component):
    r = np.sqrt(u * u + v * v + w * w)
    if component == "x":
        return (0.5 * (v * v - w * w) * np.log(r - u) + u * v * np.log(r - v)
                + v * w * np.arctan(u * v / (r * w)) + 0.5 * r * u)
    if component == "y":
        return (0.5 * (u * u - w * w) * np.log(r - v) + u * v * np.log(r - u)
                + u * w * np.arctan(u * v / (r * w)) + 0.5 * r * v)
    return (-u * w * np.log(r - u) - v * w * np.log(r - v)
            + u * v * np.arctan(u * v / (r * w)) - r * w)


def akoun_yonnet_force(half1, half2, offset, M1, M2) -> np.ndarray:
    """Force (3,) N on magnet 2 from magnet 1; M1, M2 the z magnetisations in A/m
    (J J' / (4 pi mu0) = mu0 M1 M2 / (4 pi)). Needs every face pair apart (w != 0)."""
    a, b, c = half1
    A, B, C = half2
    alpha, beta, gamma = offset
    total = np.zeros(3)
    for i, j, k, l, p, q in np.ndindex(2, 2, 2, 2, 2, 2):
        u = alpha + (-1) ** j * A - (-1) ** i * a
        v = beta + (-1) ** l * B - (-1) ** k * b
        w = gamma + (-1) ** q * C - (-1) ** p * c
        sign = (-1) ** (i + j + k + l + p + q)
        total += sign * np.array([_akoun_yonnet_phi(u, v, w, axis) for axis in "xyz"])
    return 4e-7 * math.pi * M1 * M2 / (4 * math.pi) * total


def coaxial_cylinders_force(R1, L1, M1, R2, L2, M2, distance) -> float:
    """Axial force (N) on cylinder 2 from cylinder 1, coaxial, both magnetised along the axis,
    centres `distance` apart (positive = repulsion): the Bessel-integral form of D. Vokoun,
    M. Beleggia, L. Heller and P. Sittner, J. Magn. Magn. Mater. 321, 3758 (2009),
        F = -4 pi mu0 M1 M2 R1 R2 int_0^inf J1(q R1) J1(q R2) sinh(q L1/2) sinh(q L2/2)
            exp(-q d) dq / q,
    its prefactor re-derived here from the Hankel transform of a charged disc's potential.
    Written independently of physics/; needs the faces apart (d > (L1 + L2) / 2)."""
    from scipy.integrate import quad
    from scipy.special import j1

    gap = distance - (L1 + L2) / 2.0
    if gap <= 0:
        raise ValueError("the cylinders overlap or touch")

    def integrand(q):
        # sinh(q L1/2) sinh(q L2/2) exp(-q d) written with decaying exponentials only
        shape = 0.25 * (np.exp(-q * gap) - np.exp(-q * (gap + L1)) - np.exp(-q * (gap + L2))
                        + np.exp(-q * (gap + L1 + L2)))
        return j1(q * R1) * j1(q * R2) * shape / q

    upper = 60.0 / gap
    breaks = np.linspace(0.0, upper, 200)
    total = sum(quad(integrand, lo, hi, limit=200, epsabs=0.0, epsrel=1e-11)[0]
                for lo, hi in zip(breaks[:-1], breaks[1:]))
    return -4.0 * math.pi * 4e-7 * math.pi * M1 * M2 * R1 * R2 * total
