"""`trapscape field`: B, H and |B| at points from a CSV, along a line or on a section plane."""
from __future__ import annotations

import csv
import math

import numpy as np

from trapscape.scene.errors import SceneError
from trapscape.viewers.commands.common import (add_scene_arguments, analysis_from_args, progress,
                                               replaced_atomically)

AXES = {"x": 0, "y": 1, "z": 2}


def add_arguments(parser) -> None:
    add_scene_arguments(parser)
    where = parser.add_mutually_exclusive_group(required=True)
    where.add_argument("--points", metavar="IN.csv", help="CSV with header x,y,z in the scene's unit")
    where.add_argument("--line", nargs=3, metavar=("A", "B", "N"),
                       help='N points from A to B, e.g. --line "0,0,-20" "0,0,20" 101')
    where.add_argument("--plane", metavar="AXIS=VALUE",
                       help="a section through the search box, e.g. --plane z=0")
    parser.add_argument("--out", metavar="OUT.csv", help="where to write the CSV")
    parser.add_argument("--plot", metavar="FILE.png", help="also plot a line or a plane")
    parser.add_argument("--resolution", type=int, default=None, metavar="N",
                        help="points on the longer side of a --plane section (default: search box spacing)")


def run(args) -> int:
    analysis = analysis_from_args(args)
    scene = analysis.scene
    points, layout = _sample_points(scene, args)
    if not (args.out or args.plot):
        raise SceneError("field: say where the result goes with --out OUT.csv (and/or --plot FILE.png).")
    with progress(args, unit="pt", desc="field") as update:
        values = analysis.field_at(points, progress=update)
    B, H, in_model = values.B, values.H, values.in_model
    if args.out:
        _write_csv(args.out, scene, points, B, H, in_model)
        print(f"wrote {len(points)} points to {args.out}")
    if args.plot:
        _plot(args.plot, scene, points, B, layout)
        print(f"wrote the plot to {args.plot}")
    if not in_model.all():
        print(f"{(~in_model).sum()} points lie behind a steel plate, outside the model (in_model = 0)")
    return 0


def _sample_points(scene, args):
    unit = scene.unit_scale
    if args.points:
        return _read_points(args.points) * unit, None
    if args.line:
        start, stop = (_vector(text, "--line") for text in args.line[:2])
        count = _count(args.line[2])
        t = np.linspace(0.0, 1.0, count)
        points = (start + t[:, None] * (stop - start)) * unit
        return points, ("line", t * np.linalg.norm(stop - start))
    return _plane_points(scene, args.plane, args.resolution)


def _plane_points(scene, text, resolution):
    axis_name, _, value = text.partition("=")
    axis = AXES.get(axis_name.strip().lower())
    if axis is None or not value:
        raise SceneError(f"--plane {text!r}: write AXIS=VALUE with AXIS one of x, y, z, e.g. --plane z=0.")
    level = _number(value, "--plane") * scene.unit_scale
    box = scene.search_box
    others = [a for a in range(3) if a != axis]
    extent = box.max[others] - box.min[others]
    step = extent.max() / (resolution - 1) if resolution else box.spacing
    if resolution is not None and resolution < 2:
        raise SceneError("--resolution must be at least 2.")
    counts = np.maximum(np.floor(extent / step + 1e-9).astype(int) + 1, 2)
    u = np.linspace(box.min[others[0]], box.max[others[0]], counts[0])
    v = np.linspace(box.min[others[1]], box.max[others[1]], counts[1])
    uu, vv = np.meshgrid(u, v, indexing="xy")
    points = np.zeros((uu.size, 3))
    points[:, others[0]] = uu.ravel()
    points[:, others[1]] = vv.ravel()
    points[:, axis] = level
    return points, ("plane", others, uu.shape, level)


def _read_points(path):
    try:
        with open(path, newline="", encoding="utf-8-sig") as handle:
            rows = list(csv.reader(handle))
    except OSError as error:
        raise SceneError(f"cannot read the points file {path}: {error.strerror}.") from None
    if not rows or [c.strip().lower() for c in rows[0][:3]] != ["x", "y", "z"]:
        raise SceneError(f"{path}: the first line must be the header x,y,z (in the scene's unit).")
    values = []
    for number, row in enumerate(rows[1:], start=2):
        if not any(cell.strip() for cell in row):
            continue
        if len(row) < 3:
            raise SceneError(f"{path}, line {number}: expected three numbers x,y,z, got {len(row)}.")
        values.append([_number(cell, f"{path}, line {number}") for cell in row[:3]])
    if not values:
        raise SceneError(f"{path}: no points below the header x,y,z.")
    return np.array(values, dtype=float)


def _number(text, where):
    try:
        value = float(text)
    except ValueError:
        raise SceneError(f"{where}: {text.strip()!r} is not a number.") from None
    if not math.isfinite(value):
        raise SceneError(f"{where}: {text.strip()!r} is not a finite number.")
    return value


def _vector(text, where):
    parts = text.replace(";", ",").split(",")
    if len(parts) != 3:
        raise SceneError(f"{where}: {text!r} must be three numbers x,y,z separated by commas.")
    return np.array([_number(p, where) for p in parts])


def _count(text):
    try:
        count = int(text)
    except ValueError:
        raise SceneError(f"--line: the point count {text!r} must be a whole number.") from None
    if count < 2:
        raise SceneError("--line: the point count must be at least 2.")
    return count


def _write_csv(path, scene, points, B, H, in_model):
    u = scene.units
    header = [f"x_{u}", f"y_{u}", f"z_{u}", "Bx_T", "By_T", "Bz_T",
              "Hx_A_per_m", "Hy_A_per_m", "Hz_A_per_m", "B_T", "in_model"]
    table = np.column_stack([points / scene.unit_scale, B, H, np.linalg.norm(B, axis=1)])
    with replaced_atomically(path, newline="") as handle:
        writer = csv.writer(handle)
        writer.writerow(header)
        for row, ok in zip(table, in_model):
            writer.writerow([f"{v:.9g}" for v in row] + [int(ok)])


def _plot(path, scene, points, B, layout):
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    if layout is None:
        raise SceneError("--plot draws a --line or a --plane; for --points use --out only.")
    magnitude_mT = np.linalg.norm(B, axis=1) * 1e3
    fig, ax = plt.subplots(figsize=(7, 5), dpi=120)
    if layout[0] == "line":
        distance = layout[1]
        for k, name in enumerate("xyz"):
            ax.plot(distance, B[:, k] * 1e3, label=f"B{name}", lw=1)
        ax.plot(distance, magnitude_mT, "k", lw=2, label="|B|")
        ax.set_xlabel(f"distance along the line ({scene.units})")
        ax.set_ylabel("B (mT)")
        ax.legend()
        ax.grid(alpha=0.3)
    else:
        _, others, shape, level = layout
        u = points[:, others[0]].reshape(shape) / scene.unit_scale
        v = points[:, others[1]].reshape(shape) / scene.unit_scale
        image = ax.pcolormesh(u, v, magnitude_mT.reshape(shape), cmap="cividis", shading="auto")
        fig.colorbar(image, ax=ax, label="|B| (mT)")
        ax.set_aspect("equal")
        ax.set_xlabel(f"{'xyz'[others[0]]} ({scene.units})")
        ax.set_ylabel(f"{'xyz'[others[1]]} ({scene.units})")
        axis = ({0, 1, 2} - set(others)).pop()
        ax.set_title(f"|B| on the section {'xyz'[axis]} = {level / scene.unit_scale:g} {scene.units}")
    try:
        fig.savefig(path, bbox_inches="tight")
    except OSError as error:
        raise SceneError(f"cannot write {path}: {error.strerror}; choose a writable path.") from None
    finally:
        plt.close(fig)

