"""From a scene's Magnet to its field sources, magnetisation and geometry in the world frame."""
from __future__ import annotations

from dataclasses import replace

import numpy as np

from trapscape.physics.field.dipoles import cell_size_for, discretise
from trapscape.physics.field.equivalent import CHECK_RADIUS, SOURCE_COUNT, fit_equivalent_dipoles
from trapscape.physics.field.fit_cache import cached_fit, fit_key
from trapscape.physics.field.polyhedron import polyhedron_H
from trapscape.physics.field.sources import Source
from trapscape.scene.errors import SceneError
from trapscape.scene.measures import (
    body_magnetization,
    magnetization_strength,
    magnetization_vector,
    moment_world,
    radial_sign,
    smallest_dimension,
)
from trapscape.scene.measures import volume as part_volume
from trapscape.scene.shapes import shape_of
from trapscape.scene.shapes.frames import to_body

# Below this, exact everywhere beats the equivalent sources (the exact form costs ~30-40 ns per
# triangle and point, 200 equivalent dipoles about 150 ns per point)
EXACT_TRIANGLE_LIMIT = 60
# Cut cells of a mesh's lattice set (method = "dipoles") are weighed by 16^3 sub-samples (one
# ray per column of them, cheap): the largest error of one part's set then falls from 3.5e-3
# (4^3) to 1e-3 (measured on the 12-segment benchmark rotor, 2026-12-02).
MESH_SUBSAMPLES = 16
RADIAL_CELLS_PER_WALL = 8  # a radial part forced to dipoles (method = "dipoles"): wall/8 cells


def body_bounds(magnet) -> tuple[np.ndarray, np.ndarray]:
    """Body-frame bounding box of a part.

    Parameters
    ----------
    magnet : trapscape.scene.model.Magnet
        The part, SI units.

    Returns
    -------
    lower, upper : numpy.ndarray, shape (3,)
        m.
    """
    return shape_of(magnet).bounds(magnet)


def body_mesh(magnet):
    """The part's tessellation in its body frame.

    Exact for meshes, boxes and prisms, area-preserving for round parts (scene.shapes.sector).

    Parameters
    ----------
    magnet : trapscape.scene.model.Magnet
        The part, SI units.

    Returns
    -------
    vertices : numpy.ndarray, shape (V, 3)
        m.
    faces : numpy.ndarray of int, shape (F, 3)
        Vertex indices, counter-clockwise seen from outside.
    """
    return shape_of(magnet).tessellation(magnet)


def bounding_diagonal(magnet) -> float:
    """Diagonal of the body-frame bounding box: the part's size for scales and far-field tests.

    Parameters
    ----------
    magnet : trapscape.scene.model.Magnet
        The part, SI units.

    Returns
    -------
    float
        m.
    """
    lower, upper = body_bounds(magnet)
    return float(np.linalg.norm(upper - lower))


def part_sdf(magnet, points) -> np.ndarray:
    """Signed distance from world points to the part, negative inside.

    Parameters
    ----------
    magnet : trapscape.scene.model.Magnet
        The part, SI units.
    points : array_like, shape (N, 3)
        World points, m.

    Returns
    -------
    numpy.ndarray, shape (N,)
        m.
    """
    return shape_of(magnet).sdf(magnet, to_body(points, magnet.position, magnet.rotation))


def part_contains(magnet, points) -> np.ndarray:
    """Which world points lie inside the part (bounding box first, then the shape's test).

    Parameters
    ----------
    magnet : trapscape.scene.model.Magnet
        The part, SI units.
    points : array_like, shape (N, 3)
        World points, m.

    Returns
    -------
    numpy.ndarray of bool, shape (N,)
    """
    points = np.asarray(points, float).reshape(-1, 3)
    lower, upper = body_bounds(magnet)
    near = np.flatnonzero(_within_world_box(points, magnet, lower, upper))
    body = to_body(points[near], magnet.position, magnet.rotation)
    in_box = np.all((body >= lower) & (body <= upper), axis=1)
    inside = np.zeros(len(points), dtype=bool)
    if in_box.any():
        inside[near[in_box]] = shape_of(magnet).inside(magnet, body[in_box])
    return inside


def _within_world_box(points, magnet, lower, upper) -> np.ndarray:
    """Points in the world box around the rotated body box, widened far beyond rounding: a
    superset of the body box's points, found without rotating every point (a 1e6-point field)."""
    corners = np.array([[x, y, z] for x in (lower[0], upper[0]) for y in (lower[1], upper[1])
                        for z in (lower[2], upper[2])])
    world = corners @ np.asarray(magnet.rotation, float).T + magnet.position
    margin = 1e-9 * (np.abs(world).max() + float(np.max(upper - lower)))
    low, high = world.min(axis=0) - margin, world.max(axis=0) + margin
    return ((points[:, 0] >= low[0]) & (points[:, 0] <= high[0]) & (points[:, 1] >= low[1])
            & (points[:, 1] <= high[1]) & (points[:, 2] >= low[2]) & (points[:, 2] <= high[2]))


def part_magnetization(magnet, points) -> np.ndarray:
    """World-frame M of the part at world points assumed inside it.

    Parameters
    ----------
    magnet : trapscape.scene.model.Magnet
        The part, SI units.
    points : array_like, shape (N, 3)
        World points inside the part, m.

    Returns
    -------
    numpy.ndarray, shape (N, 3)
        A/m.
    """
    body = to_body(points, magnet.position, magnet.rotation)
    return body_magnetization(magnet, body) @ magnet.rotation.T


def _placed(magnet, index, kind, params, magnetization, **extra) -> Source:
    volume = part_volume(magnet)
    if magnetization is not None:
        moment = magnet.rotation @ (magnetization * volume)
    else:
        moment = np.zeros(3)
    return Source(
        name=magnet.name, part=index, kind=kind, params=params,
        center=np.asarray(magnet.position, float), matrix=np.asarray(magnet.rotation, float),
        magnetization=magnetization, size=bounding_diagonal(magnet), moment=moment, **extra,
    )


def _exact_source(magnet, index) -> Source:
    M = magnetization_vector(magnet.remanence, magnet.north)
    shape = shape_of(magnet)
    return _placed(magnet, index, shape.closed_form, shape.field_params(magnet), M)


def _radial_source(magnet, index) -> Source:
    """A radially magnetised part through its shape's radial closed form, M as (1,) signed A/m."""
    shape = shape_of(magnet)
    signed = np.array([radial_sign(magnet) * magnetization_strength(magnet.remanence)])
    source = _placed(magnet, index, shape.radial_closed_form, shape.radial_field_params(magnet),
                     None)
    return replace(source, magnetization=signed, moment=np.asarray(moment_world(magnet), float))


def default_cell_size(magnet, accuracy: float) -> float:
    """The lattice cell edge of a part's dipole set.

    The part's own cell_size when given; else the cells that meet ``accuracy`` at 10% of the
    smallest dimension (physics.field.dipoles.cell_size_for), but radial parts are capped at
    wall / 8 to keep the set to a size a laptop builds in seconds (their accuracy then holds from
    about half a wall).

    Parameters
    ----------
    magnet : trapscape.scene.model.Magnet
        The part, SI units.
    accuracy : float
        Relative accuracy (dimensionless).

    Returns
    -------
    float
        m.
    """
    if magnet.cell_size:
        return float(magnet.cell_size)

    smallest = smallest_dimension(magnet)
    if magnet.radial:
        return smallest / RADIAL_CELLS_PER_WALL
    return cell_size_for(accuracy, smallest)


def _dipole_source(magnet, index, accuracy) -> Source:
    inside, sdf = _inside_tests(magnet)
    cell = default_cell_size(magnet, accuracy)
    lower, upper = body_bounds(magnet)
    uniform = magnet.radial is None
    M = magnetization_vector(magnet.remanence, magnet.north) if uniform else None
    field_of_cells = M if uniform else (lambda p: body_magnetization(magnet, p))
    try:
        positions, moments, _ = discretise(inside, lower, upper, cell, field_of_cells,
                                           part_volume(magnet), sdf=sdf,
                                           subsamples=MESH_SUBSAMPLES if sdf is None else 4)
    except ValueError as error:  # e.g. a cell_size so small the lattice would not fit

        raise SceneError(f"magnet '{magnet.name}' ({magnet.origin or 'scene'}): cannot build its "
                         f"dipole set: {error}.") from None
    R = np.asarray(magnet.rotation, float)
    source = _placed(magnet, index, "dipoles", (), M,
                     dipole_positions=positions @ R.T + magnet.position,
                     dipole_moments=moments @ R.T)
    if not uniform:
        source = replace(source, moment=source.dipole_moments.sum(axis=0))
    return source


def _equivalent_source(magnet, index) -> Source:
    """A many-triangle mesh: its exact form within CHECK_RADIUS circumradii of its centre, and
    beyond that equivalent dipoles fitted to it (physics/equivalent.py), far cheaper per point;
    the fit kept on disk by the mesh and magnetisation (physics/field/fit_cache.py)."""
    exact = _exact_source(magnet, index)
    vertices, faces = body_mesh(magnet)
    centre = 0.5 * (vertices.min(axis=0) + vertices.max(axis=0))
    circumradius = float(np.linalg.norm(vertices - centre, axis=1).max())
    M = exact.magnetization

    def exact_H(body_points):
        return polyhedron_H(body_points, vertices, faces, M)

    key = fit_key(vertices, faces, M, SOURCE_COUNT)
    positions, moments, _ = cached_fit(
        key, lambda: fit_equivalent_dipoles(exact_H, centre, circumradius, SOURCE_COUNT))
    R = np.asarray(magnet.rotation, float)
    return _placed(magnet, index, "dipoles", (), M,
                   dipole_positions=positions @ R.T + magnet.position,
                   dipole_moments=moments @ R.T, near=exact,
                   near_centre=R @ centre + magnet.position,
                   near_radius=CHECK_RADIUS * circumradius)


def _inside_tests(magnet):
    """(inside, sdf) callables on body points. A mesh's brute-force distance costs about 50 ns
    per triangle and point, too much for a lattice, so such shapes give the inside test alone
    (ray parity); the others have cheap closed-form distances."""
    shape = shape_of(magnet)
    if not shape.cheap_distance:
        return (lambda p: shape.inside(magnet, p)), None

    def sdf(body_points):
        return shape.sdf(magnet, body_points)

    return (lambda p: sdf(p) < 0.0), sdf


def part_sources(magnet, index, accuracy=1e-3) -> list[Source]:
    """The sources that make up one magnet: exact where a closed form exists, else dipoles.

    Radial parts their shape's radial closed form (a lattice dipole set when the shape has none
    or with method = "dipoles"); method = "dipoles" a lattice dipole set; method = "exact",
    shapes that fit no far field and meshes of fewer than EXACT_TRIANGLE_LIMIT triangles the
    exact closed form; larger meshes the exact form near them and equivalent dipoles beyond.

    Parameters
    ----------
    magnet : trapscape.scene.model.Magnet
        The part, SI units.
    index : int
        The magnet's index in the scene (Source.part).
    accuracy : float
        Relative accuracy (dimensionless) of a dipole set (default_cell_size).

    Returns
    -------
    list of Source
        One source, placed in the world frame.

    Raises
    ------
    trapscape.scene.errors.SceneError
        When the dipole set cannot be built (e.g. a cell size so small the lattice would not fit).
    """
    radial_form = shape_of(magnet).radial_closed_form
    if magnet.radial is not None and radial_form is not None and magnet.method != "dipoles":
        return [_radial_source(magnet, index)]
    if magnet.radial is not None or magnet.method == "dipoles":
        return [_dipole_source(magnet, index, accuracy)]
    if magnet.method == "exact" or not shape_of(magnet).fit_far_field:
        return [_exact_source(magnet, index)]
    if len(body_mesh(magnet)[1]) < EXACT_TRIANGLE_LIMIT:
        return [_exact_source(magnet, index)]
    return [_equivalent_source(magnet, index)]
