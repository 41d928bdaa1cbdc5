"""Where world points land on the rendered picture."""
from __future__ import annotations

import numpy as np


def world_to_pixels(plotter, points) -> np.ndarray:
    """(N, 2) image pixel (column, row from the top) of world points (scene unit), through the
    renderer's own world-to-display transform."""
    import vtk

    renderer = plotter.renderer
    height = plotter.window_size[1]
    coordinate = vtk.vtkCoordinate()
    coordinate.SetCoordinateSystemToWorld()
    result = []
    for point in np.asarray(points, float).reshape(-1, 3):
        coordinate.SetValue(*point)
        x, y = coordinate.GetComputedDoubleDisplayValue(renderer)
        result.append((x, height - 1 - y))
    return np.array(result)
