"""Will the steel plate saturate? An estimate of the flux density it must carry.

The flux that the magnets drive into the plate through their contact footprint must turn inside
the plate and leave it again, so it crosses the plate's section under the edge of the region
where it enters, about outline x thickness:

    B_plate ~ integral over the region of B . n dA / (outline of the region x thickness)

(a flux-conservation estimate of the kind used for holding magnets, common practice). The
regions are the parts of the footprint where B . n has one sign, taken for each part's own
footprint (flux that returns under a neighbour of opposite pole) and for the whole footprint
(parallel poles share one outer edge); the largest value is kept. For a magnet magnetised along
the plate, where the flux crosses only the line between the two halves, the outline counts the
half's whole edge, so the estimate is low there (by about that outline over the width). The
mirror model behind the pull assumes a plate that never saturates: where B_plate reaches the
plate's saturation, or the plate is thin, the real pull is lower than the one computed.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trapscape.physics.field.parts import body_bounds, part_sdf
from trapscape.physics.holding.forces import lowest_point
from trapscape.scene.shapes import shape_of
from trapscape.scene.shapes.frames import box_corners, perpendicular_pair, to_world

FOOTPRINT_NODES = 96  # grid nodes on the longer side of the footprint's box
HEIGHT_SAMPLES = 24  # samples along the plate normal when projecting a part onto the plate
LIFT = 1e-6  # of the part size: face points are lifted off the plate, into a magnet in contact


@dataclass(frozen=True, eq=False)
class Footprint:
    """The parts' shadow on a plate's face, on a grid of nodes (u, v) in the plate's frame.

    origin (3,), axes (2, 3): node (u, v) is at origin + u axes[0] + v axes[1] (on the face).
    depth (K, nv, nu): for each part, min over the normal line through the node of its signed
    distance (negative inside the shadow). spacing: grid step, m.
    """

    origin: np.ndarray
    axes: np.ndarray
    u: np.ndarray
    v: np.ndarray
    depth: np.ndarray
    spacing: float
    normal: np.ndarray
    magnets: tuple = ()

    @property
    def points(self) -> np.ndarray:
        """(nv * nu, 3) world points of the nodes on the plate's face."""
        uu, vv = np.meshgrid(self.u, self.v)
        return self.origin + uu.reshape(-1, 1) * self.axes[0] + vv.reshape(-1, 1) * self.axes[1]

    @property
    def plane_points(self) -> np.ndarray:
        """(nv * nu, 2) plate coordinates of the nodes."""
        uu, vv = np.meshgrid(self.u, self.v)
        return np.stack([uu.ravel(), vv.ravel()], axis=1)

    def masks(self) -> np.ndarray:
        """(K, nv * nu) bool: nodes in each part's shadow."""
        return (self.depth < 0.0).reshape(len(self.depth), -1)

    def union_mask(self) -> np.ndarray:
        return self.masks().any(axis=0)

    def support(self, directions) -> np.ndarray:
        """Support function of the parts' exact shadow in plate coordinates, from their outlines.

        The projection of a solid along the normal has, for an in-plane direction d, the solid's
        own support value h(d) (Schneider, Convex Bodies, 2nd ed., 1.7: projection commutes with
        the support function); the union's is the largest over the parts.

        Parameters
        ----------
        directions : numpy.ndarray, shape (K, 2)
            Directions in the plate's (u, v) axes, any length.

        Returns
        -------
        numpy.ndarray, shape (K,)
            max over the shadow of d . (u, v), m (times |d|).
        """
        world = np.asarray(directions, float) @ self.axes
        values = np.full(len(world), -np.inf)
        for magnet in self.magnets:
            body = world @ np.asarray(magnet.rotation, float)  # R^T d for each row
            reach = shape_of(magnet).support(magnet, body) + world @ np.asarray(magnet.position, float)
            values = np.maximum(values, reach)
        return values - world @ self.origin


def plate_axes(normal) -> np.ndarray:
    """Two unit vectors spanning the plate's face (a right-handed frame with the normal)."""
    return perpendicular_pair(normal)


def footprint(magnets, plate, nodes: int = FOOTPRINT_NODES) -> Footprint:
    """The shadow of the given parts on the plate, projected along its normal."""
    n = np.asarray(plate.normal, float)
    axes = plate_axes(n)
    origin = np.asarray(plate.point, float) - (np.asarray(plate.point, float) @ axes.T) @ axes
    shadows = [_projected_box(magnet, axes) for magnet in magnets]
    low = np.min([box[0] for box in shadows], axis=0)
    high = np.max([box[1] for box in shadows], axis=0)
    spacing = float((high - low).max()) / (nodes - 9)
    low, high = low - 4 * spacing, high + 4 * spacing
    u = np.arange(low[0], high[0] + spacing / 2, spacing)
    v = np.arange(low[1], high[1] + spacing / 2, spacing)
    uu, vv = np.meshgrid(u, v)
    flat = np.stack([uu.ravel(), vv.ravel()], axis=1)
    face = origin + flat @ axes
    depth = []
    for magnet, (lo, hi) in zip(magnets, shadows):
        # only nodes over the part's projected box can be in its shadow
        near = np.all((flat >= lo - 2 * spacing) & (flat <= hi + 2 * spacing), axis=1)
        bottom, top = lowest_point(magnet, n), -lowest_point(magnet, -n)
        heights = np.linspace(bottom, top, HEIGHT_SAMPLES) - float(np.asarray(plate.point) @ n)
        column = face[near][:, None, :] + heights[None, :, None] * n
        sdf = part_sdf(magnet, column.reshape(-1, 3)).reshape(-1, len(heights))
        part_depth = np.full(len(face), spacing)  # outside: any positive value
        part_depth[near] = sdf.min(axis=1)
        depth.append(part_depth.reshape(uu.shape))
    return Footprint(origin=origin, axes=axes, u=u, v=v, depth=np.array(depth),
                     spacing=spacing, normal=n, magnets=tuple(magnets))


def _projected_box(magnet, axes):
    """(lower (2,), upper (2,)): the part's body box projected on the plate axes."""
    lower, upper = body_bounds(magnet)
    flat = to_world(box_corners(lower, upper), magnet.position, magnet.rotation) @ axes.T
    return flat.min(axis=0), flat.max(axis=0)


def contour_length(values: np.ndarray, spacing: float) -> float:
    """Length of the zero level set of a grid function (marching squares with linear
    interpolation on the cell edges; W. E. Lorensen and H. E. Cline, SIGGRAPH 1987, in 2D)."""
    f00, f10 = values[:-1, :-1], values[:-1, 1:]
    f01, f11 = values[1:, :-1], values[1:, 1:]
    # crossing points on the four edges of each cell, in cell units: bottom, right, top, left
    edges = [(f00, f10, lambda t: (t, 0.0)), (f10, f11, lambda t: (1.0, t)),
             (f01, f11, lambda t: (t, 1.0)), (f00, f01, lambda t: (0.0, t))]
    points, crossed = [], []
    for a, b, where in edges:
        cut = (a < 0) != (b < 0)
        t = np.divide(a, a - b, out=np.full_like(a, 0.5), where=cut)
        x, y = where(t)
        points.append(np.stack(np.broadcast_arrays(x, y), axis=-1))
        crossed.append(cut)
    points, crossed = np.array(points), np.array(crossed)  # (4, ny, nx, 2), (4, ny, nx)
    count = crossed.sum(axis=0)
    length = np.zeros_like(f00)
    two = count == 2
    if two.any():
        first = np.argmax(crossed, axis=0)
        second = 3 - np.argmax(crossed[::-1], axis=0)
        p = np.take_along_axis(points, first[None, ..., None], 0)[0]
        q = np.take_along_axis(points, second[None, ..., None], 0)[0]
        length = np.where(two, np.linalg.norm(p - q, axis=-1), length)
    four = count == 4
    if four.any():
        saddle = np.linalg.norm(points[0] - points[1], axis=-1) + np.linalg.norm(points[2] - points[3], axis=-1)
        length = np.where(four, saddle, length)
    return float(length.sum() * spacing)


def plate_flux_density(field_model, shadow: Footprint, thickness: float) -> float:
    """The flux density the plate must carry (module docstring), T: for each part's shadow and
    for the whole shadow, and for each sign of B . n, the flux through that region over its
    outline times the thickness; the largest."""
    union = shadow.union_mask()
    if not union.any():
        return 0.0
    size = max(np.ptp(shadow.u), np.ptp(shadow.v))
    lifted = shadow.points[union] + LIFT * size * shadow.normal
    normal_B = np.zeros(len(union))
    normal_B[union] = field_model.B(lifted) @ shadow.normal
    scale = max(np.abs(normal_B).max(), 1e-300)
    depths = list(shadow.depth) + [shadow.depth.min(axis=0)]
    worst = 0.0
    for depth in depths:
        inside = (depth < 0.0).ravel()
        for sign in (1.0, -1.0):
            region = inside & (sign * normal_B > 0.0)
            if not region.any():
                continue
            flux = float((sign * normal_B[region]).sum()) * shadow.spacing**2
            # the region as a level set: inside the shadow and of this sign
            level = np.maximum(depth / shadow.spacing,
                               np.where(union, -sign * normal_B / scale, 1.0).reshape(depth.shape))
            outline = contour_length(level, shadow.spacing)
            worst = max(worst, flux / max(outline * thickness, 1e-300))
    return worst
