"""The implant shell: the closed surface outside which |B| stays below a limit (0.5 mT for
implanted medical devices, ICNIRP, Health Physics 96(4):504-514, 2009).

Along each ray from the assembly's centre the field is sampled from a radius where a rigorous
bound already keeps it below the limit, inward; the first sample at or above the limit brackets
the OUTERMOST crossing (|B| is not monotonic along a ray between parts), which is then solved for
in log r against log |B| (the field falls as a power of r out there). The shell is reported by
its farthest point from the centre and by its largest distance from the nearest magnet surface;
its triangles join neighbouring rays (the convex hull of the directions).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.spatial import ConvexHull

from trapscape.physics.field.parts import part_sdf
from trapscape.physics.safety.directions import fibonacci_directions, refine_largest, with_axes
from trapscape.scene.units import MU0

DIRECTIONS = 96  # rays of the default shell (with the axes and the moments' directions)
OUTER_RATIO = 0.8  # each outer sample closes the gap to the enclosing sphere by this factor
INNER_SAMPLES = 24  # even samples inside the enclosing sphere
SOLVE_ROUNDS = 40  # Illinois steps at most; stops at RADIUS_RTOL
RADIUS_RTOL = 1e-9  # on log r and on log |B|


@dataclass(frozen=True, eq=False)
class Shell:
    """One shell |B| = limit (SI, world frame)."""

    limit_T: float
    centre: np.ndarray  # (3,) m
    directions: np.ndarray  # (N, 3) unit
    radii: np.ndarray  # (N,) m, outermost crossing along each direction (0: none)
    faces: np.ndarray  # (F, 3) int, triangles over the directions, outward
    radius: float  # m, the largest radius (refined between the rays)
    distance_from_surface: float  # m, the largest distance of the shell from the nearest magnet

    @property
    def points(self) -> np.ndarray:
        """(N, 3) m: the shell's vertices."""
        return self.centre + self.radii[:, None] * self.directions


def bound_radius(field, limit: float) -> float:
    """A radius beyond which |B| < limit for certain.

    Each part is a sum of dipoles M dV within a ball of radius a_k about its centroid c_k, and a
    dipole's |B| is at most mu0 |m| / (2 pi r^3) (on its axis), so at distance R from the
    centre c, |B| <= sum_k mu0 S_k / (2 pi (R - |c_k - c| - a_k)^3), S_k = |M| V of part k
    (derived here from the dipole field, J. D. Jackson, Classical Electrodynamics, 3rd ed. 5.56).
    With R = R_enc + (mu0 sum S / (2 pi limit))^(1/3) every term's denominator is at least that
    cube, so the bound holds.

    Parameters
    ----------
    field : trapscape.physics.safety.assembly.AssemblyField
        The magnets.
    limit : float
        |B| level, T.

    Returns
    -------
    float
        m, from field.centre.
    """
    reach = (MU0 * field.strengths.sum() / (2.0 * np.pi * limit)) ** (1.0 / 3.0)
    return field.enclosing_radius + reach


def scan_radii(field, outer: float) -> np.ndarray:
    """Sample radii, descending: geometric towards the enclosing sphere, then even inside it.

    Parameters
    ----------
    field : trapscape.physics.safety.assembly.AssemblyField
        The magnets.
    outer : float
        The first (largest) radius, m.

    Returns
    -------
    numpy.ndarray, shape (R,)
        m, descending, all positive.
    """
    enclosing = field.enclosing_radius
    gaps = [outer - enclosing]
    while gaps[-1] > 0.02 * enclosing:
        gaps.append(gaps[-1] * OUTER_RATIO)
    inner = enclosing * (1.0 - np.arange(INNER_SAMPLES) / INNER_SAMPLES)
    return np.concatenate([enclosing + np.array(gaps), inner])


def outermost_crossings(field, centre, directions, levels, radii) -> np.ndarray:
    """The outermost radius along each ray where |B| = level, for each level.

    Parameters
    ----------
    field : trapscape.physics.safety.assembly.AssemblyField
        The magnets.
    centre : array_like, shape (3,)
        The rays' origin, m.
    directions : numpy.ndarray, shape (N, 3)
        Unit vectors.
    levels : float or sequence of float
        T.
    radii : numpy.ndarray, shape (R,)
        Descending sample radii (scan_radii), m, the first where |B| < every level for certain;
        the samples inside the enclosing sphere are evaluated only on rays not yet crossed.

    Returns
    -------
    numpy.ndarray, shape (L, N), or (N,) for one level
        m; 0 where no sample reaches the level.

    Raises
    ------
    ValueError
        When |B| reaches a level at the first radius (the bound given was not one).
    """
    single = np.ndim(levels) == 0
    levels = np.atleast_1d(np.asarray(levels, float))
    n = len(directions)
    outer = radii[radii > field.enclosing_radius]
    strength = np.full((n, len(radii)), np.nan)
    strength[:, :len(outer)] = _strength(field, centre, directions, outer)
    rest = np.flatnonzero(~np.any(strength[:, :len(outer)] >= levels.max(), axis=1))
    if len(rest) and len(outer) < len(radii):
        strength[np.ix_(rest, np.arange(len(outer), len(radii)))] = _strength(
            field, centre, directions[rest], radii[len(outer):])
    result = np.zeros((len(levels), n))
    for k, level in enumerate(levels):
        above = strength >= level
        found = above.any(axis=1)
        first = np.argmax(above, axis=1)
        if np.any(found & (first == 0)):
            raise ValueError("the field bound failed: |B| above the level at the outer radius")
        rows = np.flatnonzero(found)
        inner, outer_r = radii[first[rows]], radii[first[rows] - 1]
        low = strength[rows, first[rows]]
        high = strength[rows, first[rows] - 1]
        result[k, rows] = _solve(field, centre, directions[rows], level, (inner, low),
                                 (outer_r, high))
    return result[0] if single else result


def _strength(field, centre, directions, radii) -> np.ndarray:
    """|B| (N, R) at centre + radii * directions."""
    points = centre + radii[None, :, None] * directions[:, None, :]
    B = field.B(points.reshape(-1, 3))
    return np.linalg.norm(B, axis=1).reshape(len(directions), len(radii))


def _solve(field, centre, directions, level, inside, outside):
    """Illinois regula falsi on f = log|B| - log level against log r, per ray, vectorised
    (M. Dowell and P. Jarratt, BIT 11, 168 (1971))."""
    (a, fa), (b, fb) = inside, outside
    a, b = np.log(a), np.log(b)
    fa, fb = np.log(fa / level), np.log(np.maximum(fb, 1e-300) / level)
    side = np.zeros(len(a), int)
    for _ in range(SOLVE_ROUNDS):
        c = np.where(fa != fb, (a * fb - b * fa) / (fb - fa), (a + b) / 2)
        c = np.clip(c, np.minimum(a, b), np.maximum(a, b))
        B = field.B(centre + np.exp(c)[:, None] * directions)
        fc = np.log(np.maximum(np.linalg.norm(B, axis=1), 1e-300) / level)
        keep_a = fc >= 0  # c is inside the shell: it replaces a
        a, fa, fb = (np.where(keep_a, c, a), np.where(keep_a, fc, fa),
                     np.where(keep_a & (side == 1), fb / 2, fb))
        fa = np.where(~keep_a & (side == -1), fa / 2, fa)
        b, fb = np.where(keep_a, b, c), np.where(keep_a, fb, fc)
        side = np.where(keep_a, 1, -1)
        if np.all((np.abs(fc) < RADIUS_RTOL) | (np.abs(b - a) < RADIUS_RTOL)):
            break
    return np.exp(c)


def implant_shells(field, levels, count: int = DIRECTIONS, refine: bool = True) -> list:
    """The shells |B| = level around the magnets, from one scan of the rays.

    Parameters
    ----------
    field : trapscape.physics.safety.assembly.AssemblyField
        The magnets.
    levels : sequence of float
        T (e.g. [0.5e-3, 1e-3]); the first is the implant limit.
    count : int
        Rays (plus the six axes and +-each part's and the total moment's direction).
    refine : bool
        Refine the first shell's farthest point and largest distance from the magnets between
        the rays (refine_largest).

    Returns
    -------
    list of Shell
        One per level.
    """
    centre = field.centre
    directions = with_axes(fibonacci_directions(count), [field.total_moment, *field.moments])
    radii_grid = scan_radii(field, bound_radius(field, min(levels)))
    all_radii = outermost_crossings(field, centre, directions, list(levels), radii_grid)
    faces = _outward_faces(directions)
    step = np.sqrt(4 * np.pi / count)
    shells = []
    for k, (level, radii) in enumerate(zip(levels, all_radii)):
        points = centre + radii[:, None] * directions
        distances = np.maximum(_surface_distance(field, points), 0.0)
        radius, distance = float(radii.max()), float(distances.max())
        if refine and k == 0 and radius > 0:
            crossing = _local_crossings(field, centre, level, radii_grid, radius)
            _, radius = refine_largest(crossing, directions, radii, step)
            _, distance = refine_largest(
                lambda u: _surface_distance(field, centre + crossing(u)[:, None] * u),
                directions, distances, step)
        shells.append(Shell(limit_T=level, centre=centre, directions=directions, radii=radii,
                            faces=faces, radius=radius, distance_from_surface=distance))
    return shells


def implant_shell(field, limit: float, count: int = DIRECTIONS, refine: bool = True) -> Shell:
    """The shell |B| = limit around the magnets (implant_shells with one level).

    Parameters
    ----------
    field : trapscape.physics.safety.assembly.AssemblyField
        The magnets.
    limit : float
        T (e.g. 0.5e-3).
    count : int
        Rays.
    refine : bool
        Refine between the rays.

    Returns
    -------
    Shell
    """
    return implant_shells(field, [limit], count, refine)[0]


def _surface_distance(field, points) -> np.ndarray:
    """Distance (N,) m from points to the nearest magnet's surface (negative inside)."""
    return np.min([part_sdf(m, points) for m in field.magnets], axis=0)


def _local_crossings(field, centre, level, radii_grid, radius):
    """Crossings along rays near the farthest one: scanned from 1.5 times its radius (the shell
    lies within a few percent there), or from the bound where even that is crossed."""
    local = np.concatenate([[1.5 * radius], radii_grid[radii_grid < 1.5 * radius]])

    def crossing(u):
        try:
            return outermost_crossings(field, centre, u, level, local)
        except ValueError:
            return outermost_crossings(field, centre, u, level, radii_grid)

    return crossing


def _outward_faces(directions) -> np.ndarray:
    """Triangles over unit directions (their convex hull), wound counter-clockwise outside."""
    faces = ConvexHull(directions).simplices.copy()
    a, b, c = (directions[faces[:, k]] for k in range(3))
    flip = np.einsum("ij,ij->i", np.cross(b - a, c - a), a + b + c) < 0
    faces[flip] = faces[flip][:, ::-1]
    return faces
