"""The probe against the surfaces it may not pass: admissible points (its centre at least d/2
from every magnet and plate), surface normals and curvatures, and the search for contact
equilibria along a surface (descent, then Newton on the surface-restricted Hessian)."""
from __future__ import annotations

from typing import NamedTuple

import numpy as np

from trapscape.physics.field.parts import part_sdf
from trapscape.scene.measures import bounding_box
from trapscape.scene.shapes import shape_of
from trapscape.scene.shapes.frames import to_body

DESCENT_ITERATIONS = 300

# The normal of a mesh part from its closest feature (exact) instead of central differences of
# the clearance (good to about 1e-10): off, because the descent along the surface is sensitive
# to the last digits of the normal, and with it on the arc rotor's contact equilibria move by
# about 1e-9 of their position and one borderline pair of them is no longer found; turning it
# on is a change of results (the golden outputs regenerated), not a speed-up.
FEATURE_NORMALS = False


def in_box(points, low, high, tolerance) -> np.ndarray:
    """Which points lie inside the box [low, high] widened by tolerance.

    Parameters
    ----------
    points : numpy.ndarray, shape (N, 3)
        m.
    low, high : array_like, shape (3,)
        The box's corners, m.
    tolerance : float
        Widening on every side, m.

    Returns
    -------
    numpy.ndarray of bool, shape (N,)
    """
    return np.all((points >= low - tolerance) & (points <= high + tolerance), axis=1)


class ProbeGeometry:
    """Admissibility and surfaces: the probe's centre keeps d/2 from magnets and plates.

    Parameters
    ----------
    field_model : FieldModel
        Its clearance, part and plate distances (m) and magnets.
    scene : scene.model.Scene
        The search box and the part names.
    law : ProbeLaw
        The probe's diameter.

    Attributes
    ----------
    radius : float
        d/2, m.
    low, high : ndarray, shape (3,)
        The search box, m.
    spacing : float
        Grid step, m.
    names : list of str
        Magnets, then plates.
    """

    def __init__(self, field_model, scene, law):
        self.field_model = field_model
        self.radius = law.diameter / 2.0
        self.low = np.asarray(scene.search_box.min, float)
        self.high = np.asarray(scene.search_box.max, float)
        self.spacing = float(scene.search_box.spacing)
        self.names = [m.name for m in scene.magnets] + [p.name for p in scene.plates]
        self.part_boxes = [bounding_box(m) for m in scene.magnets]

    def clearance(self, points) -> np.ndarray:
        """Distance to the nearest magnet surface or plate face; negative inside or behind.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            Probe centres, m.

        Returns
        -------
        numpy.ndarray, shape (N,)
            m.
        """
        return self.field_model.clearance(np.asarray(points, float).reshape(-1, 3))

    def admissible(self, points, tolerance=1e-9, clearance=None) -> np.ndarray:
        """Inside the box, in front of every plate and at least d/2 from every part.

        The axis-aligned boxes are measured together (one kernel over points and boxes); another
        part's signed distance only near its bounding box (exact distances are costly for
        meshes). Given the points' clearance, nothing is computed again: a part farther than d/2
        from a point's box is farther than d/2 from it, so both tests agree.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            Probe centres, m.
        tolerance : float
            Relative slack (dimensionless): the box is widened by tolerance * spacing and d/2 is
            relaxed to d/2 (1 - tolerance).
        clearance : numpy.ndarray, shape (N,), optional
            The points' clearance (m), when known.

        Returns
        -------
        numpy.ndarray of bool, shape (N,)
        """
        points = np.asarray(points, float).reshape(-1, 3)
        limit = self.radius * (1.0 - tolerance)
        ok = in_box(points, self.low, self.high, tolerance * self.spacing)
        if clearance is not None:
            return ok & (clearance >= limit)
        plates = self.field_model.plate_distances(points)
        if plates.shape[1]:
            ok &= plates.min(axis=1) >= limit
        boxes, others = self.field_model.box_split()
        if len(boxes.index) and ok.any():
            ok[ok] = boxes.lower(points[ok], np.full(np.count_nonzero(ok), np.inf)) >= limit
        for k in others:
            low, high = self.part_boxes[k]
            near = ok & np.all((points >= low - self.radius) & (points <= high + self.radius), axis=1)
            if near.any():
                ok[near] = part_sdf(self.field_model.magnets[k], points[near]) >= limit
        return ok

    def surface_name(self, points) -> list:
        """Name of the nearest magnet or plate to each point (by signed distance).

        Parameters
        ----------
        points : array_like, shape (N, 3)
            Probe centres, m.

        Returns
        -------
        list of N str
        """
        points = np.asarray(points, float).reshape(-1, 3)
        both = np.concatenate([self.field_model.part_distances(points),
                               self.field_model.plate_distances(points)], axis=1)
        return [self.names[i] for i in np.argmin(both, axis=1)]

    def clearance_and_normal(self, points) -> tuple[np.ndarray, np.ndarray]:
        """The clearance and its unit gradient, the outward normal of the nearest surface.

        With FEATURE_NORMALS, where the nearest surface is a part whose shape knows its closest
        feature (a mesh), the normal is that feature's, from the same search as the distance;
        elsewhere central differences of the clearance, step 1e-6 d/2.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            Probe centres, m.

        Returns
        -------
        clearance : numpy.ndarray, shape (N,)
            m, as ``clearance``.
        normal : numpy.ndarray, shape (N, 3)
            Unit vectors (zero where a differentiated gradient vanishes).

        References
        ----------
        Gradient of a signed distance: J. A. Baerentzen and H. Aanaes, IEEE Trans. Vis. Comput.
        Graph. 11, 243 (2005).
        """
        points = np.asarray(points, float).reshape(-1, 3)
        magnets = self.field_model.magnets
        if not FEATURE_NORMALS and (magnets or self.field_model.plates):
            return self._clearance_and_differentiated_normal(points)
        distances = np.empty((len(points), len(magnets)))
        known = []
        for k, magnet in enumerate(magnets):
            rotation = np.asarray(magnet.rotation, float)
            distances[:, k], normal = shape_of(magnet).sdf_and_normal(
                magnet, to_body(points, magnet.position, rotation))
            known.append(None if normal is None or not FEATURE_NORMALS else normal @ rotation.T)
        both = np.concatenate([distances, self.field_model.plate_distances(points)], axis=1)
        if not both.shape[1]:
            return np.full(len(points), np.inf), np.zeros((len(points), 3))
        clearance, nearest = both.min(axis=1), np.argmin(both, axis=1)
        normals = np.empty((len(points), 3))
        differentiate = np.ones(len(points), bool)
        for k, normal in enumerate(known):
            if normal is not None:
                mine = nearest == k
                normals[mine], differentiate[mine] = normal[mine], False
        if differentiate.any():
            normals[differentiate] = self._differentiated_normal(points[differentiate])
        return clearance, normals

    def normal(self, points) -> np.ndarray:
        """Unit gradient of the clearance at points: the outward surface normal.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            Probe centres, m.

        Returns
        -------
        numpy.ndarray, shape (N, 3)
            Unit vectors (clearance_and_normal).
        """
        return self.clearance_and_normal(points)[1]

    def _differentiated_normal(self, points) -> np.ndarray:
        """Central differences of the clearance, step 1e-6 d/2, normalised."""
        return self._clearance_and_differentiated_normal(points)[1]

    def _clearance_and_differentiated_normal(self, points) -> tuple[np.ndarray, np.ndarray]:
        """The clearance and its central differences (step 1e-6 d/2), normalised, from one
        clearance call over the points and their six offsets (each call costs a tree search per
        part, whatever its size)."""
        h = 1e-6 * self.radius
        offsets = np.concatenate([np.zeros((1, 3)), np.eye(3), -np.eye(3)]) * h
        values = self.clearance((points[:, None, :] + offsets[None]).reshape(-1, 3))
        values = values.reshape(len(points), 7)
        gradient = (values[:, 1:4] - values[:, 4:]) / (2.0 * h)
        normal = gradient / np.maximum(np.linalg.norm(gradient, axis=1, keepdims=True), 1e-300)
        return values[:, 0], normal

    def clearance_hessian(self, points, tangents) -> np.ndarray:
        """Second derivatives of the clearance along tangents, by central differences.

        Step 1e-3 d/2 along each tangent (the diagonal terms over twice that).

        Parameters
        ----------
        points : array_like, shape (N, 3)
            Probe centres, m.
        tangents : numpy.ndarray, shape (N, m, 3)
            Unit tangent directions at each point.

        Returns
        -------
        numpy.ndarray, shape (N, m, m)
            1/m.

        References
        ----------
        M. Abramowitz and I. A. Stegun, Handbook of Mathematical Functions, 25.3.23 and 25.3.26.
        """
        points = np.asarray(points, float).reshape(-1, 3)
        n, m = tangents.shape[0], tangents.shape[1]
        h = 1e-3 * self.radius
        c0 = self.clearance(points)
        result = np.zeros((n, m, m))
        for a in range(m):
            for b in range(a, m):
                ta, tb = tangents[:, a] * h, tangents[:, b] * h
                pp = self.clearance(points + ta + tb)
                mm = self.clearance(points - ta - tb)
                if a == b:
                    result[:, a, a] = (pp - 2.0 * c0 + mm) / (4.0 * h * h)
                else:
                    pm = self.clearance(points + ta - tb)
                    mp = self.clearance(points - ta + tb)
                    result[:, a, b] = result[:, b, a] = (pp - pm - mp + mm) / (4.0 * h * h)
        return result

    def project_to_surface(self, points, basis, iterations=6) -> np.ndarray:
        """Points moved along the allowed directions onto clearance = d/2 by Newton steps.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            Probe centres, m.
        basis : numpy.ndarray, shape (k, 3)
            Orthonormal rows of the allowed directions.
        iterations : int
            Number of Newton steps on the clearance.

        Returns
        -------
        numpy.ndarray, shape (N, 3)
            m.
        """
        x = np.asarray(points, float).reshape(-1, 3).copy()
        projector = basis.T @ basis
        for _ in range(iterations):
            clearance, normal = self.clearance_and_normal(x)
            gap = clearance - self.radius
            n_allowed = normal @ projector
            size2 = np.einsum("ni,ni->n", n_allowed, n_allowed)
            step = np.divide(gap, size2, out=np.zeros_like(gap), where=size2 > 1e-12)
            x -= step[:, None] * n_allowed
        return x


def pseudo_solve(K, g):
    """K^+ g per point, ignoring eigenvalues below 1e-10 of the largest (marginal directions).

    The pseudo-inverse by the eigen-decomposition.

    Parameters
    ----------
    K : ndarray, shape (N, k, k)
        Symmetric, N/m.
    g : ndarray, shape (N, k)
        N.

    Returns
    -------
    ndarray, shape (N, k)
        m.

    References
    ----------
    Golub & Van Loan, Matrix Computations, 4th ed., section 5.5.
    """
    values, vectors = np.linalg.eigh(K)
    top = np.max(np.abs(values), axis=1, keepdims=True)
    inverse = np.divide(1.0, values, out=np.zeros_like(values), where=np.abs(values) > 1e-10 * top)
    return np.einsum("nij,nj,nkj,nk->ni", vectors, inverse, vectors, g)


def flat_along_orbit(K_t, tangents, orbit):
    """K_t with no stiffness along the orbit of a continuous symmetry: P K_t P.

    Along such an orbit the energy is constant, so an equilibrium there is one of a circle of
    them, marginal (DESIGN.md, Physics). What a model finds along it instead is its own error:
    the finite-size rule is not invariant under every rotation, and a faceted mesh's clearance
    curves by facet; Newton's steps on it wandered along the circle.

    Parameters
    ----------
    K_t : ndarray, shape (N, m, m)
        N/m, in the tangents' coordinates.
    tangents : ndarray, shape (N, m, 3)
    orbit : ndarray, shape (N, 3)
        Unit orbit directions, or zeros where there is none.

    Returns
    -------
    ndarray, shape (N, m, m)
        N/m; P is the projector off the orbit's share of the tangents, the identity where the
        orbit lies less than half along the surface.
    """
    along = np.einsum("nmi,ni->nm", tangents, orbit)
    size = np.linalg.norm(along, axis=1, keepdims=True)
    unit = np.divide(along, size, out=np.zeros_like(along), where=size > 0.5)
    P = np.eye(along.shape[1])[None] - unit[:, :, None] * unit[:, None, :]
    return P @ K_t @ P


def line_contacts(grid, geometry, starts) -> np.ndarray:
    """On a line: the contact points where clearance = d/2, by bisection.

    Bisects (60 halvings) between each boundary sample and its blocked neighbour.

    Parameters
    ----------
    grid : ScanGrid
        A line grid.
    geometry : ProbeGeometry
    starts : ndarray of int, shape (S,)
        Flat indices of admissible samples next to a blocked one.

    Returns
    -------
    ndarray, shape (M, 3)
        m, admissible (the admissible end of each bracket).
    """
    n = len(grid.points)
    blocked = grid.inside_box & ~grid.admissible
    found = []
    for step in (-1, 1):
        neighbour = starts + step
        valid = (neighbour >= 0) & (neighbour < n)
        valid[valid] &= blocked[neighbour[valid]]
        a, b = grid.points[starts[valid]], grid.points[neighbour[valid]]
        for _ in range(60):
            middle = 0.5 * (a + b)
            good = geometry.clearance(middle) >= geometry.radius
            a = np.where(good[:, None], middle, a)
            b = np.where(good[:, None], b, middle)
        found.append(a)
    return np.concatenate(found) if found else np.zeros((0, 3))


def tangent_basis(normals, basis):
    """Orthonormal directions allowed by the constraint and along the surface.

    Parameters
    ----------
    normals : ndarray, shape (N, 3)
        Unit surface normals.
    basis : ndarray, shape (k, 3)
        The constraint's allowed directions.

    Returns
    -------
    ndarray, shape (N, k - 1, 3)
    """
    projector = basis.T @ basis
    n_allowed = normals @ projector
    size = np.linalg.norm(n_allowed, axis=1, keepdims=True)
    unit = np.divide(n_allowed, size, out=np.zeros_like(n_allowed), where=size > 1e-12)
    m = basis.shape[0] - 1
    if m <= 0 or len(normals) == 0:
        return np.zeros((len(normals), max(m, 0), 3))
    along = np.matmul(basis, unit[:, :, None])[..., 0]  # basis @ unit[i] per point, bit for bit
    allowed = basis[None] - along[:, :, None] * unit[:, None, :]
    return np.linalg.svd(allowed)[2][:, :m]


def surface_descent(model, geometry, starts, basis, iterations=DESCENT_ITERATIONS):
    """Steepest descent of U along the contact surface.

    Re-projected after each step, step doubled on success and quartered on failure.

    Parameters
    ----------
    model : ProbeModel
    geometry : ProbeGeometry
    starts : ndarray, shape (N, 3)
        m, near the surface.
    basis : ndarray, shape (k, 3)
    iterations : int

    Returns
    -------
    ndarray, shape (N, 3)
        m, on the surface (clearance = d/2).
    """
    x = geometry.project_to_surface(starts, basis)
    U, F = model.energy_and_force(x)
    normals = geometry.normal(x)
    h = geometry.spacing
    step = np.full(len(x), 0.25 * h)
    active = np.ones(len(x), bool)
    for _ in range(iterations):
        idx = np.flatnonzero(active)
        if len(idx) == 0:
            break
        tangents = tangent_basis(normals[idx], basis)
        push = np.einsum("nmi,ni->nm", tangents, F[idx])  # -grad U along the surface
        size = np.linalg.norm(push, axis=1)
        move = np.einsum("nm,nmi->ni", push / np.maximum(size, 1e-300)[:, None], tangents)
        trial = geometry.project_to_surface(x[idx] + step[idx, None] * move, basis, 3)
        U_t, F_t = model.energy_and_force(trial)
        # one distance search at the trials: their admissibility, and the normal there for
        # the next step of those accepted (a rejected start keeps its point and normal)
        clearance, normal = geometry.clearance_and_normal(trial)
        better = (U_t < U[idx]) & geometry.admissible(trial, 1e-6, clearance)
        accepted = idx[better]
        x[accepted], U[accepted], F[accepted] = trial[better], U_t[better], F_t[better]
        normals[accepted] = normal[better]
        step[accepted] *= 2.0
        step[idx[~better]] *= 0.25
        active[idx[(step[idx] < 1e-7 * h) | (size == 0.0)]] = False
    return x


def surface_newton(model, geometry, points, basis, iterations=8, orbit=None):
    """Newton's method for a contact equilibrium along the surface.

    It uses the tangential force and the surface-restricted Hessian K_t of contact_state, steps
    limited to half a grid step and re-projected onto the surface. Used to polish a descent and
    to re-solve with the finite size, where each evaluation is costly.

    Parameters
    ----------
    model : ProbeModel
    geometry : ProbeGeometry
    points : ndarray, shape (N, 3)
        m, on the surface.
    basis : ndarray, shape (k, 3)
    iterations : int
    orbit : callable or None
        contact_state's: no step is taken along an orbit (its stiffness is zero).

    Returns
    -------
    ndarray, shape (N, 3)
        m; unchanged on a line (k = 1), where the geometry fixes the contact.
    """
    x = np.asarray(points, float).reshape(-1, 3).copy()
    if basis.shape[0] <= 1 or len(x) == 0:
        return x
    h = geometry.spacing
    active = np.ones(len(x), bool)
    for _ in range(iterations):
        idx = np.flatnonzero(active)
        if len(idx) == 0:
            break
        state = contact_state(model, geometry, x[idx], basis, orbit)
        tangents = state.tangents
        push = np.einsum("nmi,ni->nm", tangents, state.F)
        step = pseudo_solve(state.K_t, push)
        size = np.linalg.norm(step, axis=1)
        step *= np.minimum(1.0, 0.5 * h / np.maximum(size, 1e-300))[:, None]
        trial = geometry.project_to_surface(x[idx] + np.einsum("nm,nmi->ni", step, tangents), basis)
        ok = geometry.admissible(trial, tolerance=1e-6)
        x[idx[ok]] = trial[ok]
        active[idx[~ok | (size < 1e-9 * h)]] = False
    return x


class ContactState(NamedTuple):
    """What contact_state finds at contact points (see there for shapes and units)."""

    normals: np.ndarray
    normal_force: np.ndarray
    tangents: np.ndarray
    K_t: np.ndarray
    F: np.ndarray
    U: np.ndarray


def contact_state(model, geometry, points, basis, orbit=None) -> ContactState:
    """Normal, normal force, tangents, the surface-restricted Hessian, force and energy at
    contact points (the energy from the same evaluation as the force).

    K_t = T (Hess U - N Hess c) T^T (Lagrange multiplier N = -dU/dc; derived here).

    Parameters
    ----------
    model : ProbeModel
    geometry : ProbeGeometry
    points : ndarray, shape (N, 3)
        m, on the surface.
    basis : ndarray, shape (k, 3)
    orbit : callable or None
        points (N, 3) -> unit directions (N, 3) of a continuous symmetry's orbits (zeros where
        there is none): K_t has no stiffness along them (flat_along_orbit).

    Returns
    -------
    ContactState, whose fields are:
    normals : ndarray, shape (N, 3)
        Unit, from the surface towards the probe.
    normal_force : ndarray, shape (N,)
        N, > 0 when the probe is pressed against the surface.
    tangents : ndarray, shape (N, k - 1, 3)
    K_t : ndarray, shape (N, k - 1, k - 1)
        N/m.
    F : ndarray, shape (N, 3)
        Total force on the probe, N.
    U : ndarray, shape (N,)
        Total energy of the probe, J.

    References
    ----------
    Derived here (K_t with the Lagrange multiplier N = -dU/dc).
    """
    normals = geometry.normal(points)
    U, F = model.energy_and_force(points)
    projector = basis.T @ basis
    n_allowed = normals @ projector
    size2 = np.einsum("ni,ni->n", n_allowed, n_allowed)
    pressed = -np.einsum("ni,ni->n", F @ projector, n_allowed)
    normal_force = np.divide(pressed, size2, out=np.zeros_like(pressed), where=size2 > 1e-12)
    tangents = tangent_basis(normals, basis)
    m = tangents.shape[1]
    if m == 0:
        return ContactState(normals, normal_force, tangents, np.zeros((len(points), 0, 0)), F, U)
    K = model.hessian(points, tangents)
    curvature = geometry.clearance_hessian(points, tangents)
    K_t = K - normal_force[:, None, None] * curvature
    if orbit is not None:
        K_t = flat_along_orbit(K_t, tangents, orbit(points))
    return ContactState(normals, normal_force, tangents, K_t, F, U)
