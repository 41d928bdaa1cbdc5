"""The outputs whose numbers must not change when the code is restructured: for every sample the
JSON of `check` and `traps`, the CSV of `field` along the search box's diagonal (which crosses
magnet faces), and for samples with a steel plate the JSON of `hold`.

`python tests/golden_outputs.py` writes them into tests/golden/ (run it only on a commit whose
numbers are trusted); tests/test_unchanged_outputs.py compares the current code against them."""
from __future__ import annotations

import contextlib
import io
import sys
from pathlib import Path

from trapscape.scene.files import is_scene_file

HERE = Path(__file__).resolve().parent
SAMPLES = HERE.parent / "samples"
GOLDEN = HERE / "golden"


def sample_names() -> list[str]:
    return sorted(p.stem for p in SAMPLES.glob("*.toml") if is_scene_file(p))


def has_plate(name: str) -> bool:
    return "[[steel_plate]]" in (SAMPLES / f"{name}.toml").read_text()


def write_diagonal(name: str, path: Path) -> Path:
    """61 points on the search box's diagonal, in the scene unit, as a `field --points` CSV."""
    import numpy as np

    from trapscape.scene.loader import load_scene

    scene = load_scene(SAMPLES / f"{name}.toml")
    lo, hi = (np.asarray(v) / scene.unit_scale for v in (scene.search_box.min, scene.search_box.max))
    points = lo + np.linspace(0.0, 1.0, 61)[:, None] * (hi - lo)
    rows = ["x,y,z", *(",".join(f"{v:.9g}" for v in p) for p in points)]
    path.write_text("\n".join(rows) + "\n")
    return path


def kinds(name: str) -> list[str]:
    return ["check.json", "traps.json", "field.csv"] + (["hold.json"] if has_plate(name) else [])


def commands(name: str, out: Path) -> dict[str, list[str]]:
    scene = str(SAMPLES / f"{name}.toml")
    runs = {
        "check.json": ["check", scene, "--json", str(out / f"{name}.check.json")],
        "traps.json": ["traps", scene, "--json", str(out / f"{name}.traps.json")],
        "field.csv": ["field", scene,
                      "--points", str(write_diagonal(name, out / f"{name}.points.csv")),
                      "--out", str(out / f"{name}.field.csv")],
    }
    if has_plate(name):
        runs["hold.json"] = ["hold", scene, "--gap", "0..3@4", "--friction", "0.2",
                             "--json", str(out / f"{name}.hold.json")]
    return runs


def produce(name: str, out: Path) -> list[Path]:
    """Run the commands of one sample in this process; return the files written."""
    from trapscape.viewers.cli import main

    written = []
    for kind, args in commands(name, out).items():
        with contextlib.redirect_stdout(io.StringIO()):
            code = main([*args, "--quiet"])
        if code != 0:
            raise RuntimeError(f"{' '.join(args)} exited with {code}")
        written.append(out / f"{name}.{kind}")
    return written


if __name__ == "__main__":
    GOLDEN.mkdir(exist_ok=True)
    for sample in sample_names():
        for path in produce(sample, GOLDEN):
            print(path.relative_to(HERE.parent), file=sys.stderr)
