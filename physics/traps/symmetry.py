"""The scene's symmetry as the probe feels it: the rotations and reflections about the magnets'
centre that map the parts (their geometry, their field and the plates) onto themselves and keep
gravity and the constraint. Found from the parts, never from shape names: candidate operations
come from the parts' centroids, and each is kept when every part lands on a part of the same
volume and moment (up to one sign), and then is accepted only when the clearance and
the field at test points around the magnets agree with their images.

A magnetic field is a pseudovector: an operation R (det R = +-1) maps B to det(R) R B. A probe
whose energy is even in B (soft, weak, a magnet free to turn) also feels an operation that maps
the magnets onto themselves with every polarity reversed (sign -1), as in a rotor of alternating
poles."""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.spatial import cKDTree

from trapscape.scene.measures import centroid, moment_world, volume
from trapscape.scene.shapes import shape_of

MAX_ORDER = 128  # largest n of an n-fold axis looked for (a 64-gon's 64 fits)
FIELD_TOLERANCE = 1e-4  # |B(Rx) - s det(R) R B(x)| below this share of |B|: the field agrees
# of a grid step: the parts' surfaces agree to what the search resolves (family_grouping's
# POSITION_TOLERANCE), so a fine polygon from CAD counts as round, as its equilibria do
CLEARANCE_TOLERANCE = 0.05
ON_AXIS = 1e-2  # grid steps: a point this near a continuous symmetry's axis has no circle
TEST_ANGLES = (2.0 * np.pi * 0.1234567, 2.0 * np.pi * 0.3819660)  # no n-fold axis has both


@dataclass(frozen=True, eq=False)
class Symmetry:
    """The symmetry operations of a scene about a centre.

    Attributes
    ----------
    centre : ndarray, shape (3,)
        m; the magnets' volume centroid, which every operation keeps.
    axis : ndarray, shape (3,) or None
        Unit axis of the rotations; None without one.
    order : int
        n of the n-fold axis; 0 for every angle (axisymmetric); 1 without rotations.
    operations : tuple of ndarray, shape (3, 3)
        The finite operations about the centre, the identity first (for order 0: the identity and
        the reflections that keep the axis).
    signs : tuple of int
        +1, or -1 where an operation maps every polarity onto its reverse.
    mirror_planes : int
        How many of the operations are reflections in a plane (det -1, trace 1).
    """

    centre: np.ndarray
    axis: np.ndarray | None
    order: int
    operations: tuple
    signs: tuple
    mirror_planes: int

    @property
    def continuous(self) -> bool:
        """Every rotation about the axis is a symmetry."""
        return self.order == 0 and self.axis is not None

    @property
    def trivial(self) -> bool:
        """Only the identity."""
        return not self.continuous and len(self.operations) <= 1

    @property
    def alternating(self) -> bool:
        """Some operation reverses the polarity (a pattern of alternating poles)."""
        return any(s < 0 for s in self.signs)

    def images(self, point) -> np.ndarray:
        """The point under every finite operation.

        Parameters
        ----------
        point : array_like, shape (3,)
            m.

        Returns
        -------
        ndarray, shape (len(operations), 3)
            m; the identity's image (the point itself) first.
        """
        offset = np.asarray(point, float) - self.centre
        return self.centre + np.array([R @ offset for R in self.operations])

    def orbit(self, spacing: float):
        """contact_state's orbit: orbit_directions zero within ON_AXIS grid steps of the axis (a
        circle of such points is one point), or None when the symmetry is not continuous.

        Parameters
        ----------
        spacing : float
            The search's grid step, m.

        Returns
        -------
        callable or None
        """
        if not self.continuous:
            return None
        return lambda points: self.orbit_directions(points, ON_AXIS * spacing)

    def orbit_directions(self, points, near_axis: float) -> np.ndarray:
        """Unit directions in which a continuous rotation moves each point.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            m.
        near_axis : float
            m; within this of the axis the direction is zero.

        Returns
        -------
        ndarray, shape (N, 3)
            axis x (point - centre), normalised; zero near the axis and for a symmetry that is
            not continuous.
        """
        offsets = np.asarray(points, float).reshape(-1, 3) - self.centre
        if not self.continuous:
            return np.zeros_like(offsets)
        moves = np.cross(self.axis, offsets)
        size = np.linalg.norm(moves, axis=1, keepdims=True)
        return np.divide(moves, size, out=np.zeros_like(moves),
                         where=size > max(near_axis, 1e-300))

    def circle_owners(self, points, distance: float) -> np.ndarray:
        """For each point, the first point of the same circle about the axis (a continuous
        symmetry): the same distance from the axis and height within distance.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            m.
        distance : float
            m.

        Returns
        -------
        ndarray of int, shape (N,)
            Index of each point's owner (itself for the first of its circle); every point its
            own owner for a symmetry that is not continuous.
        """
        points = np.asarray(points, float).reshape(-1, 3)
        owners = np.arange(len(points))
        if not self.continuous:
            return owners
        coordinates = np.array([self.circle_coordinates(p) for p in points]).reshape(-1, 2)
        for i in range(len(points)):
            near = np.max(np.abs(coordinates[:i] - coordinates[i]), axis=1) < distance
            earlier = np.flatnonzero(near & (owners[:i] == np.arange(i)))
            if len(earlier):
                owners[i] = earlier[0]
        return owners

    def carried_around(self, points, start, end) -> np.ndarray:
        """points turned about the axis by the angle that takes start to end, for each row.

        Parameters
        ----------
        points, start, end : array_like, shape (N, 3)
            m.

        Returns
        -------
        ndarray, shape (N, 3)
            m (Rodrigues' formula, as rotation()).
        """
        a = np.asarray(start, float).reshape(-1, 3) - self.centre
        b = np.asarray(end, float).reshape(-1, 3) - self.centre
        k = self.axis
        a_flat, b_flat = a - np.outer(a @ k, k), b - np.outer(b @ k, k)
        angle = np.arctan2(np.cross(a_flat, b_flat) @ k, np.einsum("ni,ni->n", a_flat, b_flat))
        v = np.asarray(points, float).reshape(-1, 3) - self.centre
        c, s = np.cos(angle)[:, None], np.sin(angle)[:, None]
        turned = v * c + np.cross(k, v) * s + np.outer(v @ k, k) * (1.0 - c)
        return self.centre + turned

    def circle_coordinates(self, point) -> tuple:
        """Where a point sits about the axis (for a continuous symmetry).

        Parameters
        ----------
        point : array_like, shape (3,)
            m.

        Returns
        -------
        tuple of two floats
            (distance from the axis, height along it from the centre), m.
        """
        offset = np.asarray(point, float) - self.centre
        height = float(offset @ self.axis)
        return float(np.linalg.norm(offset - height * self.axis)), height


def rotation(axis, angle: float) -> np.ndarray:
    """The rotation matrix about a unit axis (Rodrigues' formula).

    Parameters
    ----------
    axis : array_like, shape (3,)
        Unit vector.
    angle : float
        rad.

    Returns
    -------
    ndarray, shape (3, 3)

    References
    ----------
    Goldstein, Classical Mechanics, 3rd ed., eq. 4.92 (rotation formula).
    """
    a = np.asarray(axis, float)
    K = np.array([[0.0, -a[2], a[1]], [a[2], 0.0, -a[0]], [-a[1], a[0], 0.0]])
    return np.eye(3) + np.sin(angle) * K + (1.0 - np.cos(angle)) * (K @ K)


def reflection(normal) -> np.ndarray:
    """I - 2 n n^T: the reflection in the plane of unit normal n (through the origin).

    Parameters
    ----------
    normal : array_like, shape (3,)

    Returns
    -------
    ndarray, shape (3, 3)
    """
    n = np.asarray(normal, float)
    return np.eye(3) - 2.0 * np.outer(n, n)


class _Tester:
    """Checks candidate operations on the parts (centroid, volume, moment), then on the
    clearance and the field at test points."""

    def __init__(self, problem):
        model = problem.field_model
        self.model, self.problem = model, problem
        magnets = model.magnets
        self.volumes = np.array([volume(m) for m in magnets])
        centroids = np.array([centroid(m) for m in magnets])
        self.centre = (centroids.T @ self.volumes) / self.volumes.sum()
        self.centroids = centroids - self.centre
        self.moments = np.array([moment_world(m) for m in magnets])
        self.extent = max(float(np.max(np.linalg.norm(self.centroids, axis=1))),
                          max(shape_of(m).largest(m) for m in magnets))
        self.tree = cKDTree(self.centroids)
        self.points = self._test_points()
        self.clearance = model.clearance(self.points)
        self.B = model.B(self.points)
        self.even = _energy_is_even(problem.law)

    def _test_points(self) -> np.ndarray:
        """Fibonacci spheres (deterministic) around the centre, outside the parts."""
        count = 40
        k = np.arange(count) + 0.5
        z = 1.0 - 2.0 * k / count
        phi = np.pi * (1.0 + 5.0**0.5) * k
        unit = np.stack([np.sqrt(1 - z * z) * np.cos(phi), np.sqrt(1 - z * z) * np.sin(phi), z], 1)
        points = np.concatenate([self.centre + r * self.extent * unit for r in (0.6, 1.1)])
        keep = (self.model.clearance(points) > 0.0) & self.model.in_model(points)
        return points[keep]

    def keeps_setting(self, R) -> bool:
        """Gravity and the constraint's line or plane are mapped onto themselves."""
        problem = self.problem
        g = problem.gravity
        if np.linalg.norm(R @ g - g) > 1e-9 * (np.linalg.norm(g) + 1e-30):
            return False
        P = problem.basis.T @ problem.basis
        if np.abs(R @ P @ R.T - P).max() > 1e-9:
            return False
        moved = R @ (problem.constraint_point - self.centre) + self.centre
        return bool(np.linalg.norm((np.eye(3) - P) @ (moved - problem.constraint_point))
                    <= 1e-9 * (self.extent + 1e-30))

    def part_signs(self, R) -> tuple:
        """The signs s for which every part lands on a part of the same volume whose moment is
        s det(R) R times its own (to 1e-6)."""
        distance, j = self.tree.query(self.centroids @ R.T)
        if np.any(distance > 1e-6 * self.extent):
            return ()
        if np.any(np.abs(self.volumes[j] - self.volumes) > 1e-6 * self.volumes):
            return ()
        mapped = np.linalg.det(R) * (self.moments @ R.T)
        tolerance = 1e-6 * (np.max(np.linalg.norm(self.moments, axis=1)) + 1e-300)
        return tuple(sign for sign in (1, -1) if (sign > 0 or self.even)
                     and np.all(np.linalg.norm(self.moments[j] - sign * mapped, axis=1)
                                <= tolerance))

    def field_agrees(self, R, sign) -> bool:
        """The clearance and the field at the test points agree with their images."""
        if len(self.points) == 0:
            return False
        images = self.centre + (self.points - self.centre) @ R.T
        tolerance = CLEARANCE_TOLERANCE * self.problem.spacing
        if np.abs(self.model.clearance(images) - self.clearance).max() > tolerance:
            return False
        mapped = np.linalg.det(R) * (self.B @ R.T)
        size = np.linalg.norm(self.B, axis=1)
        error = np.linalg.norm(self.model.B(images) - sign * mapped, axis=1)
        return bool(np.all(error <= FIELD_TOLERANCE * (size + 1e-6 * np.median(size))))

    def accepts(self, R, signs=(1, -1)):
        """The sign of R when it is a symmetry, else None."""
        if not self.keeps_setting(R):
            return None
        for sign in self.part_signs(R):
            if sign in signs and self.field_agrees(R, sign):
                return sign
        return None


def _energy_is_even(law) -> bool:
    """U(B) = U(-B) for the probe (a test field of unit size in a general direction)."""
    B = np.array([[0.31, -0.52, 0.79]])
    return bool(np.isclose(law.magnetic_energy(B)[0], law.magnetic_energy(-B)[0], rtol=1e-12))


def _unique_directions(vectors) -> list:
    kept = []
    for v in vectors:
        size = np.linalg.norm(v)
        if size < 1e-12:
            continue
        v = v / size
        if all(abs(v @ k) < 1.0 - 1e-9 for k in kept):
            kept.append(v)
    return kept


def _candidate_axes(tester, problem) -> list:
    spread = (tester.centroids * tester.volumes[:, None]).T @ tester.centroids
    _, vectors = np.linalg.eigh(spread)
    return _unique_directions([*vectors.T, *np.eye(3), problem.gravity,
                               problem.constraint_direction])


def _best_axis(tester, axes):
    """(axis, order, sign of the generating rotation) of the highest-order axis, or None."""
    best = None
    for axis in axes:
        if all(tester.accepts(rotation(axis, a), signs=(1,)) == 1 for a in TEST_ANGLES):
            return axis, 0, 1
        for n in range(MAX_ORDER, 1, -1):
            if best is not None and n <= best[1]:
                break
            sign = tester.accepts(rotation(axis, 2.0 * np.pi / n))
            if sign is not None:
                best = (axis, n, sign)
                break
    return best


def _mirror_normals(tester, axis) -> list:
    """Normals of the planes a reflection could use: across the axis, and through it mapping
    the part farthest from it onto each part at the same distance and height (or through that
    part, or through world x and y when every part sits on the axis)."""
    c = tester.centroids
    height = c @ axis
    radial = c - np.outer(height, axis)
    rho = np.linalg.norm(radial, axis=1)
    normals = [axis]
    tolerance = 1e-6 * tester.extent
    if rho.max() <= tolerance:
        return _unique_directions(normals + [np.cross(axis, e) for e in np.eye(3)])
    first = int(np.lexsort((c[:, 2], c[:, 1], c[:, 0], -np.round(rho / tester.extent, 9)))[0])
    same = np.flatnonzero((np.abs(rho - rho[first]) <= tolerance)
                          & (np.abs(height - height[first]) <= tolerance))
    normals.append(np.cross(axis, radial[first]))
    normals += [radial[j] - radial[first] for j in same if j != first]
    return _unique_directions(normals)


def _closure(generators) -> tuple:
    """Every product of the generators (matrix, sign), identity first."""
    group = [(np.eye(3), 1)]
    frontier = list(group)
    while frontier and len(group) <= 8 * MAX_ORDER:
        new = []
        for A, sa in frontier:
            for B, sb in generators:
                C, sc = B @ A, sa * sb
                if all(np.abs(C - D).max() > 1e-6 for D, _ in group):
                    group.append((C, sc))
                    new.append((C, sc))
        frontier = new
    return tuple(group)


def scene_symmetry(problem) -> Symmetry:
    """The scene's symmetry operations for the trap search's probe, constraint and gravity.

    Parameters
    ----------
    problem : TrapProblem
        Its field model (the magnets and plates), law, gravity, constraint and grid step.

    Returns
    -------
    Symmetry
        The identity alone when the scene has no magnets or no symmetry.

    References
    ----------
    Derived here: B is a pseudovector, B'(Rx) = det(R) R B(x) (Jackson, Classical
    Electrodynamics, 3rd ed., section 6.10, parity of the fields).
    """
    if not problem.field_model.magnets:
        return Symmetry(np.zeros(3), None, 1, (np.eye(3),), (1,), 0)
    tester = _Tester(problem)
    best = _best_axis(tester, _candidate_axes(tester, problem))
    generators, axis, order = [], None, 1
    if best is not None:
        axis, order, sign = best
        axis = axis if axis[np.argmax(np.abs(axis))] > 0 else -axis  # +z rather than -z
        if order:
            generators.append((rotation(axis, 2.0 * np.pi / order), sign))
    if axis is None:
        normals = _unique_directions([*np.eye(3), problem.gravity])
    elif order == 0:  # one plane through the axis stands for all of them
        normals = _mirror_normals(tester, axis)[:2]
    else:
        normals = _mirror_normals(tester, axis)
    for normal in normals:
        R = reflection(normal)
        sign = tester.accepts(R)
        if sign is not None:
            generators.append((R, sign))
    group = _closure(generators)
    mirrors = sum(1 for R, _ in group
                  if np.linalg.det(R) < 0 and abs(np.trace(R) - 1.0) < 1e-9)
    return Symmetry(centre=tester.centre, axis=axis, order=order,
                    operations=tuple(R for R, _ in group), signs=tuple(s for _, s in group),
                    mirror_planes=mirrors)


def orbit_of(symmetry, spacing: float):
    """The symmetry's Symmetry.orbit for a grid step, or None without a symmetry.

    Parameters
    ----------
    symmetry : Symmetry or None
    spacing : float
        The search's grid step, m.

    Returns
    -------
    callable or None
    """
    return symmetry.orbit(spacing) if symmetry is not None else None
