"""`trapscape import FILES|DIR -o scene.toml [--units mm] [--parts PARTS.csv]`: a scene from CAD
exports, one [[magnet]] per body; boxes, cylinders, rings, arcs and spheres recognised as such,
the rest written as mesh files beside the scene. What was assumed is printed and kept as
comments in the scene."""
from __future__ import annotations

import sys
import warnings
from pathlib import Path

from trapscape.scene.errors import SceneError
from trapscape.viewers.commands.common import (
    add_output_argument,
    check_output_path,
)

EXAMPLES = """\
  trapscape import samples/parts/stand.3mf --parts samples/stand_parts.csv -o stand.toml
  trapscape import assembly.step -o assembly.toml --set grade=N45 --set magnetization=axial
  trapscape import exports/ -o layout.toml --parts layout_parts.csv
"""

UNITS = ("mm", "cm", "m", "in")


def add_arguments(parser) -> None:
    parser.add_argument("inputs", metavar="FILES|DIR", nargs="+",
                        help="CAD exports (.step/.stp with the [cad] extra, .3mf, .stl, .obj, "
                             ".ply) or a folder of them")
    add_output_argument(parser, "SCENE.toml", required=True,
                        help="the scene to write (mesh parts go to SCENE-meshes/ beside it)")
    parser.add_argument("--units", choices=UNITS, metavar="UNIT",
                        help="unit of files that state none (STL, OBJ, PLY): mm, cm, m or in "
                             "(default: guessed from the body sizes, with a warning)")
    parser.add_argument("--parts", metavar="PARTS.csv",
                        help="parts list: pattern,role,grade,magnetization,polarity per row")
    parser.add_argument("--set", action="append", default=[], metavar="NAME=VALUE",
                        help="default for bodies the parts list leaves open: grade=N45 or "
                             "magnetization=axial (repeatable)")
    parser.add_argument("--quiet", action="store_true", help="print only warnings and the "
                        "written files")


def run(args) -> int:
    from trapscape.scene.cad.importing import check_imported, import_cad
    from trapscape.scene.errors import SceneWarning
    from trapscape.viewers.atomic import atomic_path, replaced_atomically

    check_output_path(args.output, (".toml",))
    defaults = {}
    for item in args.set:
        key, sep, value = item.partition("=")
        if not sep or not value.strip():
            raise SceneError(f"--set {item!r}: write NAME=VALUE, e.g. --set grade=N45.")
        defaults[key.strip()] = value.strip()
    target = Path(args.output)
    imported = import_cad(args.inputs, target, units=args.units, parts_list=args.parts,
                          defaults=defaults)
    for relative, (vertices, faces) in imported.meshes.items():
        _write_mesh(target.parent / relative, vertices, faces, atomic_path)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", SceneWarning)
        check_imported(imported, target)
    with replaced_atomically(target) as stream:
        stream.write(imported.text)
    for warning in imported.warnings + [str(w.message) for w in caught
                                        if issubclass(w.category, SceneWarning)]:
        print(f"trapscape: warning: {warning}", file=sys.stderr)
    if not args.quiet:
        from trapscape.scene.cad.writing import summary_lines

        print("assumed:")
        for line in imported.notes:
            print(f"  - {line}")
        for line in summary_lines(imported.parts):
            print(f"  {line}")
        for relative in imported.meshes:
            print(f"wrote {target.parent / relative}")
    print(f"wrote {target}")
    return 0


def _write_mesh(path: Path, vertices, faces, atomic_path) -> None:
    import trimesh

    path.parent.mkdir(parents=True, exist_ok=True)
    mesh = trimesh.Trimesh(vertices=vertices, faces=faces, process=False)
    with atomic_path(path) as temporary:
        mesh.export(temporary, file_type="stl")
