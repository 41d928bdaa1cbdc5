"""A point on a magnet's face, typed in any unit, gets the field of the outer side (DESIGN.md,
Physics), with B and the inside flag read from one decision (physics/field/surfaces.py).

Property: over random parts (box, cylinder, ring, sphere, mesh), random rotations and the units
mm, m and in, B at a point on a face equals B at the same point moved outward by 1e-9 of the
part's size (the limit from outside), and the point is reported outside every magnet. Before
the fix about half the face points landed a rounding error inside their part and got B off by
mu0 M (about 1.3 T).
"""
from __future__ import annotations

import numpy as np
import pytest
from scipy.spatial import ConvexHull
from scene_factory import shape_part

from trapscape.physics.analysis.run import load_analysis
from trapscape.physics.analysis.views import field_samples
from trapscape.physics.field.surfaces import FACE_BAND, evaluation_points
from trapscape.scene.units import METRES_PER_UNIT

BR = 1.3  # T, the parts' remanence
OUTWARD = 1e-9  # of the part's size: where the outer limit is read
# Chosen before running: the field changes by about M * OUTWARD (times a log near edges, which
# the face points keep 10% of a size away from) between the face and the reference point, so
# 1e-6 Br leaves three decades of margin and is six decades below the mu0 M jump being tested.
TOLERANCE_T = 1e-6 * BR
UNITS = ("mm", "m", "in")
TYPICAL_SIZE_M = 0.01


def _list(values):
    return "[" + ", ".join(repr(float(v)) for v in values) + "]"


def _rotation_text(rng):
    return "[" + ", ".join(f"{a:.6g}" for a in rng.uniform(-180, 180, 3)) + "]"


def _box(rng, s):
    size = rng.uniform(0.3, 1.0, 3) * s
    axis, sign = rng.integers(3), rng.choice([-1.0, 1.0])
    points = rng.uniform(-0.4, 0.4, (4, 3)) * size
    points[:, axis] = sign * size[axis] / 2
    normals = np.zeros((4, 3))
    normals[:, axis] = sign
    return f'shape = "box"\nsize = {_list(size)}', points, normals, size.max()


def _round(rng, s, inner):
    diameter, height = rng.uniform(0.3, 1.0, 2) * s
    hole = rng.uniform(0.2, 0.7) * diameter if inner else 0.0
    phi = rng.uniform(0, 2 * np.pi, 4)
    radial = np.column_stack([np.cos(phi), np.sin(phi), np.zeros(4)])
    which = rng.integers(3 if inner else 2)
    if which == 0:  # top or bottom face
        sign = rng.choice([-1.0, 1.0])
        rho = rng.uniform(hole / 2 + 0.1 * (diameter - hole) / 2, 0.45 * diameter, (4, 1))
        points = radial * rho + [0, 0, sign * height / 2]
        normals = np.tile([0, 0, sign], (4, 1))
    else:  # outer wall, or the bore
        radius = diameter / 2 if which == 1 else hole / 2
        points = radial * radius + np.outer(rng.uniform(-0.4, 0.4, 4) * height, [0, 0, 1])
        normals = radial if which == 1 else -radial
    if inner:
        text = f'shape = "ring"\nsize = {_list([diameter, hole, height])}'
    else:
        text = f'shape = "cylinder"\nsize = {_list([diameter, height])}'
    return text, points, normals, max(diameter, height)


def _sphere(rng, s):
    diameter = rng.uniform(0.3, 1.0) * s
    normals = rng.normal(size=(4, 3))
    normals /= np.linalg.norm(normals, axis=1, keepdims=True)
    return f'shape = "sphere"\nsize = {_list([diameter])}', normals * diameter / 2, normals, diameter


def _mesh(rng, s, folder, unit, tag):
    corners = rng.normal(size=(10, 3)) * s / 2 + rng.uniform(-1, 1, 3) * s  # origin off the part
    hull = ConvexHull(corners)
    vertices = corners[hull.vertices]
    index = {old: new for new, old in enumerate(hull.vertices)}
    faces = np.vectorize(index.get)(hull.simplices)
    centre = vertices.mean(axis=0)
    for face in faces:  # wind each triangle counter-clockwise seen from outside
        a, b, c = vertices[face]
        if np.cross(b - a, c - a) @ (a - centre) < 0:
            face[[1, 2]] = face[[2, 1]]
    lines = ["v " + " ".join(repr(float(c)) for c in vertex) for vertex in vertices]
    lines += [f"f {a + 1} {b + 1} {c + 1}" for a, b, c in faces]
    path = folder / f"part-{tag}.obj"
    path.write_text("\n".join(lines) + "\n")
    chosen = faces[rng.integers(len(faces), size=4)]
    weights = rng.dirichlet([3, 3, 3], size=4) * 0.7 + 0.1  # kept off the edges
    weights /= weights.sum(axis=1, keepdims=True)
    triangles = vertices[chosen]
    points = np.einsum("nk,nkd->nd", weights, triangles)
    normals = np.cross(triangles[:, 1] - triangles[:, 0], triangles[:, 2] - triangles[:, 0])
    normals /= np.linalg.norm(normals, axis=1, keepdims=True)
    text = f'shape = "mesh"\nfile = "{path.name}"\nfile_units = "{unit}"'
    return text, points, normals, float(np.ptp(vertices, axis=0).max())


def _random_part(rng, kind, folder, unit, tag):
    s = TYPICAL_SIZE_M / METRES_PER_UNIT[unit]  # about 1 cm, written in the scene's unit
    if kind == "box":
        return _box(rng, s)
    if kind in ("cylinder", "ring"):
        return _round(rng, s, inner=kind == "ring")
    if kind == "sphere":
        return _sphere(rng, s)
    return _mesh(rng, s, folder, unit, tag)


CASES = [(kind, unit, seed) for kind in ("box", "cylinder", "ring", "sphere", "mesh")
         for unit in UNITS for seed in range(3)]


@pytest.mark.parametrize("kind, unit, seed", CASES)
def test_face_points_get_the_outer_limit(tmp_path, kind, unit, seed):
    rng = np.random.default_rng([seed, UNITS.index(unit), len(kind)])
    shape_text, body_points, body_normals, size = _random_part(rng, kind, tmp_path, unit, seed)
    position = rng.uniform(-3, 3, 3) * TYPICAL_SIZE_M / METRES_PER_UNIT[unit]
    north = rng.normal(size=3)
    (tmp_path / "scene.toml").write_text(
        f'units = "{unit}"\n[[magnet]]\nname = "part"\n{shape_text}\n'
        f"position = {_list(position)}\n"
        f"rotation = {_rotation_text(rng)}\nnorth = {_list(north)}\n"
        f"remanence = {BR}\n")
    analysis = load_analysis(tmp_path / "scene.toml")
    magnet = analysis.scene.magnets[0]
    scale = METRES_PER_UNIT[unit]
    R = np.asarray(magnet.rotation)
    # what a user types (the world point in the scene's unit), converted as the command line does
    typed = (body_points * scale @ R.T + magnet.position) / scale
    points_m = typed * scale
    outside_m = points_m + OUTWARD * size * scale * (body_normals @ R.T)

    on_face = field_samples(analysis, points_m)
    limit = field_samples(analysis, outside_m)
    csv_B = analysis.field_at(points_m).B
    assert np.all(limit["inside_magnet"] == -1)  # the reference really is outside
    assert np.all(on_face["inside_magnet"] == -1), "a face point reported inside its magnet"
    assert np.abs(on_face["B_T"] - limit["B_T"]).max() <= TOLERANCE_T
    assert np.array_equal(csv_B, on_face["B_T"])


def test_the_band_is_relative_to_the_part_and_only_catches_faces():
    """A point 10 band widths inside a part keeps its inside value; one just inside a face moves
    outside (a 1 m and a 1 um cube, so the band scales with the part)."""
    for edge in (1.0, 1e-6):
        part = shape_part("box", (edge, edge, edge))
        deep = np.array([[0, 0, edge / 2 - 10 * FACE_BAND * edge]])
        skin = np.array([[0, 0, np.nextafter(edge / 2, 0.0)]])
        where, owner = evaluation_points([part], np.vstack([deep, skin]))
        assert owner.tolist() == [0, -1]
        assert np.array_equal(where[0], deep[0]) and where[1, 2] > edge / 2


@pytest.mark.parametrize("kind", ["box", "cylinder", "ring", "sphere", "mesh"])
def test_inside_test_equals_the_body_frame_test_at_every_point(tmp_path, kind):
    """part_contains first keeps the points of a world box around the rotated part; the answer
    must be the body-frame test's at every point, on faces and box corners too."""
    from trapscape.physics.field.parts import body_bounds, part_contains
    from trapscape.scene.shapes import shape_of
    from trapscape.scene.shapes.frames import to_body

    rng = np.random.default_rng(len(kind))
    shape_text, body_points, _, size = _random_part(rng, kind, tmp_path, "mm", 0)
    (tmp_path / "scene.toml").write_text(
        f'units = "mm"\n[[magnet]]\nname = "part"\n{shape_text}\n'
        f"position = {_list(rng.uniform(-30, 30, 3))}\nrotation = {_rotation_text(rng)}\n"
        f"north = [0, 0, 1]\nremanence = {BR}\n")
    magnet = load_analysis(tmp_path / "scene.toml").scene.magnets[0]
    lower, upper = body_bounds(magnet)
    R, c = np.asarray(magnet.rotation), magnet.position
    corners = np.array([[x, y, z] for x in (lower[0], upper[0]) for y in (lower[1], upper[1])
                        for z in (lower[2], upper[2])])
    body = np.concatenate([rng.uniform(lower - 0.2 * (upper - lower), upper + 0.2 * (upper - lower),
                                       (20_000, 3)), body_points * 1e-3, corners])
    world = body @ R.T + c
    in_body = to_body(world, c, R)
    expected = np.zeros(len(world), dtype=bool)
    in_box = np.all((in_body >= lower) & (in_body <= upper), axis=1)
    expected[in_box] = shape_of(magnet).inside(magnet, in_body[in_box])
    assert 0 < expected.sum() < len(world)
    assert np.array_equal(part_contains(magnet, world), expected)
