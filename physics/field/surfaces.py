"""Which side of a magnet's surface a point's field is taken on: one decision for H, M and the
inside flag.

B jumps by mu0 M across a magnet's face, and a point typed on a face (5.5 mm in a millimetre
scene) lands a rounding error inside or outside it after the unit conversion. A point inside a
part by less than FACE_BAND of the part's largest size counts as on its face, and a face is
evaluated on its outer side (DESIGN.md, Physics): the point's field is taken at its nearest
axis neighbour (body frame, FACE_BAND away) that lies outside the part. Everything a caller
reports at a point (H, M, the magnet that holds it) is then read at that one evaluation point,
so B = mu0 (H + M) and the inside flag cannot disagree. The band is far wider than rounding
(1e-16 of a coordinate) and than the closed forms' own snap to a face (1e-12 of the size), and
far below any length a magnet is made to.
"""
from __future__ import annotations

import numpy as np

from trapscape.physics.field.parts import part_contains
from trapscape.scene.measures import largest_dimension

FACE_BAND = 1e-9  # of the part's largest size: the DESIGN.md push off an edge, used for faces too
_AXES = np.concatenate([np.eye(3), -np.eye(3)])  # +x, +y, +z, -x, -y, -z


def owners(magnets, points) -> np.ndarray:
    """Index of the magnet holding each point by the shapes' own inside tests, -1 where none.

    Parameters
    ----------
    magnets : sequence of trapscape.scene.model.Magnet
        The scene's parts, SI units.
    points : array_like, shape (N, 3)
        World points, m.

    Returns
    -------
    numpy.ndarray of int, shape (N,)
        Where parts overlap, the first one in the scene's order.
    """
    points = np.asarray(points, dtype=float).reshape(-1, 3)
    owner = np.full(len(points), -1)
    for index in reversed(range(len(magnets))):
        owner[part_contains(magnets[index], points)] = index
    return owner


def evaluation_points(magnets, points) -> tuple[np.ndarray, np.ndarray]:
    """Where each point's field is taken, and the magnet that holds that place.

    A point inside a part by less than FACE_BAND of its largest size (some axis neighbour that
    far away is outside it) moves to the first such neighbour; every other point stays.

    Parameters
    ----------
    magnets : sequence of trapscape.scene.model.Magnet
        The scene's parts, SI units.
    points : array_like, shape (N, 3)
        World points, m.

    Returns
    -------
    where : numpy.ndarray, shape (N, 3)
        Evaluation points, m.
    owner : numpy.ndarray of int, shape (N,)
        Index of the magnet holding ``where`` (owners), -1 where none.

    References
    ----------
    DESIGN.md, Physics: a point on a face is evaluated on its outer side.
    """
    where = np.array(points, dtype=float).reshape(-1, 3)
    owner = owners(magnets, where)
    moved = np.zeros(len(where), dtype=bool)
    for index, magnet in enumerate(magnets):
        held = np.flatnonzero((owner == index) & ~moved)
        if not len(held):
            continue
        step = FACE_BAND * largest_dimension(magnet) * (_AXES @ np.asarray(magnet.rotation, float).T)
        for offset in step:
            if not len(held):
                break
            neighbour = where[held] + offset
            outside = ~part_contains(magnet, neighbour)
            where[held[outside]] = neighbour[outside]
            moved[held[outside]] = True
            held = held[~outside]
    if moved.any():
        owner[moved] = owners(magnets, where[moved])
    return where, owner
