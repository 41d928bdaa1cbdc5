"""Write the CAD export of a small magnet stand for `trapscape import` (README, From CAD exports):
six disc magnets on a circle around a central ring magnet, on a steel-free base plate, as one
multi-body 3MF (named objects, millimetres) and the same bodies as one STL (no names, no unit).

Run from anywhere: python samples/make_assembly.py  (writes samples/parts/stand.3mf and
samples/parts/stand.stl); with --variants FOLDER, one 3MF per candidate circle of discs instead
(for `trapscape screen --template`). Deterministic: the same bytes each run. All dimensions are invented.
"""
from __future__ import annotations

import zipfile
from pathlib import Path

import numpy as np
import trimesh

CIRCLE_RADIUS = 15.0  # mm, disc centres
DISC = (6.0, 4.0)  # diameter, height
RING = (12.0, 6.0, 4.0)  # outer, inner diameter, height
BASE = (40.0, 40.0, 2.0)  # the plate the magnets sit on (not a magnet)
SECTIONS = 64  # facets per turn

CONTENT_TYPES = (
    '<?xml version="1.0" encoding="UTF-8"?>\n<Types xmlns="http://schemas.openxmlformats.org/'
    'package/2006/content-types"><Default Extension="rels" ContentType="application/vnd.'
    'openxmlformats-package.relationships+xml"/><Default Extension="model" ContentType="'
    'application/vnd.ms-package.3dmanufacturing-3dmodel+xml"/></Types>')
RELATIONSHIPS = (
    '<?xml version="1.0" encoding="UTF-8"?>\n<Relationships xmlns="http://schemas.openxmlformats'
    '.org/package/2006/relationships"><Relationship Target="/3D/3dmodel.model" Id="rel0" Type="'
    'http://schemas.microsoft.com/3dmanufacturing/2013/01/3dmodel"/></Relationships>')


def bodies(circle_radius=CIRCLE_RADIUS) -> dict:
    """{name: closed trimesh} in millimetres, the magnets' bottoms at z = 0."""
    parts = {}
    for k in range(6):
        angle = 2.0 * np.pi * k / 6
        disc = trimesh.creation.cylinder(radius=DISC[0] / 2, height=DISC[1], sections=SECTIONS)
        disc.apply_translation([circle_radius * np.cos(angle), circle_radius * np.sin(angle),
                                DISC[1] / 2])
        parts[f"disc-{k + 1}"] = disc
    ring = trimesh.creation.annulus(r_min=RING[1] / 2, r_max=RING[0] / 2, height=RING[2],
                                    sections=SECTIONS)
    ring.apply_translation([0.0, 0.0, RING[2] / 2])
    parts["ring"] = ring
    base = trimesh.creation.box(BASE)
    base.apply_translation([0.0, 0.0, -BASE[2] / 2 - 1.0])  # 1 mm below the magnets
    parts["base-plate"] = base
    return parts


def write_3mf(path, parts: dict, unit="millimeter") -> None:
    """A 3MF package (3MF Core Specification 1.x): one named mesh object per body."""
    objects, items = [], []
    for index, (name, mesh) in enumerate(parts.items(), start=1):
        vertices = "".join(f'<vertex x="{x:.9g}" y="{y:.9g}" z="{z:.9g}"/>'
                           for x, y, z in mesh.vertices)
        triangles = "".join(f'<triangle v1="{a}" v2="{b}" v3="{c}"/>' for a, b, c in mesh.faces)
        objects.append(f'<object id="{index}" name="{name}" type="model"><mesh><vertices>'
                       f'{vertices}</vertices><triangles>{triangles}</triangles></mesh></object>')
        items.append(f'<item objectid="{index}"/>')
    model = ('<?xml version="1.0" encoding="UTF-8"?>\n<model unit="' + unit + '" xmlns="http://'
             'schemas.microsoft.com/3dmanufacturing/core/2015/02"><resources>' + "".join(objects)
             + '</resources><build>' + "".join(items) + '</build></model>')
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as package:
        for name, text in (("[Content_Types].xml", CONTENT_TYPES), ("_rels/.rels", RELATIONSHIPS),
                           ("3D/3dmodel.model", model)):
            info = zipfile.ZipInfo(name, date_time=(2026, 1, 1, 0, 0, 0))
            package.writestr(info, text, zipfile.ZIP_DEFLATED)


VARIANT_RADII = (10.0, 12.5, 15.0, 17.5, 20.0)  # mm: a design review's candidate circles


def main(argv=None) -> None:
    import argparse

    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--variants", metavar="FOLDER",
                        help="instead: one 3MF per candidate disc circle into FOLDER "
                             "(stand-r10.3mf ...), for trapscape screen --template")
    args = parser.parse_args(argv)
    if args.variants:
        folder = Path(args.variants)
        folder.mkdir(parents=True, exist_ok=True)
        for radius in VARIANT_RADII:
            write_3mf(folder / f"stand-r{radius:g}.3mf", bodies(circle_radius=radius))
        print(f"wrote {len(VARIANT_RADII)} stand exports into {folder}")
        return
    folder = Path(__file__).resolve().parent / "parts"
    folder.mkdir(exist_ok=True)
    parts = bodies()
    write_3mf(folder / "stand.3mf", parts)
    trimesh.util.concatenate(list(parts.values())).export(folder / "stand.stl")
    print(f"wrote {folder.name}/stand.3mf and {folder.name}/stand.stl: {len(parts)} bodies")


if __name__ == "__main__":
    main()
