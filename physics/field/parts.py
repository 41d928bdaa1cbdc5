"""From a scene's Magnet to its field sources, magnetisation and geometry in the world frame."""
from __future__ import annotations

import numpy as np

from trapscape.physics.field.sources import Source, magnetization_vector
from trapscape.scene.measures import smallest_dimension
from trapscape.scene.measures import volume as part_volume

# Below this, exact everywhere beats the equivalent sources (the exact form costs ~30-40 ns per
# triangle and point, 200 equivalent dipoles about 150 ns per point)
EXACT_TRIANGLE_LIMIT = 60
# Cut cells of a mesh's lattice set (method = "dipoles") are weighed by 16^3 sub-samples (one
# ray per column of them, cheap): the largest error of one part's set then falls from 3.5e-3
# (4^3) to 1e-3 (measured on the 12-segment benchmark rotor, 2026-12-02).
MESH_SUBSAMPLES = 16
RADIAL_CELLS_PER_WALL = 8  # radial parts have no closed form here: a dipole set of wall/8 cells


def body_bounds(magnet) -> tuple[np.ndarray, np.ndarray]:
    """Body-frame bounding box (lower, upper) in m."""
    d = magnet.dims
    if magnet.shape == "box":
        half = np.asarray(d, dtype=float) / 2.0
        return -half, half
    if magnet.shape in ("cylinder", "sphere"):
        r = d[0] / 2.0
        h = d[1] / 2.0 if magnet.shape == "cylinder" else r
        return np.array([-r, -r, -h]), np.array([r, r, h])
    if magnet.shape == "ring":
        r, h = d[0] / 2.0, d[2] / 2.0
        return np.array([-r, -r, -h]), np.array([r, r, h])
    vertices = body_mesh(magnet)[0]
    return vertices.min(axis=0), vertices.max(axis=0)


def body_mesh(magnet):
    """(vertices, faces) of a mesh or arc part in its body frame."""
    if magnet.shape == "mesh":
        return np.asarray(magnet.mesh_vertices, float), np.asarray(magnet.mesh_faces, np.int64)
    if magnet.shape == "arc":
        from trapscape.physics.field.arc import arc_mesh

        return arc_mesh(*magnet.dims)
    raise ValueError(f"{magnet.shape} has no mesh")


def bounding_diagonal(magnet) -> float:
    """Diagonal of the body-frame bounding box, m: the part's size for scales and far-field tests."""
    lower, upper = body_bounds(magnet)
    return float(np.linalg.norm(upper - lower))


def part_sdf(magnet, points) -> np.ndarray:
    from trapscape.physics.field.geometry import shape_sdf

    body = (np.asarray(points, float) - magnet.position) @ magnet.rotation
    mesh = body_mesh(magnet) if magnet.shape == "mesh" else None
    return shape_sdf(magnet.shape, magnet.dims, body, mesh=mesh)


def part_contains(magnet, points) -> np.ndarray:
    """(N,) bool: which world points lie inside the part (bounding box first, then its test)."""
    body = (np.asarray(points, float) - magnet.position) @ magnet.rotation
    lower, upper = body_bounds(magnet)
    candidates = np.flatnonzero(np.all((body >= lower) & (body <= upper), axis=1))
    inside = np.zeros(len(body), dtype=bool)
    if len(candidates):
        inside[candidates] = _inside_tests(magnet)[0](body[candidates])
    return inside


def part_magnetization(magnet, points) -> np.ndarray:
    """World-frame M (A/m) of the part at world points assumed inside it."""
    body = (np.asarray(points, float) - magnet.position) @ magnet.rotation
    return body_magnetization(magnet, body) @ magnet.rotation.T


def body_magnetization(magnet, body_points) -> np.ndarray:
    scale = magnet.remanence / (4e-7 * np.pi)
    if magnet.radial is None:
        return np.broadcast_to(magnetization_vector(magnet.remanence, magnet.north), body_points.shape).copy()
    radial = body_points.copy()
    radial[:, 2] = 0.0
    norm = np.linalg.norm(radial, axis=1, keepdims=True)
    direction = np.divide(radial, norm, out=np.zeros_like(radial), where=norm > 0)
    sign = 1.0 if magnet.radial == "radial-out" else -1.0
    return sign * scale * direction


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
    d = magnet.dims
    if magnet.shape == "box":
        return _placed(magnet, index, "box", (np.asarray(d, float),), M)
    if magnet.shape in ("cylinder", "ring", "sphere"):
        return _placed(magnet, index, magnet.shape, tuple(float(v) for v in d), M)
    return _placed(magnet, index, "polyhedron", body_mesh(magnet), M)


def default_cell_size(magnet, accuracy: float) -> float:
    """The cells that meet `accuracy` at 10% of the smallest dimension
    (physics.field.dipoles.cell_size_for), but radial parts are capped at wall / 8 to keep the set to
    a size a laptop builds in seconds (their accuracy then holds from about half a wall)."""
    if magnet.cell_size:
        return float(magnet.cell_size)
    from trapscape.physics.field.dipoles import cell_size_for

    smallest = smallest_dimension(magnet)
    if magnet.radial:
        return smallest / RADIAL_CELLS_PER_WALL
    return cell_size_for(accuracy, smallest)


def _dipole_source(magnet, index, accuracy) -> Source:
    from trapscape.physics.field.dipoles import discretise

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
        from trapscape.scene.errors import SceneError

        raise SceneError(f"magnet '{magnet.name}' ({magnet.origin or 'scene'}): cannot build its "
                         f"dipole set: {error}.") from None
    R = np.asarray(magnet.rotation, float)
    source = _placed(magnet, index, "dipoles", (), M,
                     dipole_positions=positions @ R.T + magnet.position,
                     dipole_moments=moments @ R.T)
    if not uniform:
        from dataclasses import replace

        source = replace(source, moment=source.dipole_moments.sum(axis=0))
    return source


def _equivalent_source(magnet, index) -> Source:
    """A many-triangle mesh: its exact form within CHECK_RADIUS circumradii of its centre, and
    beyond that equivalent dipoles fitted to it (physics/equivalent.py), far cheaper per point."""
    from trapscape.physics.field.equivalent import CHECK_RADIUS, fit_equivalent_dipoles

    exact = _exact_source(magnet, index)
    vertices, faces = body_mesh(magnet)
    centre = 0.5 * (vertices.min(axis=0) + vertices.max(axis=0))
    circumradius = float(np.linalg.norm(vertices - centre, axis=1).max())
    M = exact.magnetization

    def exact_H(body_points):
        from trapscape.physics.field.polyhedron import polyhedron_H

        return polyhedron_H(body_points, vertices, faces, M)

    positions, moments, _ = fit_equivalent_dipoles(exact_H, centre, circumradius)
    R = np.asarray(magnet.rotation, float)
    return _placed(magnet, index, "dipoles", (), M,
                   dipole_positions=positions @ R.T + magnet.position,
                   dipole_moments=moments @ R.T, near=exact,
                   near_centre=R @ centre + magnet.position,
                   near_radius=CHECK_RADIUS * circumradius)


def _inside_tests(magnet):
    """(inside, sdf) callables on body points. A mesh's brute-force distance costs about 50 ns
    per triangle and point, too much for a lattice, so meshes use the ray-parity inside test
    alone; primitives have cheap analytic distances."""
    if magnet.shape == "mesh":
        from trapscape.physics.field.voxels import mesh_inside

        vertices, faces = body_mesh(magnet)
        return (lambda p: mesh_inside(p, vertices, faces)), None
    from trapscape.physics.field.geometry import shape_sdf

    def sdf(body_points):
        return shape_sdf(magnet.shape, magnet.dims, body_points)

    return (lambda p: sdf(p) < 0.0), sdf


def part_sources(magnet, index, accuracy=1e-3) -> list[Source]:
    """The sources that make up one magnet: exact where a closed form exists, else dipoles."""
    if magnet.radial is not None or magnet.method == "dipoles":
        return [_dipole_source(magnet, index, accuracy)]
    if magnet.method == "exact" or magnet.shape != "mesh":
        return [_exact_source(magnet, index)]
    if len(magnet.mesh_faces) < EXACT_TRIANGLE_LIMIT:
        return [_exact_source(magnet, index)]
    return [_equivalent_source(magnet, index)]
