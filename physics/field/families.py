"""Parts of one shape family evaluated together: one kernel call over all of a family's parts.

A board of 900 cubes evaluated one part at a time cost a Python round trip, a body-frame
transform and two small BLAS products per part per call (7-17 ms per part per call with BLAS's
threads spinning). Here the boxes of a model are packed once into arrays (centres, matrices,
dims, magnetisations, moments, far-field radii) and one numba kernel loops over points and, for
each, over the parts: the same closed form, the same far-field dipole beyond FAR_FIELD_SIZES part
sizes, the 3 x 3 rotations done in the kernel (physics/field/placed.py). Cylinders and rings
share one family (a cylinder is a ring of inner radius 0, as physics/field/cylinder.py evaluates
it). Other closed forms keep their per-part path in physics/field/sources.py, and so do parts
whose matrix is not a signed permutation (turned by other than right angles): for an
axis-aligned part every product in the rotation is exact, so the kernel gives the per-part path's
numbers bit for bit, while a turned part's 3 x 3 products round differently from BLAS's (the level
gauge's stiffness moved by 3.6e-12 relative, above the 1e-12 of tests/test_unchanged_outputs.py
and of the size BLAS's own thread count moves it, 5.4e-12).

The kernel runs serial below PARALLEL_MIN_WORK point-part pairs, where starting and joining
numba's threads costs more than they save, and shares the points out over the threads above it.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from trapscape.physics.field.cuboid import add_cuboids_H
from trapscape.physics.field import local_cells
from trapscape.physics.field.cylinder import add_rings_H
from trapscape.physics.field.sources import FAR_FIELD_SIZES

# Point-part pairs above which the family kernels run on numba's threads, from
# `benchmarks/family_crossover.py` (16 cubes, H and dH/dx) on 2026-12-03, load average 9 on the 2
# cores: up to 32,768 pairs the parallel call took the serial call's wall time (28 ms), at
# 131,072 pairs 114 ms against 184 ms. On a quiet machine the crossover is likely lower; a
# parallel call that does not pay only costs a thread start, so the bound errs high.
PARALLEL_MIN_WORK = 50_000


def _box_dims(params):
    size = np.asarray(params[0], float).reshape(3)
    if not np.all(size > 0.0):
        raise ValueError(f"cuboid edges must be positive, got {size}")
    return size


def _ring_dims(params):
    if len(params) == 2:  # a cylinder: (diameter, height)
        outer, inner, height = params[0], 0.0, params[1]
    else:
        outer, inner, height = params
    if not (outer > 0.0 and height > 0.0 and 0.0 <= inner < outer):
        raise ValueError(f"cylinder/ring dimensions must satisfy 0 <= inner_diameter < "
                         f"outer_diameter and height > 0 (got outer {outer}, inner {inner}, "
                         f"height {height})")
    return np.array([0.5 * outer, 0.5 * inner, 0.5 * height], float)


def _box_radius(dims):
    return 0.5 * np.linalg.norm(dims, axis=1)  # half the diagonal


def _ring_radius(dims):
    return np.hypot(dims[:, 0], dims[:, 2])  # the outer wall's rim


# source kind -> (family name, body dims from the source's params, the family's kernel, each
# part's circumradius from its body dims)
FAMILY_OF_KIND = {
    "box": ("box", _box_dims, add_cuboids_H, _box_radius),
    "cylinder": ("ring", _ring_dims, add_rings_H, _ring_radius),
    "ring": ("ring", _ring_dims, add_rings_H, _ring_radius),
}


@dataclass(frozen=True, eq=False)
class Family:
    """The parts of one family as arrays (K parts), world frame unless said otherwise."""

    name: str
    centers: np.ndarray  # (K, 3) m
    matrices: np.ndarray  # (K, 3, 3) body -> world
    params: np.ndarray  # (K, 3) body dims, m (per family, see FAMILY_OF_KIND)
    magnetizations: np.ndarray  # (K, 3) body frame, A/m
    moments: np.ndarray  # (K, 3) A m^2
    far: np.ndarray  # (K,) m: beyond this distance from the centre, the point dipole
    kernel: object
    radii: np.ndarray  # (K,) m: each part's circumradius about its centre
    # local_cells' expansions of the far parts, reused by later calls (a sub-family starts empty)
    expansions: list = field(default_factory=list, init=False, repr=False)

    def add_H(self, points, gradient, H, G) -> None:
        """Add the family's H (and dH/dx) at world points into H and G, in place: a large family
        at many points cell by cell (physics/field/local_cells.py), else part by part.

        Parameters
        ----------
        points : numpy.ndarray, shape (N, 3)
            World points, m, C-contiguous.
        gradient : bool
            Also add dH_i/dx_j into G.
        H : numpy.ndarray, shape (N, 3)
            Accumulator, A/m.
        G : numpy.ndarray, shape (N, 3, 3), or None
            Accumulator, A/m^2 (used only with gradient).
        """
        if len(self.centers) >= local_cells.MIN_PARTS and len(points) >= local_cells.MIN_POINTS:
            local_cells.add_H_by_cells(self, points, gradient, H, G)
            return
        self.add_H_direct(points, gradient, H, G)

    def add_H_direct(self, points, gradient, H, G) -> None:
        """add_H with every part summed at every point (one kernel call).

        Parameters
        ----------
        points, gradient, H, G
            As add_H.
        """
        if len(points) == 0:
            return
        scratch = G if gradient else np.zeros((1, 3, 3))
        parallel = len(points) * len(self.centers) >= PARALLEL_MIN_WORK
        self.kernel(points, self, gradient, H, scratch, parallel)


def _packed(name, sources, dims_of, kernel, radius_of) -> Family:
    def stacked(values, shape):
        return np.ascontiguousarray(np.array(values, float).reshape((len(sources),) + shape))

    params = stacked([dims_of(s.params) for s in sources], (3,))
    return Family(
        name=name,
        centers=stacked([s.center for s in sources], (3,)),
        matrices=stacked([s.matrix for s in sources], (3, 3)),
        params=params,
        magnetizations=stacked([s.magnetization for s in sources], (3,)),
        moments=stacked([s.moment for s in sources], (3,)),
        far=stacked([FAR_FIELD_SIZES * s.size for s in sources], ()),
        kernel=kernel,
        radii=np.ascontiguousarray(radius_of(params)),
    )


def axis_aligned(matrix) -> bool:
    """Whether a part's body-to-world matrix is a signed permutation (exact entries 0 and +-1).

    Parameters
    ----------
    matrix : array_like, shape (3, 3)

    Returns
    -------
    bool
    """
    R = np.asarray(matrix, float)
    ones = np.abs(R) == 1.0
    return bool(np.all(ones | (R == 0.0)) and np.all(ones.sum(axis=0) == 1)
                and np.all(ones.sum(axis=1) == 1))


def _family_entry(source):
    entry = FAMILY_OF_KIND.get(source.kind)
    if (entry is None or source.near is not None or source.magnetization is None
            or not axis_aligned(source.matrix)):
        return None
    return entry


def evaluation_steps(sources) -> list:
    """The sources in their order, each run of consecutive parts of one family packed into a
    Family (plain dipole sets, summed apart by the model, do not break a run).

    Runs rather than whole families keep the order in which each point's field is summed, so
    the numbers are those of one part at a time to the last bit.

    Parameters
    ----------
    sources : sequence of physics.field.sources.Source

    Returns
    -------
    list of Family or Source
        A Family per run; every other source (polyhedra, spheres, radial parts, zoned dipole
        sets, parts turned by other than right angles) as it is.
    """
    steps, run, run_entry = [], [], None

    def close_run():
        if run:
            steps.append(_packed(run_entry[0], list(run), *run_entry[1:]))
            run.clear()

    for source in sources:
        if source.kind == "dipoles" and source.near is None:
            continue
        entry = _family_entry(source)
        if entry is None or (run and entry[0] != run_entry[0]):
            close_run()
        if entry is None:
            steps.append(source)
            continue
        run_entry = entry
        run.append(source)
    close_run()
    return steps
