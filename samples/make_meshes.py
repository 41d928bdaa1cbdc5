"""Write the mesh files of samples/arc_rotor.toml: six arc segments of a small rotor, as a CAD
program would export them - each part in assembly coordinates (millimetres), so the scene needs
no position or rotation for them.

Run from anywhere: python samples/make_meshes.py  (writes samples/parts/rotor-segment-*.stl and
one .ply, to show that other formats load the same way). Deterministic: the same bytes each run.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np
import trimesh

OUTER_RADIUS = 18.0  # mm
INNER_RADIUS = 13.0
HEIGHT = 8.0
SEGMENTS = 6
SPAN_DEG = 54.0  # each segment spans 54 of its 60 degrees: a 6-degree glue gap between them
STEPS = 24  # facets along each arc: 4 * 24 * 2 + 4 = 196 triangles per part


def arc_segment(centre_deg: float) -> trimesh.Trimesh:
    """A closed, outward-oriented ring sector centred on the given angle, z from 0 to HEIGHT."""
    phi = np.radians(centre_deg + np.linspace(-SPAN_DEG / 2, SPAN_DEG / 2, STEPS + 1))
    rings = []
    for radius in (OUTER_RADIUS, INNER_RADIUS):
        for z in (0.0, HEIGHT):
            rings.append(np.column_stack([radius * np.cos(phi), radius * np.sin(phi),
                                          np.full_like(phi, z)]))
    vertices = np.vstack(rings)  # blocks: outer-bottom, outer-top, inner-bottom, inner-top
    ob, ot, ib, it = (np.arange(STEPS + 1) + k * (STEPS + 1) for k in range(4))
    faces = []
    for k in range(STEPS):
        faces += [[ob[k], ob[k + 1], ot[k + 1]], [ob[k], ot[k + 1], ot[k]]]  # outer wall
        faces += [[ib[k], it[k + 1], ib[k + 1]], [ib[k], it[k], it[k + 1]]]  # inner wall
        faces += [[ot[k], ot[k + 1], it[k + 1]], [ot[k], it[k + 1], it[k]]]  # top
        faces += [[ob[k], ib[k + 1], ob[k + 1]], [ob[k], ib[k], ib[k + 1]]]  # bottom
    first, last = 0, STEPS
    faces += [[ob[first], ot[first], it[first]], [ob[first], it[first], ib[first]]]  # start end
    faces += [[ob[last], it[last], ot[last]], [ob[last], ib[last], it[last]]]  # finish end
    mesh = trimesh.Trimesh(vertices=vertices, faces=np.array(faces), process=True)
    if mesh.volume < 0:  # keep normals outward whatever the winding above came out as
        mesh.invert()
    return mesh


def main() -> None:
    folder = Path(__file__).resolve().parent / "parts"
    folder.mkdir(exist_ok=True)
    for index in range(SEGMENTS):
        mesh = arc_segment(360.0 * index / SEGMENTS)
        assert mesh.is_watertight and mesh.volume > 0
        suffix = "ply" if index == SEGMENTS - 1 else "stl"
        target = folder / f"rotor-segment-{index + 1}.{suffix}"
        mesh.export(target, file_type=suffix, **({"encoding": "ascii"} if suffix == "ply" else {}))
        print(f"wrote {target.relative_to(folder.parent)}: {len(mesh.faces)} triangles, "
              f"{mesh.volume:.1f} mm^3")


if __name__ == "__main__":
    main()
