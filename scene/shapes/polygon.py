"""Simple polygons in the plane (corners (K, 2), m): area, validity, signed distance, ear-clipping
triangulation. Used by the prism."""
from __future__ import annotations

import numpy as np


def signed_area(corners) -> float:
    """Shoelace area (m^2), positive for counter-clockwise corners.

    Parameters
    ----------
    corners : (K, 2) float, m.

    Returns
    -------
    float, m^2.

    References
    ----------
    Shoelace formula (Gauss's area formula; e.g. B. Braden, College Math. J. 17, 326 (1986)).
    """
    x, y = np.asarray(corners, float).T
    return 0.5 * float(np.dot(x, np.roll(y, -1)) - np.dot(np.roll(x, -1), y))


def _cross(o, a, b):
    return (a[..., 0] - o[..., 0]) * (b[..., 1] - o[..., 1]) - (a[..., 1] - o[..., 1]) * (b[..., 0] - o[..., 0])


def polygon_problem(corners) -> str | None:
    """Why the corners do not make a simple polygon with area, or None when they do.

    Checks: at least 3 corners, no two consecutive ones equal, no edge meeting a non-adjacent
    edge (orientation tests with bounding boxes, so touching counts), area above 1e-12 of the
    bounding box's, no edge folding back on the previous one.

    Parameters
    ----------
    corners : (K, 2) float.

    Returns
    -------
    str (a sentence fragment) or None.

    References
    ----------
    Segment intersection by orientation tests: T. H. Cormen et al., Introduction to
    Algorithms, 3rd ed., 33.1.
    """
    p = np.asarray(corners, float)
    k = len(p)
    if k < 3:
        return f"it has {k} corner(s), a polygon needs at least 3"
    q = np.roll(p, -1, axis=0)
    size = float(np.ptp(p, axis=0).max())
    if np.any(np.all(p == q, axis=1)):
        first = int(np.flatnonzero(np.all(p == q, axis=1))[0])
        return f"corners {first + 1} and {(first + 1) % k + 1} are the same point"
    i, j = np.triu_indices(k, 2)
    keep = ~((i == 0) & (j == k - 1))  # edges k-1 and 0 are adjacent
    i, j = i[keep], j[keep]
    a, b, c, d = p[i], q[i], p[j], q[j]
    o1, o2, o3, o4 = _cross(a, b, c), _cross(a, b, d), _cross(c, d, a), _cross(c, d, b)
    boxes = np.all((np.minimum(a, b) <= np.maximum(c, d)) & (np.minimum(c, d) <= np.maximum(a, b)), axis=1)
    meet = (o1 * o2 <= 0) & (o3 * o4 <= 0) & boxes
    if meet.any():
        n = int(np.flatnonzero(meet)[0])
        return f"it crosses itself (edge {i[n] + 1} meets edge {j[n] + 1})"
    if size == 0.0 or abs(signed_area(p)) <= 1e-12 * size**2:
        return "it encloses no area (its corners lie on one line)"
    previous = np.roll(p, 1, axis=0)
    folds = (np.abs(_cross(previous, p, q)) <= 1e-12 * size**2) & \
        (np.einsum("ij,ij->i", p - previous, q - p) < 0)
    if folds.any():
        return f"it folds back on itself at corner {int(np.flatnonzero(folds)[0]) + 1}"
    return None


def polygon_sdf(x, y, corners) -> np.ndarray:
    """2-D signed distance (N,) to a simple polygon, negative inside.

    Parameters
    ----------
    x, y : (N,) float, m.
    corners : (K, 2) float, m, either winding.

    Returns
    -------
    (N,) float64, m.

    References
    ----------
    Distance: the least over the edges of the distance to a segment (textbook); sign: even-odd
    crossing rule (W. R. Franklin, "PNPOLY", 1970s; J. O'Rourke, Computational Geometry in C,
    7.4).
    """
    p = np.asarray(corners, float)
    best = np.full(len(x), np.inf)
    inside = np.zeros(len(x), dtype=bool)
    for (ax, ay), (bx, by) in zip(p, np.roll(p, -1, axis=0)):  # over the K edges, not the points
        ex, ey = bx - ax, by - ay
        t = np.clip(((x - ax) * ex + (y - ay) * ey) / (ex * ex + ey * ey), 0.0, 1.0)
        best = np.minimum(best, np.hypot(x - ax - t * ex, y - ay - t * ey))
        straddles = (ay > y) != (by > y)
        with np.errstate(divide="ignore", invalid="ignore"):
            crossing = ax + (y - ay) * ex / ey
        inside ^= straddles & (x < crossing)
    return np.where(inside, -best, best)


def ear_clip(corners) -> np.ndarray:
    """Triangles (K - 2, 3) of corner indices, counter-clockwise, covering a simple polygon given
    counter-clockwise (convex or concave): repeatedly cut off a convex corner whose triangle
    holds no other corner.

    Parameters
    ----------
    corners : (K, 2) float, counter-clockwise, a simple polygon (polygon_problem is None).

    Returns
    -------
    (K - 2, 3) int64.

    References
    ----------
    Two-ears theorem and ear clipping: G. H. Meisters, Amer. Math. Monthly 82, 648 (1975);
    D. Eberly, "Triangulation by ear clipping" (Geometric Tools, 2002).
    """
    p = np.asarray(corners, float)
    size = float(np.ptp(p, axis=0).max())
    left = list(range(len(p)))
    triangles = []
    while len(left) > 3:
        for n in range(len(left)):
            a, b, c = left[n - 1], left[n], left[(n + 1) % len(left)]
            turn = _cross(p[a], p[b], p[c])
            if turn <= 0.0:
                if abs(turn) <= 1e-14 * size**2 and len(left) > 3:
                    del left[n]  # a corner on a straight edge adds nothing
                    break
                continue  # reflex
            others = [v for v in left if v not in (a, b, c)]
            q = p[others]
            if np.any((_cross(p[a], p[b], q) >= 0) & (_cross(p[b], p[c], q) >= 0)
                      & (_cross(p[c], p[a], q) >= 0)):
                continue
            triangles.append((a, b, c))
            del left[n]
            break
        else:
            raise ValueError("the outline could not be triangulated; check that it is a simple polygon")
    triangles.append(tuple(left))
    return np.array(triangles, dtype=np.int64)
