"""Where the probe comes to rest: equilibria, their classification, wells and escape figures.

find_traps(field_model, scene) scans the probe's energy over the search box restricted to the
constraint (samples on the line, a grid on the plane, the 3D grid), drops the points where the
probe would overlap a magnet or a plate (clearance < d/2), takes candidate equilibria from the
grid (cells where every projected force component changes sign; for a magnet probe free to turn,
also minima of |B|), refines them by Newton's method on the exact force with the Hessian, merges
duplicates and classifies them by the projected Hessian (DESIGN.md, Physics). Contact equilibria
(the probe resting on a magnet or plate, clearance = d/2) are found by descending the energy
along the surface from the grid's lowest boundary cells. Wells get their escape figures from a
priority flood (physics.traps.escape), and a probe that is not small against the field's variation is
re-solved with its finite size (physics.probe.finite). Deterministic: no random numbers.
"""
from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
from scipy import ndimage
from scipy.spatial import cKDTree

from trapscape.physics.traps import escape
from trapscape.scene.units import MU0
from trapscape.physics.traps.contact import (ProbeGeometry, contact_state, in_box, line_contacts, pseudo_solve,
                             surface_descent, surface_newton)
from trapscape.physics.probe.laws import PointProbe, ProbeLaw, allowed_basis

MARGINAL_RATIO = 1e-6  # |eigenvalue| below this share of the largest: marginal (DESIGN.md)
FINITE_PROBE_THRESHOLD = 1e-2  # relative energy change above which the finite size is used
NEWTON_ITERATIONS = 40
FIELD_ZERO_RATIO = 1e-6  # |B| below this share of the local field scale: a field zero
MAX_CONTACT_STARTS = 600  # lowest boundary cells kept as starts of the surface descent

EARNSHAW_NOTE = (
    "Earnshaw-Braunbek: a {kind} probe has no fully stable free equilibrium outside the magnets "
    "(its energy is -|B|^2 or -|B| times a positive factor, and |B| is subharmonic where no "
    "magnet is, so the Hessian always has a direction that falls; gravity and saturation do not "
    "change that). Listed instead: the saddles and unstable points found, and the contact "
    "points where the probe rests pressed against a magnet or plate.")
NO_LEVITATION_NOTE = (
    "No stable levitation point for this diamagnetic probe in the search box: the field's "
    "minimum does not hold it in all three directions (with gravity: d(B^2/2)/dz = "
    "-mu0 rho g / |chi_eff| = {threshold:.3g} T^2/m is needed where it floats; Berry & Geim "
    "1997).")
CAUTION = (
    "Figures are from an idealised model (rigid magnets, a spherical probe); before handling "
    "strong magnets mind pinching and chipping, keep them from children (swallowed magnets), "
    "away from implanted medical devices, and defer to the supplier's data and local codes.")


# -- report -----------------------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class Contact:
    surface: str  # name of the magnet or plate the probe rests on
    normal_force_N: float  # push of the surface on the probe (> 0)
    normal: np.ndarray  # (3,) unit, from the surface towards the probe's centre


@dataclass(frozen=True, eq=False)
class Escape:
    energy_J: float  # lowest barrier out of the well
    force_N: float  # largest projected force met on the escape path up to the barrier
    exit: str | None  # "box" | "magnet" | "another well" | None (closed in: no escape)
    pass_position: np.ndarray  # (3,) m, where the barrier is (the refined saddle if one is there)
    path: np.ndarray  # (P, 3) m, grid points from the well to the exit


@dataclass(frozen=True, eq=False)
class Well:
    """The flooded region below the barrier (for the viewers)."""

    cells: np.ndarray  # (N,) bool over the flattened scan grid (reshape to grid.shape)
    interval_m: tuple | None  # line only: (t_min, t_max) along the line from constraint.point


@dataclass(frozen=True, eq=False)
class Equilibrium:
    position: np.ndarray  # (3,) m
    coordinate_m: float | None  # line: signed distance along the line from constraint.point
    energy_J: float
    classification: str  # stable | saddle | unstable | marginal
    stable_directions: int
    free_directions: int  # directions the probe may move in here (contact: along the surface)
    stiffness_N_per_m: tuple  # ascending eigenvalues of the projected Hessian (None: undefined)
    directions: np.ndarray  # (free_directions, 3) unit eigenvectors, in the same order
    frequency_Hz: tuple  # sqrt(k / m_p) / (2 pi), None where k <= 0 or undefined
    B_T: np.ndarray  # (3,)
    force_N: np.ndarray  # (3,) total force on the probe (balanced by the constraint / contact)
    contact: Contact | None = None
    escape: Escape | None = None
    well: Well | None = None
    family_size: int = 1  # > 1: one of a connected set of marginal equilibria (a circle)
    finite_probe_correction: float | None = None  # relative change of the magnetic energy
    finite_probe_shift_m: float | None = None  # how far the finite size moved the point
    note: str = ""


@dataclass(frozen=True, eq=False)
class ScanGrid:
    kind: str  # line | plane | free
    origin: np.ndarray  # (3,) m, the point with index 0
    axes: np.ndarray  # (k, 3) unit vectors of the grid axes (the allowed directions)
    spacing: float  # m
    shape: tuple  # k ints; arrays below are flattened in C order
    points: np.ndarray  # (N, 3) m
    inside_box: np.ndarray  # (N,) bool
    admissible: np.ndarray  # (N,) bool: inside the box and clearance >= d/2
    energy_J: np.ndarray  # (N,) point-model energy (0 where inadmissible)
    force_N: np.ndarray  # (N, 3) point-model force (0 where inadmissible)
    B_T: np.ndarray  # (N, 3)
    line_start_m: float = 0.0  # line: coordinate of the first sample from constraint.point
    force_is_exact: bool = True  # False: force_N from differences of energy_J on the grid

    @property
    def line_coordinates_m(self) -> np.ndarray | None:
        """Line: each sample's signed distance along the line from the constraint's point."""
        if self.kind != "line":
            return None
        return self.line_start_m + self.spacing * np.arange(len(self.points))


@dataclass(frozen=True, eq=False)
class FiniteProbe:
    used: bool  # the equilibria were re-solved with the finite size
    model: str  # what the finite-size model is
    threshold: float  # relative energy change above which it is used
    max_relative_correction: float  # largest |U_finite - U_point| / |U_point| over equilibria
    note: str


@dataclass(frozen=True, eq=False)
class TrapReport:
    probe_kind: str
    constraint_kind: str
    free_directions: int
    equilibria: tuple  # of Equilibrium, sorted along the line, else by energy
    grid: ScanGrid
    finite_probe: FiniteProbe
    earnshaw_note: str | None
    notes: tuple  # of str
    caution: str = CAUTION


# -- the scan grid ------------------------------------------------------------------------------

def scan_grid_geometry(scene):
    """(kind, origin, axes (k, 3), shape, points (N, 3), inside_box (N,), line start) of the
    grid restricted to the constraint. Line and plane grids are aligned on the constraint's
    point, the 3D grid on the box's lower corner."""
    from trapscape.scene.errors import SceneError

    box, c = scene.search_box, scene.constraint
    low, high, h = np.asarray(box.min, float), np.asarray(box.max, float), float(box.spacing)
    tolerance = 1e-9 * h
    if c.kind == "free":
        shape = box.shape()
        axes = np.eye(3)
        index = np.indices(shape).reshape(3, -1).T
        points = low + h * index
        return "free", low, axes, shape, points, in_box(points, low, high, tolerance), 0.0
    point = np.asarray(c.point, float)
    axes = allowed_basis(c)
    corners = np.array([[x, y, z] for x in (low[0], high[0]) for y in (low[1], high[1])
                        for z in (low[2], high[2])])
    if c.kind == "line":
        t_low, t_high = _line_in_box(point, axes[0], low, high)
        if t_low > t_high:
            raise SceneError(f"{_where(scene)}: the probe's constraint line does not cross the "
                             "search box; move [probe.constraint] point or widen [search_box].")
        first, last = int(np.ceil(t_low / h - 1e-9)), int(np.floor(t_high / h + 1e-9))
        t = h * np.arange(first, max(last, first + 1) + 1)
        points = point + t[:, None] * axes[0]
        return "line", points[0], axes, (len(t),), points, in_box(points, low, high, tolerance), t[0]
    extent = (corners - point) @ axes.T
    first = np.ceil(extent.min(axis=0) / h - 1e-9).astype(int)
    last = np.floor(extent.max(axis=0) / h + 1e-9).astype(int)
    shape = tuple(int(v) for v in np.maximum(last - first + 1, 2))
    index = np.indices(shape).reshape(2, -1).T + first
    points = point + (h * index) @ axes
    inside = in_box(points, low, high, tolerance)
    if not inside.any():
        raise SceneError(f"{_where(scene)}: the probe's constraint plane does not cross the "
                         "search box; move [probe.constraint] point or widen [search_box].")
    return "plane", points[0], axes, shape, points, inside, 0.0


def _where(scene) -> str:
    return scene.path or "the scene"


def _line_in_box(point, direction, low, high):
    """[t_low, t_high] of point + t direction inside the box (slab method)."""
    t_low, t_high = -np.inf, np.inf
    for axis in range(3):
        if abs(direction[axis]) < 1e-15:
            if not low[axis] <= point[axis] <= high[axis]:
                return 1.0, 0.0
            continue
        a = (low[axis] - point[axis]) / direction[axis]
        b = (high[axis] - point[axis]) / direction[axis]
        t_low, t_high = max(t_low, min(a, b)), min(t_high, max(a, b))
    return t_low, t_high


# -- scan ---------------------------------------------------------------------------------------

def _scan(field_model, scene, law, geometry, progress):
    """The energy on the grid. Line and plane grids also get the exact force; the 3D grid gets
    the force from central differences of U along the grid axes (one-sided next to a magnet),
    which is enough to find candidates and saves the gradient's cost at every node."""
    kind, origin, axes, shape, points, inside, start = scan_grid_geometry(scene)
    n = len(points)
    U, F, B = np.zeros(n), np.zeros((n, 3)), np.zeros((n, 3))
    admissible = np.zeros(n, bool)
    admissible[inside] = geometry.admissible(points[inside])
    chosen = np.flatnonzero(admissible)
    exact_force = kind != "free"
    if len(chosen):
        report = None if progress is None else (lambda done, total: progress(done, total, "scan"))
        if exact_force:
            H, G = field_model.applied_H(points[chosen], gradient=True, progress=report)
            F[chosen] = law.magnetic_force(MU0 * H, MU0 * G) + law.gravity_force()
        else:
            H = field_model.applied_H(points[chosen], progress=report)
        B[chosen] = MU0 * H
        U[chosen] = law.magnetic_energy(MU0 * H) + law.gravity_energy(points[chosen])
    if not exact_force:
        F = _grid_force(U, admissible, shape, axes, geometry.spacing)
    return ScanGrid(kind=kind, origin=origin, axes=axes, spacing=geometry.spacing, shape=shape,
                    points=points, inside_box=inside, admissible=admissible, energy_J=U,
                    force_N=F, B_T=B, line_start_m=start, force_is_exact=exact_force)


def _grid_force(U, admissible, shape, axes, spacing) -> np.ndarray:
    """-grad U (N, 3) from differences along the grid axes: central where both neighbours are
    admissible, one-sided where one is, zero where none is."""
    energy = U.reshape(shape)
    ok = admissible.reshape(shape)
    F = np.zeros(shape + (len(shape),))
    for axis in range(len(shape)):
        forward = np.zeros(shape, bool)
        backward = np.zeros(shape, bool)
        ahead = [slice(None)] * len(shape)
        behind = [slice(None)] * len(shape)
        ahead[axis], behind[axis] = slice(1, None), slice(None, -1)
        ahead, behind = tuple(ahead), tuple(behind)
        step = np.zeros(shape)
        step[behind] = energy[ahead] - energy[behind]  # U(i+1) - U(i) stored at i
        pair = ok[ahead] & ok[behind]
        forward[behind] = pair
        backward[ahead] = pair
        back_step = np.zeros(shape)
        back_step[ahead] = step[behind]  # U(i) - U(i-1) stored at i
        both = forward & backward
        total = np.where(both, 0.5 * (step + back_step),
                         np.where(forward, step, np.where(backward, back_step, 0.0)))
        F[..., axis] = -total / spacing
    return (F.reshape(-1, len(shape)) @ axes) * admissible[:, None]


def _flood_state(grid) -> np.ndarray:
    state = np.full(len(grid.points), escape.AT_MAGNET, np.int8)
    state[grid.admissible] = escape.ADMISSIBLE
    state[~grid.inside_box] = escape.OUTSIDE_BOX
    return state


# -- candidates ---------------------------------------------------------------------------------

def _corner_slices(k):
    """Slices picking each of the 2^k corners of every grid cell."""
    corners = np.indices((2,) * k).reshape(k, -1).T
    return [tuple(slice(c, None if c else -1) for c in corner) for corner in corners]


def _sign_change_cells(grid) -> np.ndarray:
    """Centres (M, 3) of the cells whose corners are all admissible and where every projected
    force component takes both signs (or zero) among the corners."""
    shape, k = grid.shape, len(grid.shape)
    ok = grid.admissible.reshape(shape)
    components = (grid.force_N @ grid.axes.T).reshape(shape + (k,))
    slices = _corner_slices(k)
    all_ok = np.logical_and.reduce([ok[s] for s in slices])
    low = np.minimum.reduce([components[s] for s in slices])
    high = np.maximum.reduce([components[s] for s in slices])
    change = all_ok & np.all((low <= 0.0) & (high >= 0.0), axis=-1)
    cells = np.argwhere(change)
    return grid.origin + (grid.spacing * (cells + 0.5)) @ grid.axes


def _local_minima(values, mask, shape) -> np.ndarray:
    """Flat indices of masked cells not above any masked neighbour (3^k neighbourhood)."""
    field = np.where(mask, values, np.inf).reshape(shape)
    lowest = ndimage.minimum_filter(field, size=3, mode="constant", cval=np.inf)
    return np.flatnonzero((field <= lowest).reshape(-1) & mask)


def _boundary_cells(grid) -> np.ndarray:
    """Admissible cells with a neighbour along an axis that is in the box but inadmissible."""
    shape = grid.shape
    blocked = (grid.inside_box & ~grid.admissible).reshape(shape)
    near = ndimage.binary_dilation(blocked, structure=ndimage.generate_binary_structure(len(shape), 1))
    return near.reshape(-1) & grid.admissible


# -- Newton refinement of free equilibria ---------------------------------------------------------

def _newton(model, geometry, starts, basis, iterations=NEWTON_ITERATIONS):
    """Newton's method on the projected force with a trust radius of one grid step, from each
    start; returns (points (M, 3), converged (M,) bool). Points stay admissible."""
    x = np.asarray(starts, float).reshape(-1, 3).copy()
    n, h = len(x), geometry.spacing
    radius = np.full(n, h)
    active = np.ones(n, bool)
    converged = np.zeros(n, bool)
    for _ in range(iterations):
        idx = np.flatnonzero(active)
        if len(idx) == 0:
            break
        xa = x[idx]
        g = model.force(xa) @ basis.T  # = -grad_q U
        K = model.hessian(xa, basis)
        step = pseudo_solve(K, g)
        size = np.linalg.norm(step, axis=1)
        step *= np.minimum(1.0, radius[idx] / np.maximum(size, 1e-300))[:, None]
        trial = xa + step @ basis
        ok = geometry.admissible(trial)
        x[idx[ok]] = trial[ok]
        done = ok & (size < 1e-10 * h)
        converged[idx[done]] = True
        active[idx[done]] = False
        radius[idx[~ok]] *= 0.25
        lost = ~ok & (radius[idx] < 1e-6 * h)
        active[idx[lost]] = False
    return x, converged


def _field_zeros(model, geometry, starts, basis, iterations=NEWTON_ITERATIONS):
    """Gauss-Newton on B(x) = 0 along the allowed directions; (points, is_zero)."""
    x = np.asarray(starts, float).reshape(-1, 3).copy()
    for _ in range(iterations):
        B, G = model.applied_field(x)
        J = G @ basis.T  # (n, 3, k): dB/dq
        step = -np.einsum("nki,ni->nk", np.linalg.pinv(J), B)
        size = np.linalg.norm(step, axis=1)
        step *= np.minimum(1.0, geometry.spacing / np.maximum(size, 1e-300))[:, None]
        trial = x + step @ basis
        ok = geometry.admissible(trial)
        x[ok] = trial[ok]
    B = model.applied_field(x)[0]
    scale = local_field_scale(model.field_model, x)
    return x, np.linalg.norm(B, axis=1) <= FIELD_ZERO_RATIO * scale


def local_field_scale(field_model, points) -> np.ndarray:
    """s(x) = max(|B|, 0.01 sum_k |B_k|) of DESIGN.md, Conventions, T."""
    points = np.asarray(points, float).reshape(-1, 3)
    total = MU0 * np.linalg.norm(field_model.applied_H(points), axis=1)
    parts = np.zeros(len(points))
    everything = range(len(field_model.magnets))
    for index in everything:
        others = [i for i in everything if i != index]
        parts += MU0 * np.linalg.norm(field_model.applied_H(points, exclude=others), axis=1)
    return np.maximum(total, 0.01 * parts)


# -- contact equilibria ---------------------------------------------------------------------------

def _contact_starts(grid) -> np.ndarray:
    """Flat indices of the lowest boundary cells: local minima of U among admissible cells."""
    boundary = _boundary_cells(grid)
    minima = _local_minima(grid.energy_J, grid.admissible, grid.shape)
    chosen = minima[boundary[minima]]
    order = np.lexsort((chosen, grid.energy_J[chosen]))
    return chosen[order[:MAX_CONTACT_STARTS]]


# -- classification -------------------------------------------------------------------------------

def classify(eigenvalues) -> str:
    """stable | unstable | saddle | marginal from the projected Hessian's eigenvalues
    (DESIGN.md, Physics). No free direction (pressed at a point on a line): stable."""
    values = np.asarray(eigenvalues, float)
    if values.size == 0:
        return "stable"
    top = np.max(np.abs(values))
    if top == 0.0 or np.any(np.abs(values) < MARGINAL_RATIO * top):
        return "marginal"
    if np.all(values > 0):
        return "stable"
    if np.all(values < 0):
        return "unstable"
    return "saddle"


def _eigen(K):
    values, vectors = np.linalg.eigh(K)
    return values, vectors


def _frequencies(stiffness, mass):
    return tuple(float(np.sqrt(k / mass) / (2.0 * np.pi)) if (k is not None and k > 0) else None
                 for k in stiffness)


def _make_equilibrium(x, U, K, frame, mass, B, F, scene, contact=None, note="", field_zero=False):
    """frame: (k, 3) rows in which K is expressed."""
    k = frame.shape[0]
    if field_zero:
        stiffness = tuple(None for _ in range(k))
        directions = frame.copy()
        classification, stable = "unstable", 0
        note = note or ("B = 0 here: the energy -m|B| is a cone, unstable by rule (DESIGN.md, "
                        "Physics)")
    else:
        values, vectors = _eigen(K)
        stiffness = tuple(float(v) for v in values)
        directions = (vectors.T @ frame) if k else np.zeros((0, 3))
        classification = classify(values)
        top = np.max(np.abs(values)) if k else 0.0
        stable = int(np.sum(values > MARGINAL_RATIO * top))
    return Equilibrium(
        position=np.asarray(x, float).copy(), coordinate_m=_coordinate(scene, x),
        energy_J=float(U), classification=classification, stable_directions=stable,
        free_directions=k, stiffness_N_per_m=stiffness, directions=np.asarray(directions),
        frequency_Hz=_frequencies(stiffness, mass), B_T=np.asarray(B, float).copy(),
        force_N=np.asarray(F, float).copy(), contact=contact, note=note)


def _coordinate(scene, x):
    c = scene.constraint
    if c.kind != "line":
        return None
    return float((np.asarray(x) - np.asarray(c.point, float)) @ np.asarray(c.direction, float))


# -- assembling equilibria ------------------------------------------------------------------------

def _free_equilibria(model, geometry, grid, basis, scene):
    starts = _sign_change_cells(grid)
    points, converged = _newton(model, geometry, starts, basis)
    points = _unique(points[converged], 1e-2 * geometry.spacing)
    found = []
    if len(points):
        U, F = model.energy_and_force(points)
        g = np.linalg.norm(F @ basis.T, axis=1)
        K = model.hessian(points, basis)
        top = np.max(np.abs(np.linalg.eigvalsh(K)), axis=1)
        B = model.applied_field(points)[0]
        for i in range(len(points)):
            if g[i] > 1e-4 * top[i] * geometry.spacing + 1e-30:
                continue  # Newton stalled on a slope (a kink of the energy): not an equilibrium
            found.append(_make_equilibrium(points[i], U[i], K[i], basis, model.law.mass, B[i],
                                           F[i], scene))
    if model.law.kind == "magnet" and model.law.orientation is None:
        found += _field_zero_equilibria(model, geometry, grid, basis, scene)
    return found


def _field_zero_equilibria(model, geometry, grid, basis, scene):
    size = np.linalg.norm(grid.B_T, axis=1)
    cells = _local_minima(size, grid.admissible, grid.shape)
    if len(cells) == 0:
        return []
    points, zero = _field_zeros(model, geometry, grid.points[cells], basis)
    points = _unique(points[zero], 1e-2 * geometry.spacing)
    if len(points) == 0:
        return []
    U, F = model.energy_and_force(points)
    return [_make_equilibrium(p, u, None, basis, model.law.mass, np.zeros(3), f, scene,
                              field_zero=True) for p, u, f in zip(points, U, F)]


def _contact_equilibria(model, geometry, grid, basis, scene):
    starts = _contact_starts(grid)
    if len(starts) == 0:
        return []
    if grid.kind == "line":
        points = line_contacts(grid, geometry, starts)
    else:
        points = surface_descent(model, geometry, grid.points[starts], basis)
        points = surface_newton(model, geometry, _unique(points, 2e-2 * geometry.spacing), basis)
    points = points[geometry.clearance(points) >= geometry.radius * (1 - 1e-6)]
    points = _unique(points, 2e-2 * geometry.spacing)
    if len(points) == 0:
        return []
    normals, pressed, tangents, K_t, F = contact_state(model, geometry, points, basis)
    U = model.energy(points)
    B = model.applied_field(points)[0]
    names = geometry.surface_name(points)
    found = []
    for i in range(len(points)):
        if pressed[i] <= 0.0:
            continue  # pulled away from the surface: not resting on it
        contact = Contact(surface=names[i], normal_force_N=float(pressed[i]), normal=normals[i])
        eq = _make_equilibrium(points[i], U[i], K_t[i], tangents[i], model.law.mass, B[i], F[i],
                               scene, contact=contact)
        if eq.classification in ("stable", "marginal"):
            found.append(eq)
    return found


def _unique(points, distance) -> np.ndarray:
    """Points with later near-duplicates (closer than `distance`) dropped, in a fixed order."""
    points = np.asarray(points, float).reshape(-1, 3)
    if len(points) == 0:
        return points
    order = np.lexsort(points.T[::-1])
    points = points[order]
    tree = cKDTree(points)
    keep = np.ones(len(points), bool)
    for i in range(len(points)):
        if keep[i]:
            for j in tree.query_ball_point(points[i], distance):
                if j > i:
                    keep[j] = False
    return points[keep]


def _merge_families(equilibria, spacing):
    """Marginal equilibria of one class and energy within reach of each other (a circle of
    equilibria in an axisymmetric scene) become one entry with family_size."""
    marginal = [i for i, e in enumerate(equilibria)
                if e.classification == "marginal" or _is_field_zero(e)]
    if len(marginal) < 2:
        return equilibria
    parent = {i: i for i in marginal}

    def root(i):
        while parent[i] != i:
            i = parent[i]
        return i

    positions = np.array([equilibria[i].position for i in marginal])
    tree = cKDTree(positions)
    for a, b in sorted(tree.query_pairs(2.5 * spacing)):
        ea, eb = equilibria[marginal[a]], equilibria[marginal[b]]
        scale = max(abs(ea.energy_J), abs(eb.energy_J), 1e-300)
        same_kind = ((ea.contact is None) == (eb.contact is None)
                     and _is_field_zero(ea) == _is_field_zero(eb))
        if same_kind and abs(ea.energy_J - eb.energy_J) <= 1e-6 * scale:
            parent[root(marginal[a])] = root(marginal[b])
    groups = {}
    for i in marginal:
        groups.setdefault(root(i), []).append(i)
    drop = set()
    result = list(equilibria)
    for members in groups.values():
        members.sort(key=lambda i: tuple(equilibria[i].position))
        first = members[0]
        note = (f"one of {len(members)} neighbouring equilibria of equal energy (a curve or "
                "sheet of equilibria along its marginal directions)")
        old = equilibria[first].note
        result[first] = replace(equilibria[first], family_size=len(members),
                                note=f"{old}; {note}" if old else note)
        drop.update(members[1:])
    return [e for i, e in enumerate(result) if i not in drop]


def _is_field_zero(eq) -> bool:
    return bool(eq.stiffness_N_per_m) and eq.stiffness_N_per_m[0] is None


# -- escape ---------------------------------------------------------------------------------------

def _has_well(eq) -> bool:
    if eq.classification == "stable":
        return True
    if eq.classification == "marginal" and eq.stiffness_N_per_m:
        return all(k is None or k > -MARGINAL_RATIO * max(abs(v) for v in eq.stiffness_N_per_m)
                   for k in eq.stiffness_N_per_m)
    return False


def _with_escapes(equilibria, grid, basis, scene, energy_at, grid_energy_at):
    """Escape figures for each well. The flood runs on the grid's (point-model) energies with
    the bottom in the same model (grid_energy_at); energy_at(points), the final model's energy,
    gives the barrier from its two ends."""
    state = _flood_state(grid)
    admissible_cells = np.flatnonzero(grid.admissible)
    if len(admissible_cells) == 0:
        return equilibria
    tree = cKDTree(grid.points[admissible_cells])
    wells = [i for i, e in enumerate(equilibria) if _has_well(e)]
    start_cells = {i: int(admissible_cells[tree.query(equilibria[i].position)[1]]) for i in wells}
    passes = [e for e in equilibria if e.classification in ("saddle", "unstable")
              and e.contact is None]
    pass_tree = cKDTree(np.array([e.position for e in passes])) if passes else None
    reach = 1.5 * grid.spacing * np.sqrt(len(grid.shape))
    F_along = np.linalg.norm(grid.force_N @ basis.T, axis=1)
    result = list(equilibria)
    for i in wells:
        eq = equilibria[i]
        others = np.zeros(len(grid.points), bool)  # reaching another well is leaving this one
        for j in wells:
            if j != i and start_cells[j] != start_cells[i]:
                others[start_cells[j]] = True
        bottom = float(grid_energy_at(eq.position[None])[0])
        flood = escape.flood_from(grid.energy_J, state, grid.shape, start_cells[i], bottom,
                                  exit_cells=others, magnets_are_exits=eq.contact is None)
        result[i] = replace(eq, escape=_escape_figures(eq, flood, grid, F_along, passes,
                                                        pass_tree, reach, energy_at, basis),
                            well=_well(flood, grid, scene))
    return result


def _escape_figures(eq, flood, grid, F_along, passes, pass_tree, reach, energy_at, basis):
    path_points = grid.points[flood.path]
    if flood.exit_kind is None:
        return Escape(energy_J=None, force_N=None, exit=None, pass_position=eq.position.copy(),
                      path=path_points)
    top_index = int(np.argmax(grid.energy_J[flood.path]))
    pass_position = grid.points[flood.path[top_index]]
    if pass_tree is not None:
        distance, j = pass_tree.query(pass_position)
        if distance <= reach:
            pass_position = passes[j].position
    bottom, top_energy = energy_at(np.array([eq.position, pass_position]))
    force = float(np.max(F_along[flood.path[:top_index + 1]]))  # restoring: up to the pass
    if eq.contact is not None:
        force = max(force, float(np.linalg.norm(eq.force_N @ basis.T @ basis)))
    return Escape(energy_J=float(max(top_energy - bottom, 0.0)), force_N=force,
                  exit=flood.exit_kind, pass_position=np.asarray(pass_position, float).copy(),
                  path=path_points)


def _well(flood, grid, scene) -> Well:
    interval = None
    if grid.kind == "line":
        t = grid.line_coordinates_m[flood.flooded]
        interval = (float(t.min()), float(t.max())) if len(t) else None
    return Well(cells=flood.flooded, interval_m=interval)


# -- finite probe ---------------------------------------------------------------------------------

def finite_probe_model(field_model, law, equilibria=()):
    """The finite-size model for this probe, or None when the point model is exact (a rigid
    magnet: physics.probe.finite). A soft probe saturated somewhere on its surface uses the
    volume average (the local approximation); otherwise the exact linear sphere."""
    from trapscape.physics.probe.finite import AveragedProbe, MultipoleProbe

    if law.kind == "magnet":
        return None
    if law.kind == "soft" and law.saturation is not None and equilibria:
        surface = np.array([e.position for e in equilibria])
        probe = MultipoleProbe(field_model, law)
        samples = (surface[:, None, :] + probe.radius * probe.directions[None]).reshape(-1, 3)
        if np.max(np.linalg.norm(field_model.applied_H(samples), axis=1)) > law.saturation_H:
            return AveragedProbe(field_model, law)
    return MultipoleProbe(field_model, law)


def _finite_correction(point_model, finite, equilibria, grid):
    """|U_finite - U_point| / max(|U_point|, U_ref) of the magnetic energy at each equilibrium;
    U_ref, the median |U| over the admissible grid, keeps field zeros (U_point = 0) from
    reading as infinite corrections."""
    if finite is None or not equilibria:
        return np.zeros(len(equilibria))
    points = np.array([e.position for e in equilibria])
    U_point = point_model.magnetic_energy_and_force(points)[0]
    U_finite = finite.magnetic_energy_and_force(points)[0]
    on_grid = point_model.law.magnetic_energy(grid.B_T[grid.admissible])
    reference = float(np.median(np.abs(on_grid))) if len(on_grid) else 0.0
    scale = np.maximum(np.abs(U_point), reference)
    return np.divide(np.abs(U_finite - U_point), scale, out=np.zeros_like(scale), where=scale > 0)


def _resolve_finite(finite, geometry, equilibria, basis, scene):
    """Each equilibrium re-solved with the finite-size model from its point-model position (in
    batches: the finite model costs a few hundred field points per position). A contact the
    finite size lifts off its surface (pressed no longer) is followed by Newton's method off
    the surface to a free equilibrium, if there is one nearby."""
    free = [e for e in equilibria if e.contact is None and not _is_field_zero(e)]
    contacts = [e for e in equilibria if e.contact is not None]
    result = [e for e in equilibria if _is_field_zero(e)]
    result += _resolve_free(finite, geometry, free, [e.position for e in free], basis, scene)
    resolved, lifted, starts = _resolve_contacts(finite, geometry, contacts, basis, scene)
    result += resolved
    notes = [f"lifted off {e.contact.surface} by the probe's finite size (the point model had it "
             "resting there)" for e in lifted]
    result += [r for r in _resolve_free(finite, geometry, lifted, starts, basis, scene, notes)
               if r.contact is None and "did not converge" not in r.note]
    return _drop_repeats(result, 1e-2 * geometry.spacing)


def _shifted(new, old):
    return replace(new, family_size=old.family_size,
                   finite_probe_correction=old.finite_probe_correction,
                   finite_probe_shift_m=float(np.linalg.norm(new.position - old.position)))


def _resolve_free(finite, geometry, equilibria, starts, basis, scene, notes=None):
    if not equilibria:
        return []
    x, ok = _newton(finite, geometry, np.asarray(starts, float).reshape(-1, 3), basis)
    U, F = finite.energy_and_force(x[ok])
    K = finite.hessian(x[ok], basis)
    B = finite.applied_field(x[ok])[0]
    result, j = [], 0
    for i, eq in enumerate(equilibria):
        if not ok[i]:
            result.append(replace(eq, note=(eq.note + "; " if eq.note else "") +
                                  "the finite-size refinement did not converge: point model"))
            continue
        note = notes[i] if notes is not None else eq.note
        new = _make_equilibrium(x[i], U[j], K[j], basis, finite.law.mass, B[j], F[j], scene,
                                note=note)
        result.append(_shifted(new, eq))
        j += 1
    return result


def _resolve_contacts(finite, geometry, equilibria, basis, scene):
    """(re-solved contacts, the contacts lifted off, where to start looking for them free)."""
    if not equilibria:
        return [], [], []
    x = np.array([e.position for e in equilibria])
    x = surface_newton(finite, geometry, x, basis)  # on a line: fixed by the geometry
    normals, pressed, tangents, K_t, F = contact_state(finite, geometry, x, basis)
    U = finite.energy(x)
    B = finite.applied_field(x)[0]
    names = geometry.surface_name(x)
    resolved, lifted, starts = [], [], []
    for i, eq in enumerate(equilibria):
        if pressed[i] <= 0.0:
            off = normals[i] @ basis.T @ basis
            off /= max(np.linalg.norm(off), 1e-300)
            lifted.append(eq)
            starts.append(x[i] + 0.5 * geometry.spacing * off)
            continue
        contact = Contact(surface=names[i], normal_force_N=float(pressed[i]), normal=normals[i])
        new = _make_equilibrium(x[i], U[i], K_t[i], tangents[i], finite.law.mass, B[i], F[i],
                                scene, contact=contact, note=eq.note)
        if new.classification in ("stable", "marginal"):
            resolved.append(_shifted(new, eq))
    return resolved, lifted, starts


def _drop_repeats(equilibria, distance):
    kept = []
    for eq in equilibria:
        if all(np.linalg.norm(eq.position - other.position) > distance for other in kept):
            kept.append(eq)
    return kept


# -- the finder -----------------------------------------------------------------------------------

def find_traps(field_model, scene, progress=None, finite_probe: bool | None = None) -> TrapReport:
    """Every equilibrium of the scene's probe in its search box, classified, with escape
    figures for the wells (see the module's docstring).

    progress: optional callable(done, total, stage) for long scans. finite_probe: None decides
    from the size of the correction (FINITE_PROBE_THRESHOLD), True/False forces it."""
    law = ProbeLaw.from_scene(scene)
    model = PointProbe(field_model, law)
    geometry = ProbeGeometry(field_model, scene, law)
    basis = allowed_basis(scene.constraint)
    grid = _scan(field_model, scene, law, geometry, progress)
    notes = []
    equilibria = _free_equilibria(model, geometry, grid, basis, scene)
    equilibria += _contact_equilibria(model, geometry, grid, basis, scene)
    if len(_contact_starts(grid)) >= MAX_CONTACT_STARTS:
        notes.append(f"Only the {MAX_CONTACT_STARTS} lowest grid cells next to a surface were "
                     "followed to contact points; a finer or smaller search box finds more.")
    equilibria = _merge_families(equilibria, geometry.spacing)

    finite = finite_probe_model(field_model, law, equilibria)
    corrections = _finite_correction(model, finite, equilibria, grid)
    largest = float(corrections.max()) if len(corrections) else 0.0
    use_finite = (largest > FINITE_PROBE_THRESHOLD) if finite_probe is None else bool(finite_probe)
    use_finite = use_finite and finite is not None and bool(equilibria)
    final_model = finite if use_finite else model
    equilibria = [replace(e, finite_probe_correction=float(c))
                  for e, c in zip(equilibria, corrections)]
    if use_finite:
        equilibria = _resolve_finite(finite, geometry, equilibria, basis, scene)
    equilibria = _with_escapes(equilibria, grid, basis, scene, final_model.energy, model.energy)
    equilibria = _sorted(equilibria, scene)
    return TrapReport(
        probe_kind=law.kind, constraint_kind=scene.constraint.kind, free_directions=len(basis),
        equilibria=tuple(equilibria), grid=grid,
        finite_probe=_finite_summary(finite, use_finite, largest),
        earnshaw_note=_earnshaw_note(law, scene, equilibria), notes=tuple(notes))


def _finite_summary(finite, used, largest) -> FiniteProbe:
    if finite is None:
        return FiniteProbe(used=False, model="point probe (exact for a rigid magnet)",
                           threshold=FINITE_PROBE_THRESHOLD, max_relative_correction=0.0,
                           note="A rigid, uniformly magnetised sphere feels the mean of B over its "
                           "volume, which equals B at its centre (B is harmonic there).")
    note = (f"Equilibria re-solved with the probe's finite size ({finite.description}); the "
            "scan grid, wells and escape paths use the point model." if used else
            f"Point model kept: the finite size changes the energy by at most {largest:.2g} "
            f"(threshold {FINITE_PROBE_THRESHOLD:g}).")
    return FiniteProbe(used=used, model=finite.description, threshold=FINITE_PROBE_THRESHOLD,
                       max_relative_correction=largest, note=note)


def _earnshaw_note(law, scene, equilibria):
    if scene.constraint.kind != "free":
        return None
    diamagnetic = law.kind == "weak" and law.chi_eff < 0
    if not diamagnetic:
        kind = "paramagnetic weak" if law.kind == "weak" else law.kind
        return EARNSHAW_NOTE.format(kind=kind)
    if any(e.classification == "stable" and e.contact is None for e in equilibria):
        return None
    threshold = MU0 * scene.probe.density * np.linalg.norm(scene.gravity) / abs(law.chi_eff)
    return NO_LEVITATION_NOTE.format(threshold=threshold)


def levitation_threshold(density: float, chi_eff: float, g: float = 9.81) -> float:
    """|d(B^2/2)/dz| = mu0 rho g / |chi_eff| that a diamagnet needs to float, T^2/m (Berry &
    Geim, Eur. J. Phys. 18, 307 (1997); Simon & Geim, J. Appl. Phys. 87, 6200 (2000))."""
    return MU0 * density * g / abs(chi_eff)


def _sorted(equilibria, scene):
    if scene.constraint.kind == "line":
        return sorted(equilibria, key=lambda e: (e.coordinate_m, e.energy_J))
    return sorted(equilibria, key=lambda e: (e.energy_J, tuple(e.position)))
