"""The magnetisation directions a designer names by intent ("axial", "diametral", "thickness")
found from a solid's shape: its principal axes of inertia and its extents along them."""
from __future__ import annotations

import numpy as np

EQUAL = 0.01  # two principal moments or extents this close (relative) do not pick an axis

INTENTS = ("axial", "diametral", "thickness")


def principal_axes(vertices, faces) -> tuple:
    """Volume centroid (3,) m and principal axes of inertia (3, 3) (columns, ascending moments)
    with the moments (3,) of a closed, outward triangle mesh of unit density.

    Parameters
    ----------
    vertices : (V, 3) float, m.
    faces : (F, 3) int, outward.

    Returns
    -------
    centroid : (3,) float64, m.
    moments : (3,) float64, m^5 (unit density), ascending.
    axes : (3, 3) float64, column k the axis of moments[k].

    References
    ----------
    D. Eberly, "Polyhedral Mass Properties (Revisited)", Geometric Tools (2002), as implemented
    in trimesh.triangles.mass_properties.
    """
    import trimesh

    triangles = np.asarray(vertices, float)[np.asarray(faces, np.int64)]
    props = trimesh.triangles.mass_properties(triangles, skip_inertia=False)
    inertia = np.asarray(props["inertia"], float)
    moments, axes = np.linalg.eigh(0.5 * (inertia + inertia.T))
    return np.asarray(props["center_mass"], float), moments, axes


def positive(direction) -> np.ndarray:
    """The unit direction signed so that its largest component is positive: an axis found from
    a shape has no sign of its own, and this one is the same for every run."""
    d = np.asarray(direction, float)
    d = d / np.linalg.norm(d)
    return d if d[np.argmax(np.abs(d))] > 0 else -d


def intent_axes(vertices, faces) -> dict:
    """{intent: unit body vector} for the intents the shape decides: "axial" (the principal
    axis whose moment stands apart from the other two), "diametral" (a principal axis across
    it), "thickness" (the principal axis along which the solid is thinnest). An intent the
    shape leaves open (a cube's axis) is missing from the dict.

    Parameters
    ----------
    vertices : (V, 3) float, m.
    faces : (F, 3) int, outward.

    Returns
    -------
    dict of str -> (3,) float64 unit vectors, signed by `positive`.

    References
    ----------
    Derived here from principal_axes.
    """
    centroid, moments, axes = principal_axes(vertices, faces)
    found = {}
    scale = max(abs(moments[2]), 1e-300)
    low_gap, high_gap = moments[1] - moments[0], moments[2] - moments[1]
    if max(low_gap, high_gap) > EQUAL * scale:
        axial = 2 if high_gap > low_gap else 0
        found["axial"] = positive(axes[:, axial])
        found["diametral"] = positive(axes[:, 1])
    extents = np.ptp((np.asarray(vertices, float) - centroid) @ axes, axis=0)
    order = np.argsort(extents)
    if extents[order[1]] - extents[order[0]] > EQUAL * extents[order[2]]:
        found["thickness"] = positive(axes[:, order[0]])
    return found
