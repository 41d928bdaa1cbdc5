"""The polarity map: a top view of the assembly for assembly and inspection, each part numbered
(in scene order) and its north marked: a dark fill lettered N where the north face looks up, a
light fill lettered S where the south face does, and an arrow to the north face for parts
magnetised sideways (radial parts: arrows outward or inward)."""
from __future__ import annotations

import numpy as np

from trapscape.scene.measures import radial_sign
from trapscape.scene.shapes import shape_of
from trapscape.viewers.atomic import save_figure
from trapscape.viewers.axis_units import relabel_ticks
from trapscape.viewers.layers import style
from trapscape.viewers.layers.magnets import world_meshes

UP_THRESHOLD = 0.7  # |north . z| above this: the part shows a pole face from above


def footprint_triangles(ctx, index: int) -> np.ndarray:
    """(T, 3, 2) the part's upward-facing triangles seen from above (x, y), scene unit."""
    mesh = world_meshes(ctx)[index].triangulate().compute_normals(
        cell_normals=True, point_normals=False, split_vertices=False, consistent_normals=False)
    faces = np.asarray(mesh.faces).reshape(-1, 4)[:, 1:]
    up = np.asarray(mesh.cell_data["Normals"])[:, 2] > 1e-6
    return np.asarray(mesh.points)[faces[up]][:, :, :2]


def silhouette_segments(ctx, index: int) -> np.ndarray:
    """(S, 2, 2) outline seen from above: edges between a face looking up and one that does
    not (derived here: the silhouette of a closed surface under a view along z)."""
    mesh = world_meshes(ctx)[index].triangulate().compute_normals(
        cell_normals=True, point_normals=False, split_vertices=False, consistent_normals=False)
    mesh = mesh.clean()
    faces = np.asarray(mesh.faces).reshape(-1, 4)[:, 1:]
    mesh = mesh.compute_normals(cell_normals=True, point_normals=False, split_vertices=False,
                                consistent_normals=False)
    up = np.asarray(mesh.cell_data["Normals"])[:, 2] > 1e-6
    edges = {}
    for f, tri in enumerate(faces):
        for a, b in ((tri[0], tri[1]), (tri[1], tri[2]), (tri[2], tri[0])):
            edges.setdefault((min(a, b), max(a, b)), []).append(f)
    points = np.asarray(mesh.points)[:, :2]
    chosen = [key for key, owners in edges.items()
              if len(owners) == 2 and up[owners[0]] != up[owners[1]]]
    if not chosen:
        return np.zeros((0, 2, 2))
    keys = np.array(chosen)
    return np.stack([points[keys[:, 0]], points[keys[:, 1]]], axis=1)


def label_point(triangles: np.ndarray, segments: np.ndarray) -> np.ndarray:
    """A point well inside the footprint (a ring's is on its wall, not in its hole): of the
    triangle centroids, the one farthest from the outline."""
    centroids = triangles.mean(axis=1)
    if len(centroids):
        middle = centroids.mean(axis=0)
        if _inside_any(triangles, middle):  # a convex part's own middle is the best place
            centroids = np.vstack([middle[None], centroids])
    if len(segments) == 0 or len(centroids) == 0:
        return centroids.mean(axis=0) if len(centroids) else np.zeros(2)
    a, b = segments[:, 0], segments[:, 1]
    ab = b - a
    t = np.clip(np.einsum("psk,sk->ps", centroids[:, None, :] - a[None], ab)
                / np.maximum(np.einsum("sk,sk->s", ab, ab), 1e-30)[None], 0.0, 1.0)
    nearest = a[None] + t[..., None] * ab[None]
    clearance = np.linalg.norm(centroids[:, None, :] - nearest, axis=2).min(axis=1)
    edge_a, edge_b = triangles[:, 1] - triangles[:, 0], triangles[:, 2] - triangles[:, 0]
    area = 0.5 * np.abs(edge_a[:, 0] * edge_b[:, 1] - edge_a[:, 1] * edge_b[:, 0])
    middle = (triangles.mean(axis=1) * area[:, None]).sum(axis=0) / max(area.sum(), 1e-30)
    # prefer the interior, and among equally deep points the one nearest the middle
    score = clearance - 1e-3 * np.linalg.norm(centroids - middle, axis=1)
    return centroids[int(np.argmax(score))]


def _inside_any(triangles, point) -> bool:
    """Is the 2D point in any of the triangles (same-side test on the three edges)?"""
    def side(a, b):
        return (b[:, 0] - a[:, 0]) * (point[1] - a[:, 1]) - (b[:, 1] - a[:, 1]) * (point[0] - a[:, 0])

    s0 = side(triangles[:, 0], triangles[:, 1])
    s1 = side(triangles[:, 1], triangles[:, 2])
    s2 = side(triangles[:, 2], triangles[:, 0])
    inside = ((s0 >= 0) & (s1 >= 0) & (s2 >= 0)) | ((s0 <= 0) & (s1 <= 0) & (s2 <= 0))
    return bool(inside.any())


def part_mark(magnet) -> tuple[str, str, str]:
    """(fill colour, letter, letter colour) of a part seen from above."""
    if magnet.radial is not None:
        return style.MAGNET_BODY, "", style.TEXT
    north_z = float((magnet.rotation @ (magnet.north / np.linalg.norm(magnet.north)))[2])
    if north_z > UP_THRESHOLD:
        return style.NORTH_FACE, "N", style.NORTH_LETTER
    if north_z < -UP_THRESHOLD:
        return style.SOUTH_FACE, "S", style.SOUTH_LETTER
    return style.MAGNET_BODY, "", style.TEXT


def draw_polarity_map(ctx, path: str, size=(1600, 1200), title: str | None = None,
                      transparent: bool = False, units=None) -> str:
    """The map written to `path`; its axes read in `units` (a DisplayUnits; default the
    scene's length unit) while the parts are drawn in the scene's unit."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    from matplotlib.collections import LineCollection, PolyCollection

    dpi = 100
    figure, axes = plt.subplots(figsize=(size[0] / dpi, size[1] / dpi), dpi=dpi)
    magnets = ctx.scene.magnets
    order = sorted(range(len(magnets)), key=lambda i: float(magnets[i].position[2]))
    extent = _xy_extent(ctx)
    span = float(max(extent[1] - extent[0], extent[3] - extent[2]))
    font = max(7.0, min(size) / 70.0)
    for index in order:  # lowest first: parts stacked above cover those below
        magnet = magnets[index]
        fill, letter, letter_colour = part_mark(magnet)
        triangles = footprint_triangles(ctx, index)
        outline = silhouette_segments(ctx, index)
        axes.add_collection(PolyCollection(triangles, facecolors=fill, edgecolors=fill,
                                           linewidths=0.4, antialiaseds=False,
                                           zorder=2 + index * 1e-3))
        axes.add_collection(LineCollection(outline, colors="#1c1c1c", linewidths=1.2, zorder=3))
        anchor = label_point(triangles, outline)
        _mark_part(axes, ctx, index, magnet, anchor, letter, letter_colour, span, font)
    axes.set_xlim(extent[0], extent[1])
    axes.set_ylim(extent[2], extent[3])
    axes.set_aspect("equal")
    length = ctx.unit if units is None else units.length_label
    factor = 1.0 if units is None else float(units.L_from(1.0, ctx.unit))
    relabel_ticks(axes.xaxis, extent[0], extent[1], factor)
    relabel_ticks(axes.yaxis, extent[2], extent[3], factor)
    axes.set_xlabel(f"x ({length})")
    axes.set_ylabel(f"y ({length})")
    axes.grid(True, color="#dddddd", linewidth=0.6, zorder=0)
    heading = title if title is not None else (ctx.scene.title or "trapscape")
    axes.set_title(f"{heading}\nPolarity map, seen from above (+z towards you)", fontsize=font * 1.2)
    _legend(axes, font)
    figure.tight_layout()
    try:
        save_figure(figure, path, dpi=dpi, transparent=transparent, bbox_inches=None)
    finally:
        plt.close(figure)
    return path


def _mark_part(axes, ctx, index, magnet, centre, letter, letter_colour, span, font) -> None:
    arrow_length = 0.06 * span
    if letter:
        axes.text(centre[0], centre[1], letter, ha="center", va="center", color=letter_colour,
                  fontsize=font * 1.3, fontweight="bold", zorder=5)
    else:
        for start, direction in _side_arrows(ctx, index, magnet, centre):
            axes.annotate("", xy=start + direction * arrow_length, xytext=start,
                          arrowprops=dict(arrowstyle="-|>", color=style.ARROW, lw=1.6), zorder=5)
            tip = start + direction * arrow_length * 1.35
            axes.text(tip[0], tip[1], "N", ha="center", va="center", fontsize=font,
                      fontweight="bold", color=style.TEXT, zorder=5)
    axes.text(centre[0], centre[1] - 0.035 * span if letter else centre[1], f"{index + 1}",
              ha="center", va="center", fontsize=font * 0.9, color=style.TEXT, zorder=6,
              bbox=dict(boxstyle="circle,pad=0.25", facecolor="#ffffff", edgecolor="#555555",
                        linewidth=0.8))


def _side_arrows(ctx, index, magnet, anchor):
    """(start (2,), unit direction (2,)) in the xy plane, towards the north face."""
    R = np.asarray(magnet.rotation, float)
    if magnet.radial is None:
        north = R @ (magnet.north / np.linalg.norm(magnet.north))
        flat = north[:2] / (np.linalg.norm(north[:2]) or 1.0)

        points = np.asarray(world_meshes(ctx)[index].points)
        reach = float(np.max((points[:, :2] - anchor) @ flat))
        return [(anchor + flat * reach * 0.2, flat)]
    mids, radial = shape_of(magnet).mid_wall(magnet, 8)
    result = []
    for middle, body in zip(mids, radial):
        world = R @ body
        start = ctx.to_units(magnet.position + R @ middle)[:2]
        flat = world[:2] / (np.linalg.norm(world[:2]) or 1.0)
        result.append((start, radial_sign(magnet) * flat))
    return result


def _xy_extent(ctx):
    lower, upper = ctx.magnet_bounds
    pad = 0.12 * float(max(upper[0] - lower[0], upper[1] - lower[1]))
    return (lower[0] - pad, upper[0] + pad, lower[1] - pad, upper[1] + pad)


def _legend(axes, font) -> None:
    from matplotlib.patches import Patch

    handles = [Patch(facecolor=style.NORTH_FACE, edgecolor="#1c1c1c", label="N: north face up"),
               Patch(facecolor=style.SOUTH_FACE, edgecolor="#1c1c1c", label="S: south face up"),
               Patch(facecolor=style.MAGNET_BODY, edgecolor="#1c1c1c",
                     label="magnetised sideways: arrow to the N face")]
    axes.legend(handles=handles, loc="upper center", bbox_to_anchor=(0.5, -0.09), ncol=3,
                fontsize=font * 0.9, frameon=False)
