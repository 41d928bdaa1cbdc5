"""`trapscape import` as a person runs it: at a terminal, in a pipe, and with broken input (a
damaged file, a missing file, a bad parts list, a folder without CAD files)."""
from __future__ import annotations

from pathlib import Path

import pytest
from repo_paths import SAMPLES
from test_terminal import at_terminal, in_pipe

STAND = str(SAMPLES / "parts" / "stand.3mf")
PARTS = str(SAMPLES / "stand_parts.csv")


def test_import_at_a_terminal(tmp_path):
    code, screen = at_terminal(["import", STAND, "--parts", PARTS, "-o", "stand.toml"],
                               cwd=tmp_path)
    assert code == 0 and "Traceback" not in screen, screen
    assert "recognised 7 of 7" in screen and "wrote stand.toml" in screen
    assert (tmp_path / "stand.toml").is_file()
    code, screen = at_terminal(["check", "stand.toml"], cwd=tmp_path)
    assert code == 0, screen


def test_import_in_a_pipe(tmp_path):
    code, out, err = in_pipe(["import", STAND, "--parts", PARTS, "-o", "stand.toml"],
                             cwd=tmp_path)
    assert code == 0, err
    assert "\r" not in err and "Traceback" not in err
    assert out.strip().endswith("wrote stand.toml")


@pytest.mark.parametrize("case", ["damaged", "missing", "parts", "empty-folder", "suffix"])
def test_import_with_broken_input_says_one_sentence(case, tmp_path):
    broken = tmp_path / "broken.stl"
    broken.write_bytes(b"solid x\n facet normal 0 0 1\n outer loop\n vertex 0 0")
    args = {
        "damaged": [str(broken), "--units", "mm"],
        "missing": [str(tmp_path / "nowhere.step")],
        "parts": [STAND, "--parts", str(_bad_parts(tmp_path))],
        "empty-folder": [str(_empty_folder(tmp_path))],
        "suffix": [str(_text_file(tmp_path))],
    }[case]
    code, out, err = in_pipe(["import", *args, "-o", "s.toml"], cwd=tmp_path)
    assert code == 2, err
    assert "Traceback" not in err and len(err.strip().splitlines()) == 1, err
    assert not (tmp_path / "s.toml").exists()


def _bad_parts(folder: Path) -> Path:
    path = folder / "parts.csv"
    path.write_text("pattern,role\ndisc-*,magnit\n")
    return path


def _empty_folder(folder: Path) -> Path:
    (folder / "empty").mkdir()
    return folder / "empty"


def _text_file(folder: Path) -> Path:
    path = folder / "notes.txt"
    path.write_text("not a CAD file")
    return path
