"""Regenerate the README's pictures in docs/images/: the default view of every sample, the
level gauge's polarity map, and the first page of the demo's report (report_page1.png, through
pdftoppm of poppler-utils).

    python scripts/make_readme_images.py [--size 1200x900] [--out FOLDER] [SAMPLE ... | report]
"""
from __future__ import annotations

import argparse
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from trapscape.viewers.render import prefer_egl  # noqa: E402

prefer_egl()

PICTURES = (  # (sample, file, what)
    ("level_gauge", "level_gauge.png", "scene"),
    ("bead_chip", "bead_chip.png", "scene"),
    ("level_gauge", "level_gauge_polarity.png", "polarity"),
    ("holding_plate", "holding_plate.png", "scene"),
    ("separator_grate", "separator_grate.png", "scene"),
    ("graphite_stage", "graphite_stage.png", "scene"),
    ("arc_rotor", "arc_rotor.png", "scene"),
)


def main() -> int:
    from trapscape.scene.loader import load_scene
    from trapscape.viewers.commands.render import parse_size
    from trapscape.viewers.layers import default_layers
    from trapscape.viewers.layers.context import ViewContext
    from trapscape.viewers.polarity import draw_polarity_map
    from trapscape.viewers.render import RenderOptions, render_png

    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--size", default="1200x900")
    parser.add_argument("--out", default=str(ROOT / "docs" / "images"))
    parser.add_argument("samples", nargs="*", help="only these samples (default: all)")
    args = parser.parse_args()
    size = parse_size(args.size)
    out = Path(args.out).resolve()
    out.mkdir(parents=True, exist_ok=True)
    contexts = {}
    for sample, name, what in PICTURES:
        if args.samples and sample not in args.samples:
            continue
        if sample not in contexts:
            contexts[sample] = ViewContext.of(load_scene(str(ROOT / "samples" / f"{sample}.toml")))
        ctx = contexts[sample]
        path = out / name
        if what == "polarity":
            draw_polarity_map(ctx, str(path), size=(size[0] * 3 // 4, size[1] * 3 // 4))
        else:
            render_png(ctx, RenderOptions(layers=default_layers(ctx.scene), size=size), str(path))
        print(f"wrote {path}")
        for note in ctx.notes:
            print(f"  note: {note}")
    if not args.samples or "report" in args.samples:
        print(f"wrote {report_page1(out)}")
    return 0


def report_page1(out: Path) -> Path:
    """The first page of `trapscape demo`'s report.pdf as a PNG (pdftoppm at 80 dpi)."""
    with tempfile.TemporaryDirectory() as folder:
        subprocess.run([sys.executable, "-m", "trapscape.viewers.cli", "demo", "-o", folder,
                        "--no-3d", "--quiet"], check=True, stdout=subprocess.DEVNULL)
        subprocess.run(["pdftoppm", "-png", "-r", "80", "-f", "1", "-l", "1",
                        "-singlefile", str(Path(folder) / "report.pdf"),
                        str(out / "report_page1")], check=True)
    return out / "report_page1.png"


if __name__ == "__main__":
    sys.exit(main())
