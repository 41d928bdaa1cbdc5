"""Inputs that once gave a traceback, hung, or wrote NaN with exit 0, through the command line:
each now gets exit 2 and one sentence naming what to change, before any work is done."""
from __future__ import annotations

import os
import subprocess
import sys

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from repo_paths import SAMPLES

CLI = [sys.executable, "-m", "trapscape.viewers.cli"]
CHIP = str(SAMPLES / "bead_chip.toml")
SPHERE = 'units = "mm"\n{head}\n[[magnet]]\nshape = "sphere"\nsize = 4\nremanence = 1\n{body}\n'


def _files(folder):
    """Broken inputs of every kind, made in `folder`."""
    def scene(name, head="", body=""):
        path = folder / name
        path.write_text(SPHERE.format(head=head, body=body))
        return str(path)

    os.mkfifo(folder / "pipe.toml")
    os.symlink(folder / "loop-b.stl", folder / "loop-a.stl")
    os.symlink(folder / "loop-a.stl", folder / "loop-b.stl")
    (folder / "latin1.csv").write_bytes(b"x,y,z\n1,2,3\n\xe9,0,0\n")
    (folder / "a-folder.vti").mkdir()
    return {
        "pipe": str(folder / "pipe.toml"),
        "loop": str(folder / "loop-a.stl"),
        "mesh loop": scene("mesh.toml", body='[[magnet]]\nshape = "mesh"\nfile = "loop-a.stl"\n'
                                            'remanence = 1\nposition = [20, 0, 0]'),
        "materials loop": scene("materials.toml", head='materials = "loop-a.stl"'),
        "gravity": scene("gravity.toml", head="gravity = [0, 0, -1e300]"),
        "density": scene("density.toml", body="density = 1e300"),
        "latin1": str(folder / "latin1.csv"),
        "folder vti": str(folder / "a-folder.vti"),
        "out": str(folder / "out"),
    }


CASES = {  # name: (arguments with {placeholders}, words of the one sentence)
    "device as scene": (["check", "/dev/zero"], "not a regular file"),
    "pipe as scene": (["check", "{pipe}"], "not a regular file"),
    "link loop as scene": (["check", "{loop}"], "loop of symbolic links"),
    "link loop as mesh": (["check", "{mesh loop}"], "loop of symbolic links"),
    "link loop as materials": (["check", "{materials loop}"], "loop of symbolic links"),
    "gravity 1e300": (["check", "{gravity}"], "10,000 g"),
    "density 1e300": (["check", "{density}"], "osmium"),
    "points far away": (["field", CHIP, "--line", "1e300,0,0", "0,0,0", "5", "-o", "{out}.csv"],
                        "more than a kilometre"),
    "section far away": (["field", CHIP, "--section", "z=1e300", "-o", "{out}.csv"],
                         "more than a kilometre"),
    "section nan": (["render", CHIP, "--section", "z=nan", "-o", "{out}.png"], "not a finite"),
    "iso nan": (["render", CHIP, "--iso", "nan", "-o", "{out}.png"], "positive finite"),
    "line of 1e8 points": (["field", CHIP, "--line", "0,0,0", "1,0,0", "100000000",
                            "-o", "{out}.csv"], "at most 4,000,000"),
    "section resolution 1e5": (["field", CHIP, "--section", "z=0", "--resolution", "100000",
                                "-o", "{out}.csv"], "--resolution must be 2 to"),
    "render resolution 400": (["render", CHIP, "--resolution", "400", "-o", "{out}.png"],
                              "--resolution must be 8 to 160"),
    "picture of 268 megapixels": (["render", CHIP, "--size", "16384x16384", "-o", "{out}.png"],
                                  "megapixels"),
    "no layer left": (["render", CHIP, "--layers=-magnets,-plates,-section,-guide,-wells,-markers",
                       "-o", "{out}.png"], "leaves nothing to draw"),
    "spacing nan": (["export", CHIP, "--spacing", "nan", "-o", "{out}.vti"], "positive finite"),
    "spacing inf": (["export", CHIP, "--spacing", "inf", "-o", "{out}.vti"], "positive finite"),
    "points not UTF-8": (["field", CHIP, "--points", "{latin1}", "-o", "{out}.csv"], "not UTF-8"),
    "points from a device": (["field", CHIP, "--points", "/dev/zero", "-o", "{out}.csv"],
                             "not a regular file"),
    "plot of unknown format": (["field", CHIP, "--section", "z=0", "--plot", "{out}.xyz"],
                               "write a .png or .pdf or .svg file"),
    "export into a folder": (["export", CHIP, "-o", "{folder vti}"], "that is a folder"),
}


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    return _files(tmp_path_factory.mktemp("bad"))


@pytest.mark.parametrize("name", list(CASES))
def test_bad_input_gets_one_sentence_and_exit_2(name, files):
    args, words = CASES[name]
    filled = [a.format(**files) if "{" in a else a for a in args]
    done = subprocess.run([*CLI, *filled], capture_output=True, text=True, timeout=60,
                          stdin=subprocess.DEVNULL)
    assert done.returncode == 2, done.stderr
    last = done.stderr.strip().splitlines()[-1]
    assert last.startswith("trapscape: ") and words in last, done.stderr
    assert "Traceback" not in done.stderr


def test_a_byte_order_mark_is_accepted(tmp_path):
    scene = tmp_path / "bom.toml"
    scene.write_bytes(b"\xef\xbb\xbf" + SPHERE.format(head="", body="").encode())
    done = subprocess.run([*CLI, "check", str(scene)], capture_output=True, text=True,
                          timeout=60)
    assert done.returncode == 0, done.stderr


def test_control_characters_in_a_name_reach_the_terminal_escaped(tmp_path):
    """An escape sequence in a part's name (a CAD export's, a paste) must not recolour or
    rewrite the user's terminal: it is shown as \\x1b, with a warning saying so."""
    scene = tmp_path / "control.toml"
    scene.write_text(SPHERE.format(head="", body='name = "a\\u001b[31mred\\u0007"'))
    done = subprocess.run([*CLI, "check", str(scene)], capture_output=True, text=True, timeout=60)
    assert done.returncode == 0, done.stderr
    for stream in (done.stdout, done.stderr):
        assert not any(ord(c) < 32 and c not in "\n\t" or 127 <= ord(c) < 160 for c in stream)
    assert "a\\x1b[31mred\\x07" in done.stdout
    assert "control characters" in done.stderr and "kept escaped" in done.stderr


@settings(max_examples=60, deadline=None)
@given(st.lists(st.tuples(*[st.floats(-1e6, 1e6, allow_nan=False)] * 3), min_size=1,
                max_size=20))
def test_the_field_is_finite_at_every_accepted_point(points_mm):
    """Anywhere within a kilometre (faces, edges, centres and far away included) the field is
    finite: DESIGN.md, Conventions (never NaN or inf)."""
    from trapscape.physics.analysis.run import load_analysis
    from trapscape.scene.measures import bounding_box

    analysis = _chip_analysis(load_analysis)
    edges = [corner for magnet in analysis.scene.magnets for corner in _corners(*bounding_box(magnet))]
    values = analysis.field_at(np.vstack([np.array(points_mm) * 1e-3, edges]))
    assert np.isfinite(values.B).all() and np.isfinite(values.H).all()


def _corners(low, high):
    """A box's corners, edge midpoints and face centres (m): where the field is singular."""
    return [(x, y, z) for x in (low[0], (low[0] + high[0]) / 2, high[0])
            for y in (low[1], (low[1] + high[1]) / 2, high[1])
            for z in (low[2], (low[2] + high[2]) / 2, high[2])]


_CACHE = {}


def _chip_analysis(load_analysis):
    if "chip" not in _CACHE:
        _CACHE["chip"] = load_analysis(CHIP)
    return _CACHE["chip"]
