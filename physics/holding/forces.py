"""Forces and torques on the assembly's own parts, each in the field of the others and of the
plate images: one model for every part, the magnetic charges of the target part.

Model (Coulombian approach: Akoun & Yonnet, IEEE Trans. Magn. 20, 1962 (1984); E. P. Furlani,
Permanent Magnet and Electromechanical Devices, Academic Press 2001, ch. 3):

    F = mu0 [ closed-surface integral of sigma H_ext dA + volume integral of rho H_ext dV ],
    sigma = M . n,  rho = -div M  (zero for uniform M; -M0/r s for radial rings and arcs),
    T = the same integrals of r x dF, r measured from the part's centre (torque_reference).

H_ext is the field of every source but the part's own charges (its images in the plates are
kept: they are what pulls it to a plate). Why charges and not dipole cells: the target part's
surface is integrated exactly as it is (no staircase of cells), and the integrand stays bounded
up to contact, where the neighbour's edge makes it only logarithmically singular, which the
adaptive quadrature below resolves. A sphere uses the exact closed form of the same model:
for a uniformly magnetised sphere the charge integrals reduce, by the mean-value property of
the harmonic H_ext, to F = mu0 (m . grad) H_ext(c) and T = mu0 m x H_ext(c) at its centre
(J. D. Jackson, Classical Electrodynamics, 3rd ed., 5.7 and 5.16; derived here for the sphere).
The two are never added for one part.

Quadrature: each face (or, for radial parts, the volume) is mapped to parameter boxes and
integrated by tensor Gauss-Legendre panels (4 points a direction). Globally adaptive and
anisotropic: each panel is compared with its two halves along each direction, and the panels
carrying the largest differences are split along their worst direction until the sum is below
the tolerance (adaptive cubature, e.g. P. J. Davis and P. Rabinowitz, Methods of Numerical
Integration, 2nd ed. 1984, ch. 5), so a logarithmic edge singularity (a neighbour or an image
in contact) is met by panels graded towards that edge only. Quadrature points are pushed 1e-9
of the part size inside the target, where every other source is smooth, so a neighbour in
contact is evaluated on its outer side. Accuracy: rtol (default 1e-6) of the
force scale, measured against closed forms in tests/test_forces.py.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trapscape.physics.field.parts import bounding_diagonal
from trapscape.scene.measures import body_magnetization, magnetization_strength, moment_world, radial_sign
from trapscape.scene.shapes import shape_of
from trapscape.scene.shapes.patches import Patches, map_patches
from trapscape.scene.units import MU0

GAUSS_ORDER = 4  # points per direction in each panel
MAX_ROUNDS = 60  # rounds of refinement at most (each splits the worst panels in two)
INWARD_PUSH = 1e-9  # of the part size: quadrature points sit just inside the target


def charged_patches(magnet) -> list[Patches]:
    """The surfaces (and, for radial parts, the volume) that carry the part's charges."""
    return shape_of(magnet).patches(magnet, volume_charge=magnet.radial is not None)


def _charge(magnet, patches: Patches, body_points, normals):
    """sigma = M . n on faces; rho = -div M in the volume (radial parts: -s M0 / r; the 1/r
    cancels the Jacobian's r, so the density times r is returned there)."""
    M = body_magnetization(magnet, body_points)
    if patches.kind != "sector_volume":
        return np.einsum("ij,ij->i", M, normals)
    r = np.hypot(body_points[:, 0], body_points[:, 1])
    # div(M0 s r_hat) = s M0 / r in cylindrical coordinates
    return -radial_sign(magnet) * magnetization_strength(magnet.remanence) / np.maximum(r, 1e-300)


# -- adaptive tensor Gauss-Legendre cubature -----------------------------------------------------


def _gauss_box(dimension: int, order: int = GAUSS_ORDER):
    x, w = np.polynomial.legendre.leggauss(order)
    x, w = (x + 1.0) / 2.0, w / 2.0
    grids = np.meshgrid(*([x] * dimension), indexing="ij")
    weights = np.prod(np.meshgrid(*([w] * dimension), indexing="ij"), axis=0)
    return np.stack([g.ravel() for g in grids], axis=1), weights.ravel()


class _PartIntegrand:
    """dF and r x dF of the target part's charges in the acting field, summed per panel."""

    def __init__(self, magnet, families, acting, reference):
        self.magnet = magnet
        self.families = families
        self.acting = acting
        self.reference = reference
        self.scale = bounding_diagonal(magnet)
        self.push = INWARD_PUSH * self.scale
        self.rules = {d: _gauss_box(d) for d in (2, 3)}
        self.rotation = np.asarray(magnet.rotation, float)
        self.position = np.asarray(magnet.position, float)

    def __call__(self, family, patch, lower, upper):
        """(n, 6): force and torque / part size of each panel; and the sum of |dF| (a scale)."""
        body, charge, owner = [], [], []
        for f, patches in enumerate(self.families):
            chosen = np.flatnonzero(family == f)
            if not len(chosen):
                continue
            d = patches.dimension
            nodes, w = self.rules[d]
            lo, hi = lower[chosen, :d], upper[chosen, :d]
            t = (lo[:, None, :] + nodes[None] * (hi - lo)[:, None, :]).reshape(-1, d)
            x, jac, n = map_patches(patches, np.repeat(patch[chosen], len(w)), t)
            weight = np.repeat(np.prod(hi - lo, axis=1), len(w)) * np.tile(w, len(chosen))
            body.append(x - self.push * n)
            charge.append(_charge(self.magnet, patches, x, n) * jac * weight)
            owner.append(np.repeat(chosen, len(w)))
        body, q, owner = np.concatenate(body), np.concatenate(charge), np.concatenate(owner)
        world = body @ self.rotation.T + self.position
        dF = MU0 * q[:, None] * self.acting.applied_H(world)
        dT = np.cross(world - self.reference, dF) / self.scale
        values = np.zeros((len(family), 6))
        np.add.at(values, owner, np.hstack([dF, dT]))
        return values, float(np.abs(dF).sum())


def _halves(lower, upper, axis):
    """The two halves of each box (n, 3) along `axis` (n,)."""
    rows = np.arange(len(lower))
    middle = (lower[rows, axis] + upper[rows, axis]) / 2.0
    first_hi, second_lo = upper.copy(), lower.copy()
    first_hi[rows, axis] = middle
    second_lo[rows, axis] = middle
    return (lower, first_hi), (second_lo, upper)


@dataclass
class _Leaves:
    """Panels of the cubature: parameter boxes (unused dimensions have zero width), their own
    Gauss value and the values of their two halves along each direction."""

    family: np.ndarray  # (n,) index into the list of Patches
    patch: np.ndarray  # (n,) index into that family
    lower: np.ndarray  # (n, 3)
    upper: np.ndarray  # (n, 3)
    value: np.ndarray  # (n, 6)
    halves: np.ndarray  # (n, 3, 2, 6)

    def take(self, mask) -> "_Leaves":
        return _Leaves(*(a[mask] for a in (self.family, self.patch, self.lower, self.upper,
                                            self.value, self.halves)))


def _first_boxes(families, finest: float):
    """One panel per patch, split where the patch is longer than the smallest acting source
    (so a small neighbour is not missed), at most 16 per direction."""
    rows = []
    for f, patches in enumerate(families):
        d = patches.dimension
        counts = np.clip(np.ceil(patches.lengths / finest), 1, 16).astype(int)
        for p, count in enumerate(counts):
            axes = [np.linspace(0.0, 1.0, c + 1) for c in count]
            lo = np.stack(np.meshgrid(*[a[:-1] for a in axes], indexing="ij"), -1).reshape(-1, d)
            hi = np.stack(np.meshgrid(*[a[1:] for a in axes], indexing="ij"), -1).reshape(-1, d)
            pad = np.zeros((len(lo), 3 - d))
            rows.append((np.full(len(lo), f), np.full(len(lo), p),
                         np.hstack([lo, pad]), np.hstack([hi, pad])))
    return tuple(np.concatenate([r[k] for r in rows]) for k in range(4))


def _with_halves(integrand, family, patch, lower, upper, value) -> _Leaves:
    """Evaluate the halves of each box along each of its directions (zero width: skipped)."""
    n = len(family)
    halves = np.zeros((n, 3, 2, 6))
    for axis in range(3):
        split = np.flatnonzero(upper[:, axis] > lower[:, axis])
        if not len(split):
            continue
        a, b = _halves(lower[split], upper[split], np.full(len(split), axis))
        both = integrand(np.concatenate([family[split]] * 2), np.concatenate([patch[split]] * 2),
                         np.concatenate([a[0], b[0]]), np.concatenate([a[1], b[1]]))[0]
        halves[split, axis, 0] = both[: len(split)]
        halves[split, axis, 1] = both[len(split):]
    return _Leaves(family, patch, lower, upper, value, halves)


def _leaf_errors(leaves: _Leaves):
    """Per leaf: the direction whose split changes the value most, that change, and the
    value with that split (the better estimate)."""
    split = leaves.halves.sum(axis=2)  # (n, 3, 6)
    change = np.linalg.norm(split - leaves.value[:, None, :], axis=2)
    active = leaves.upper > leaves.lower
    change = np.where(active, change, -1.0)
    axis = np.argmax(change, axis=1)
    rows = np.arange(len(axis))
    return axis, change[rows, axis], split[rows, axis]


def _adaptive(integrand, boxes, rtol: float, max_rounds: int = MAX_ROUNDS):
    """Globally adaptive, anisotropic cubature: split, along its worst direction, the panels
    that carry the largest error estimates until their sum is below the tolerance.
    Returns the (6,) integral and the error estimate."""
    family, patch, lower, upper = boxes
    value, magnitude = integrand(family, patch, lower, upper)
    leaves = _with_halves(integrand, family, patch, lower, upper, value)
    axis, error, best = _leaf_errors(leaves)
    total = best.sum(axis=0)
    tolerance = rtol * max(np.linalg.norm(total[:3]) + np.linalg.norm(total[3:]), 1e-2 * magnitude)
    for _ in range(max_rounds):
        excess = error.sum() - tolerance
        if excess <= 0.0:
            break
        order = np.argsort(error)[::-1]
        count = int(np.searchsorted(np.cumsum(error[order]), excess)) + 1
        refine = np.zeros(len(error), bool)
        refine[order[:count]] = True
        parents = leaves.take(refine)
        rows = np.arange(len(parents.family))
        a, b = _halves(parents.lower, parents.upper, axis[refine])
        children = _with_halves(
            integrand, np.concatenate([parents.family] * 2), np.concatenate([parents.patch] * 2),
            np.concatenate([a[0], b[0]]), np.concatenate([a[1], b[1]]),
            np.concatenate([parents.halves[rows, axis[refine], 0],
                            parents.halves[rows, axis[refine], 1]]))
        kept = leaves.take(~refine)
        leaves = _Leaves(*(np.concatenate([x, y]) for x, y in zip(
            (kept.family, kept.patch, kept.lower, kept.upper, kept.value, kept.halves),
            (children.family, children.patch, children.lower, children.upper, children.value,
             children.halves))))
        axis, error, best = _leaf_errors(leaves)
    return best.sum(axis=0), float(error.sum())


# -- public ------------------------------------------------------------------------------------


def torque_reference(magnet) -> np.ndarray:
    """The point torques are taken about (world frame, m): the shape's reference point, the body
    origin (a primitive's centre) or a mesh part's volume centroid."""
    return np.asarray(magnet.rotation, float) @ shape_of(magnet).reference_point(magnet) + magnet.position


def _sphere_force(magnet, acting, reference):
    """Exact for a uniformly magnetised sphere in a field with no sources inside it:
    F = mu0 (m . grad) H(c), T = mu0 m x H(c) (Jackson 5.7, 5.16; mean-value property)."""
    m = moment_world(magnet)
    c = np.asarray(magnet.position, float)[None]
    H, G = acting.applied_H(c, gradient=True)
    force = MU0 * G[0] @ m
    torque = MU0 * np.cross(m, H[0]) + np.cross(c[0] - reference, force)
    return force, torque


def force_on_part(field_model, index: int, images_only: bool = False, rtol: float = 1e-6):
    """Force (3,) in N and torque (3,) in N m about torque_reference(part) on part `index`,
    from every other source and every plate image (images_only: the plate images alone, the
    force on a rigid assembly as a whole). rtol: target error relative to the force scale."""
    magnet = field_model.magnets[index]
    acting = field_model.acting_on(index, images_only=images_only)
    reference = torque_reference(magnet)
    if not acting.sources:
        return np.zeros(3), np.zeros(3)
    if shape_of(magnet).is_ball:
        return _sphere_force(magnet, acting, reference)
    families = charged_patches(magnet)
    finest = min(s.size for s in acting.sources)
    integrand = _PartIntegrand(magnet, families, acting, reference)
    values, _ = _adaptive(integrand, _first_boxes(families, finest), rtol)
    return values[:3], values[3:] * integrand.scale


def part_forces(field_model, parts=None, rtol: float = 1e-6):
    """[(name, force (3,) N, torque (3,) N m about the part's centre)] for the named parts (or
    indices), all parts by default."""
    names = [m.name for m in field_model.magnets]
    if parts is None:
        indices = range(len(names))
    else:
        indices = [p if isinstance(p, (int, np.integer)) else names.index(p) for p in parts]
    result = []
    for i in indices:
        force, torque = force_on_part(field_model, int(i), rtol=rtol)
        result.append((names[i], force, torque))
    return result


def lowest_point(magnet, direction) -> float:
    """min over the part of x . direction (world, m): how far the part reaches along -direction
    (minus the shape's support function along -direction)."""
    d = np.asarray(direction, float)
    b = np.asarray(magnet.rotation, float).T @ d  # the direction in the body frame
    c = float(np.asarray(magnet.position, float) @ d)
    return c - float(shape_of(magnet).support(magnet, -b[None])[0])
