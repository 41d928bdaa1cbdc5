"""Shapes of magnets: one module per shape behind one protocol (scene.shapes.base.Shape) and
this registry, with mesh operations (meshops), frames (frames), polygons, sectors and surface
patches. The lowest layer: it imports only numpy, scipy, numba, trimesh and itself."""
from __future__ import annotations

from trapscape.scene.shapes.arc import ARC
from trapscape.scene.shapes.base import Dim, DimError, Shape
from trapscape.scene.shapes.box import BOX
from trapscape.scene.shapes.cylinder import CYLINDER
from trapscape.scene.shapes.mesh import MESH
from trapscape.scene.shapes.prism import PRISM
from trapscape.scene.shapes.ring import RING
from trapscape.scene.shapes.sphere import SPHERE

SHAPES: dict = {shape.name: shape for shape in (BOX, CYLINDER, RING, ARC, SPHERE, MESH, PRISM)}

__all__ = ["SHAPES", "Dim", "DimError", "Shape", "shape_of"]


def shape_of(part) -> Shape:
    """The shape object of a part (anything with a `shape` name, e.g. scene.model.Magnet).

    Parameters
    ----------
    part : object with attribute shape (str).

    Returns
    -------
    Shape.

    References
    ----------
    DESIGN.md, Scene format (the shape words).
    """
    try:
        return SHAPES[part.shape]
    except KeyError:
        raise ValueError(f"unknown shape {part.shape!r}; use one of {', '.join(SHAPES)}") from None
