"""STEP files through gmsh's OpenCASCADE reader (the optional extra `pip install -e '.[cad]'`).

OpenCASCADE converts the file's own LENGTH_UNIT to metres (Geometry.OCCTargetUnit = "M"), so a
STEP file needs no --units. Each solid becomes a Body: its surface triangulated by gmsh (nodes
on the exact CAD surfaces, finer where it curves) and its exact volume from the CAD solid.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np

from trapscape.scene.cad.body import MAX_BODIES, FileBodies, clean_name, closed_body
from trapscape.scene.errors import SceneError

ELEMENTS_PER_TURN = 48  # gmsh Mesh.MeshSizeFromCurvature: facets per full turn of a curved face
GENERIC_LABEL = "open cascade step translator"  # OpenCASCADE's own name for an unnamed product


def read_step(path: Path, shown: str) -> FileBodies:
    """The solids of a STEP file in metres, named by their product names."""
    try:
        import gmsh
    except (ImportError, OSError) as error:  # OSError: its wheel's X11/OpenGL libraries missing
        missing = "" if isinstance(error, ImportError) else f" (its library failed to load: " \
            f"{str(error)[:80]}; install libglu1-mesa, libxcursor1, libxft2, libxinerama1)"
        raise SceneError(f"{shown}: reading STEP needs gmsh{missing}; install the extra with "
                         f"pip install -e '.[cad]' (or export the assembly as 3MF or STL).") \
            from None
    import trimesh

    gmsh.initialize(readConfigFiles=False)
    try:
        gmsh.option.setNumber("General.Terminal", 0)
        gmsh.option.setString("Geometry.OCCTargetUnit", "M")
        gmsh.model.add("import")
        try:
            gmsh.model.occ.importShapes(str(path))
            gmsh.model.occ.synchronize()
        except Exception as error:
            raise SceneError(f"{shown}: cannot read it as STEP ({str(error)[:120]}); export it "
                             f"again from CAD.") from None
        solids = gmsh.model.getEntities(3)
        if not solids:
            raise SceneError(f"{shown}: holds no solid bodies (only surfaces or curves); export "
                             f"the magnets as solids.")
        if len(solids) > MAX_BODIES:
            raise SceneError(f"{shown} holds {len(solids)} solids, more than {MAX_BODIES}; "
                             f"export the magnets alone.")
        low, high = np.array(gmsh.model.getBoundingBox(-1, -1)).reshape(2, 3)
        gmsh.option.setNumber("Mesh.MeshSizeFromCurvature", ELEMENTS_PER_TURN)
        gmsh.option.setNumber("Mesh.MeshSizeMax", float(np.max(high - low)) / 10.0)
        try:
            gmsh.model.mesh.generate(2)
        except Exception as error:
            raise SceneError(f"{shown}: its surfaces could not be triangulated "
                             f"({str(error)[:120]}); repair the solids in CAD.") from None
        bodies = []
        for index, (_, tag) in enumerate(solids, start=1):
            name = _label(gmsh.model.getEntityName(3, tag)) or f"{path.stem}-{index}"
            vertices, faces = _surface(gmsh, tag)
            mesh = trimesh.Trimesh(vertices=vertices, faces=faces, process=True)
            bodies.append(closed_body(mesh, name, shown,
                                      exact_volume=float(gmsh.model.occ.getMass(3, tag))))
        return FileBodies(bodies, 1.0, "the STEP file's length unit")
    finally:
        gmsh.finalize()


def _label(entity_name: str) -> str:
    """The product name of a solid: the last part of gmsh's 'Shapes/.../name' path, unless it is
    OpenCASCADE's generic label."""
    last = entity_name.rsplit("/", 1)[-1]
    return "" if GENERIC_LABEL in last.lower() else clean_name(last)


def _surface(gmsh, tag: int) -> tuple:
    """Triangles of a solid's boundary, each face's triangles (wound alike by gmsh) turned
    outward: a point a little way along the normal of the face's largest triangle, from the
    CAD surface, must lie outside the CAD solid."""
    node_tags, coords, _ = gmsh.model.mesh.getNodes(dim=-1, tag=-1)
    index = np.full(int(node_tags.max()) + 1, -1, np.int64)
    index[node_tags.astype(np.int64)] = np.arange(len(node_tags))
    points = coords.reshape(-1, 3)
    low, high = np.array(gmsh.model.getBoundingBox(3, tag)).reshape(2, 3)
    step = 1e-4 * float(np.max(high - low))
    triangles = []
    for _, signed in gmsh.model.getBoundary([(3, tag)], oriented=False):
        kinds, _, element_nodes = gmsh.model.mesh.getElements(2, abs(signed))
        for kind, nodes in zip(kinds, element_nodes):
            if kind != 2:  # 3-node triangles only (gmsh element type 2)
                continue
            faces = index[nodes.astype(np.int64)].reshape(-1, 3)
            corners = points[faces]
            normal = np.cross(corners[:, 1] - corners[:, 0], corners[:, 2] - corners[:, 0])
            largest = int(np.argmax(np.linalg.norm(normal, axis=1)))
            on_face = gmsh.model.getClosestPoint(2, abs(signed),
                                                 list(corners[largest].mean(axis=0)))[0]
            probe = on_face + step * normal[largest] / np.linalg.norm(normal[largest])
            inward = gmsh.model.isInside(3, tag, list(probe)) > 0
            triangles.append(faces[:, ::-1] if inward else faces)
    faces = np.vstack(triangles)
    used, faces = np.unique(faces, return_inverse=True)
    return points[used], faces.reshape(-1, 3)
