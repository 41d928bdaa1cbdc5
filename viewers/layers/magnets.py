"""Layer "magnets": each part as a solid, its north faces dark and lettered N, its south faces
light and lettered S, the rest neutral grey, and an arrow along its magnetisation."""
from __future__ import annotations

import numpy as np

from trapscape.physics.analysis.views import magnetisation_arrows
from trapscape.scene.measures import body_magnetization
from trapscape.scene.shapes import shape_of
from trapscape.viewers.layers import style
from trapscape.viewers.layers.cutaway import cut_part, kept_side

DRAWING_SEGMENTS = 64  # facets of a drawn full turn (cylinders, rings, arcs) and sphere rings
POLARITY_TOLERANCE = 0.5  # a face is a pole face when its normal is within 60 degrees of M


# -- geometry ---------------------------------------------------------------------------------

def body_polydata(magnet):
    """The part's closed surface in its body frame, metres, outward normals."""
    import pyvista as pv

    vertices, faces = shape_of(magnet).tessellation(magnet, segments=DRAWING_SEGMENTS)
    return pv.PolyData.from_regular_faces(np.asarray(vertices, float), np.asarray(faces))


def _magnetisation_direction(magnet, body_points) -> np.ndarray:
    """Unit M direction in the body frame at body points (radial parts vary cell by cell)."""
    M = body_magnetization(magnet, body_points)
    size = np.linalg.norm(M, axis=1, keepdims=True)
    return np.divide(M, size, out=np.zeros_like(M), where=size > 0)


def part_polydata(ctx, index: int):
    """One magnet in world coordinates (scene unit) with cell arrays polarity (+1 north face,
    -1 south face, 0 body) and part (index)."""
    magnet = ctx.scene.magnets[index]
    body = body_polydata(magnet).compute_normals(cell_normals=True, point_normals=False,
                                                 split_vertices=False, consistent_normals=False)
    centres = np.asarray(body.cell_centers().points)
    alignment = np.einsum("ij,ij->i", np.asarray(body.cell_data["Normals"]),
                          _magnetisation_direction(magnet, centres))
    polarity = np.where(alignment > POLARITY_TOLERANCE, 1,
                        np.where(alignment < -POLARITY_TOLERANCE, -1, 0)).astype(np.int8)
    R = np.asarray(magnet.rotation, float)
    world = body.copy()
    world.points = ctx.to_units(np.asarray(body.points) @ R.T + magnet.position)
    world.cell_data.clear()
    world.point_data.clear()
    world.cell_data["polarity"] = polarity
    world.cell_data["part"] = np.full(world.n_cells, index, dtype=np.int32)
    return world


def world_meshes(ctx) -> list:
    cache = getattr(ctx, "_magnet_meshes", None)
    if cache is None:
        cache = [part_polydata(ctx, i) for i in range(len(ctx.scene.magnets))]
        ctx._magnet_meshes = cache
    return cache


# -- letters and arrows -------------------------------------------------------------------------

def _face_frame(normal, view_up=None):
    """(right, up) in a face plane so that letters stand upright: up is the camera's up (else
    world z) projected on the face, or world y where that projection vanishes."""
    reference = np.array([0.0, 0.0, 1.0]) if view_up is None else np.asarray(view_up, float)
    if np.linalg.norm(reference - normal * (reference @ normal)) < 0.3:
        reference = np.array([0.0, 1.0, 0.0]) if abs(normal[1]) < 0.9 else np.array([0.0, 0.0, 1.0])
    up = reference - normal * (reference @ normal)
    up /= np.linalg.norm(up)
    return np.cross(up, normal), up


def pole_faces(mesh, polarity: int):
    """(centre, normal, size) of the largest flat group of cells of one polarity."""
    pick = np.flatnonzero(np.asarray(mesh.cell_data["polarity"]) == polarity)
    if pick.size == 0:
        return None
    faces = mesh.extract_cells(pick).extract_surface(algorithm=None).compute_normals(
        cell_normals=True, point_normals=False, split_vertices=False, consistent_normals=False)
    normals = np.asarray(faces.cell_data["Normals"])
    areas = np.asarray(faces.compute_cell_sizes(length=False, volume=False)["Area"])
    centres = np.asarray(faces.cell_centers().points)
    mean = (normals * areas[:, None]).sum(axis=0)
    best = int(np.argmax(normals @ (mean / (np.linalg.norm(mean) or 1.0))))
    flat = normals @ normals[best] > 0.999
    centroid = (centres[flat] * areas[flat, None]).sum(axis=0) / areas[flat].sum()
    nearest = np.flatnonzero(flat)[np.argmin(np.linalg.norm(centres[flat] - centroid, axis=1))]
    normal = normals[nearest] / np.linalg.norm(normals[nearest])
    size = np.sqrt(areas[flat].sum())
    if flat.sum() > 1 and np.linalg.norm(centres[nearest] - centroid) > 0.25 * size:
        centroid = centres[nearest]  # a curved pole face: letter the most central cell
        size = np.sqrt(areas[flat].sum() / max(flat.sum(), 1)) * 3.0
    return centroid, normal, size


def letter(text: str, centre, normal, height, view_up=None):
    """A flat letter lying on a face, reading upright."""
    import pyvista as pv

    glyph = pv.Text3D(text, depth=height * 0.04, height=height, center=(0, 0, 0), normal=(0, 0, 1))
    right, up = _face_frame(np.asarray(normal, float), view_up)
    frame = np.column_stack([right, up, normal])
    glyph.points = np.asarray(glyph.points) @ frame.T + np.asarray(centre) + normal * height * 0.05
    return glyph


def part_letters(ctx, mesh, magnet):
    """[(polydata, colour)] for the N and S letters of one part."""
    lower, upper = np.array(mesh.bounds).reshape(3, 2).T
    smallest = float(np.min(upper - lower))
    letters = []
    for polarity, text, colour in ((1, "N", style.NORTH_LETTER), (-1, "S", style.SOUTH_LETTER)):
        face = pole_faces(mesh, polarity)
        if face is None:
            continue
        centre, normal, size = face
        height = min(0.5 * size, 0.6 * smallest)
        letters.append((letter(text, centre, normal, height, getattr(ctx, "view_up", None)), colour))
    return letters


def part_arrows(ctx, index: int):
    """Arrows along the magnetisation that stick out of the north face, from where the analysis
    puts them (physics.analysis.views.magnetisation_arrows)."""
    import pyvista as pv

    points = np.asarray(world_meshes(ctx)[index].points)
    arrows = []
    for start_m, direction in magnetisation_arrows(ctx.scene, index):
        start = ctx.to_units(start_m)
        reach = float(np.max((points - start) @ direction))
        length = reach + max(0.45 * reach, 0.03 * ctx.size)
        arrows.append(pv.Arrow(start=start, direction=direction, scale=length, tip_length=0.3,
                               tip_radius=0.09, shaft_radius=0.035, tip_resolution=24,
                               shaft_resolution=16))
    return arrows


# -- the layer --------------------------------------------------------------------------------

def meshes(ctx) -> dict:
    return {f"magnet {m.name}": mesh for m, mesh in zip(ctx.scene.magnets, world_meshes(ctx))}


def draw(plotter, ctx, legend, hidden=()) -> None:
    """hidden: indices of parts cut away for the section (drawn as faint outlines)."""
    any_radial = False
    for index, (magnet, mesh) in enumerate(zip(ctx.scene.magnets, world_meshes(ctx))):
        if index in hidden:
            plotter.add_mesh(mesh.extract_feature_edges(feature_angle=30), color=style.GHOST,
                             opacity=0.35, line_width=1)
            continue
        shown = cut_part(ctx, mesh) if ctx.section is not None and getattr(ctx, "cutaway", False) else mesh
        _draw_faces(plotter, shown)
        for glyph, colour in part_letters(ctx, mesh, magnet):
            if shown is mesh or _in_kept_half(ctx, glyph):
                plotter.add_mesh(glyph, color=colour, lighting=False)
        for arrow in part_arrows(ctx, index):
            plotter.add_mesh(arrow, color=style.ARROW, smooth_shading=True)
        any_radial |= magnet.radial is not None
    legend.add("north face (N)", style.NORTH_FACE, "rectangle")
    legend.add("south face (S)", style.SOUTH_FACE, "rectangle")
    legend.add("magnet body, arrow = M", style.MAGNET_BODY, "rectangle")


def _in_kept_half(ctx, glyph) -> bool:
    return bool(np.all(kept_side(ctx, np.asarray(glyph.points)) >= 0))


def _draw_faces(plotter, mesh) -> None:
    polarity = np.asarray(mesh.cell_data["polarity"])
    for value, colour in ((1, style.NORTH_FACE), (-1, style.SOUTH_FACE), (0, style.MAGNET_BODY)):
        pick = np.flatnonzero(polarity == value)
        if pick.size:
            plotter.add_mesh(mesh.extract_cells(pick), color=colour, smooth_shading=False,
                             ambient=0.25, diffuse=0.75, specular=0.1)
