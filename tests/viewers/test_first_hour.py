"""What a new user meets in the first hour, through the command line: negative coordinates, one
option vocabulary with examples, bad geometry refused or named, output paths checked before any
work, hold notes that fit the scene, and field plots that can be read."""
from __future__ import annotations

import csv
import subprocess
import sys
import warnings

import numpy as np
import pytest
from repo_paths import REPO, SAMPLES

from trapscape.scene.errors import SceneError, SceneWarning
from trapscape.scene.loader import load_scene_text
from trapscape.viewers.cli import COMMANDS, build_parser, main

CLI = [sys.executable, "-m", "trapscape.viewers.cli"]
BEAD_CHIP = str(SAMPLES / "bead_chip.toml")
PLATE = str(SAMPLES / "holding_plate.toml")
DISC = """units = "mm"
[[magnet]]
name = "disc"
shape = "cylinder"
size = [10, 5]
grade = "N42"
north = [0, 0, 1]
"""


def run_cli(*args, cwd=None):
    done = subprocess.run([*CLI, *args], capture_output=True, text=True, cwd=cwd, timeout=300,
                          stdin=subprocess.DEVNULL)
    return done.returncode, done.stdout, done.stderr


def read_rows(path):
    with open(path, newline="") as handle:
        return list(csv.DictReader(handle))


# -- 4: a negative first coordinate is a value, not an option ------------------------------------

def test_line_may_start_at_a_negative_coordinate(tmp_path):
    out = tmp_path / "line.csv"
    code, _, err = run_cli("field", PLATE, "--line", "-3,0,0.7", "3,0,0.7", "7", "-o", str(out))
    assert code == 0, err
    rows = read_rows(out)
    assert [float(r["x_mm"]) for r in rows] == [-3, -2, -1, 0, 1, 2, 3]


def test_negative_section_level_and_gap_text_are_values():
    args = build_parser().parse_args(["field", BEAD_CHIP, "--section", "z=-1", "-o", "a.csv"])
    assert args.section == "z=-1"
    args = build_parser().parse_args(["field", BEAD_CHIP, "--line", "-.5,0,0", "-1e-3,0,0", "3",
                                      "-o", "a.csv"])
    assert args.line == ["-.5,0,0", "-1e-3,0,0", "3"]


# -- 5: one vocabulary ---------------------------------------------------------------------------

def _help(command):
    parser = build_parser()
    sub = next(a for a in parser._actions if a.dest == "command")
    return sub.choices[command].format_help()


@pytest.mark.parametrize("command", list(COMMANDS))
def test_every_command_names_its_output_o_and_shows_examples(command):
    text = _help(command)
    assert "-o " in text and "--output" in text
    examples = text.split("examples:\n", 1)[1]
    lines = [line.strip() for line in examples.splitlines() if line.strip()]
    assert lines and all(line.startswith(f"trapscape {command}") for line in lines)


@pytest.mark.parametrize("command", list(COMMANDS))
def test_every_command_takes_set_and_quiet(command):
    text = _help(command)
    assert "--set NAME=VALUE" in text and "--quiet" in text


def test_field_and_render_share_section_and_resolution_words():
    for command in ("field", "render", "export"):
        text = " ".join(_help(command).split())
        assert "--section AXIS[=VALUE]" in text
        assert "--resolution N samples along the longest side" in text
    assert "--plane" not in _help("field")  # still read, no longer shown


def test_former_option_names_still_work(tmp_path):
    out = tmp_path / "plane.csv"
    code, _, err = run_cli("field", BEAD_CHIP, "--plane", "z=0", "--resolution", "5",
                           "--out", str(out))
    assert code == 0, err and len(read_rows(out)) > 0
    code, _, err = run_cli("check", BEAD_CHIP, "--json", str(tmp_path / "c.json"))
    assert code == 0 and (tmp_path / "c.json").is_file(), err


def test_demo_takes_set(tmp_path):
    code, out, err = run_cli("demo", "-o", str(tmp_path), "--size", "320x240", "--quiet",
                             "--set", "gap=4")
    assert code == 0, err
    assert '"gap": 4' in (tmp_path / "check.json").read_text()


def test_demo_refuses_an_unknown_parameter(tmp_path):
    code, _, err = run_cli("demo", "-o", str(tmp_path), "--set", "nonesuch=4")
    assert code == 2 and "nonesuch" in err and "Traceback" not in err


# -- 6: bad geometry refused or named ------------------------------------------------------------

OVERLAPPING = """units = "mm"
{head}
[[magnet]]
shape = "box"
size = [5, 5, 5]
remanence = 1
pattern = {{ kind = "linear", count = 2, step = [4, 0, 0] }}
"""


def test_overlapping_magnets_are_an_error_unless_allowed(tmp_path):
    scene = tmp_path / "overlap.toml"
    scene.write_text(OVERLAPPING.format(head=""))
    code, _, err = run_cli("check", str(scene))
    assert code == 2
    assert "'box-1-1' and 'box-1-2' overlap by about 1 mm" in err and "allow_overlap" in err
    scene.write_text(OVERLAPPING.format(head="allow_overlap = true"))
    code, _, err = run_cli("check", str(scene))
    assert code == 0 and "warning:" in err and "overlap" in err


def test_allow_overlap_must_be_a_boolean():
    with pytest.raises(SceneError, match="allow_overlap: write true or false"):
        load_scene_text(OVERLAPPING.format(head='allow_overlap = "yes"'))


def test_guide_line_through_a_magnet_is_named():
    text = DISC + """[probe]
kind = "soft"
diameter = 1
[probe.constraint]
kind = "line"
point = [0, 0, 10]
direction = [0, 0, 1]
"""
    with pytest.warns(SceneWarning, match=r"guide line runs through magnet 'disc' from "
                                          r"\(0, 0, -2\.\d+\) to \(0, 0, 2\.\d+\) mm"):
        load_scene_text(text)
    with warnings.catch_warnings():  # the same line beside the disc passes silently
        warnings.simplefilter("error", SceneWarning)
        load_scene_text(text.replace("point = [0, 0, 10]", "point = [8, 0, 10]"))


def test_field_marks_points_inside_a_magnet(tmp_path):
    scene = tmp_path / "disc.toml"
    scene.write_text(DISC)
    out = tmp_path / "axis.csv"
    code, stdout, err = run_cli("field", str(scene), "--line", "0,0,0", "0,0,5", "6",
                                "-o", str(out))
    assert code == 0, err
    owners = [row["inside_magnet"] for row in read_rows(out)]
    assert owners == ["disc", "disc", "disc", "", "", ""]  # the disc's top face is z = 2.5 mm
    assert "3 of 6 points lie inside a magnet" in stdout


def test_a_line_whose_ends_coincide_is_refused(tmp_path):
    code, _, err = run_cli("field", BEAD_CHIP, "--line", "1,1,1", "1,1,1", "5",
                           "-o", str(tmp_path / "a.csv"))
    assert code == 2 and "same point" in err and "Traceback" not in err


@pytest.mark.parametrize("command,args", [
    ("check", ["-o", "{missing}/c.json"]),
    ("traps", ["-o", "{missing}/t.json"]),
    ("traps", ["-o", "{json_folder}"]),
    ("hold", ["--gap", "0..1@2", "-o", "{missing}/h.json"]),
    ("hold", ["--gap", "0..1@2", "--plot", "{png_folder}/p.xyz"]),
    ("field", ["--section", "z=0", "-o", "{missing}/f.csv"]),
    ("field", ["--section", "z=0", "--plot", "p.xyz"]),
    ("render", ["-o", "{png_folder}"]),
    ("export", ["-o", "{missing}/g.vti"]),
])
def test_output_paths_are_checked_before_any_work(command, args, tmp_path, monkeypatch, capsys):
    import importlib

    module = importlib.import_module(f"trapscape.viewers.commands.{command}")

    def no_work(_args):
        raise AssertionError("the scene was analysed before the output path was checked")

    monkeypatch.setattr(module, "analysis_from_args", no_work)
    folders = {name: tmp_path / f"out.{name[:-7]}" for name in ("png_folder", "json_folder")}
    for folder in folders.values():  # folders whose names look like files
        folder.mkdir()
    filled = [a.format(missing=tmp_path / "no-such-folder", **folders) for a in args]
    scene = PLATE if command == "hold" else BEAD_CHIP
    assert main([command, scene, *filled]) == 2
    message = capsys.readouterr().err.strip().splitlines()[-1]
    assert message.startswith("trapscape: ")
    assert any(words in message for words in ("does not exist", "that is a folder",
                                              "write a .png or .pdf or .svg file"))


# -- 7: gravity is documented --------------------------------------------------------------------

def test_readme_says_gravity_is_on_by_default_and_names_the_key():
    text = (REPO / "README.md").read_text()
    assert "gravity = [0, 0, -9.81]" in text and "gravity = [0, 0, 0]" in text


# -- 8: hold's notes fit the scene ---------------------------------------------------------------

def test_hold_with_one_plate_says_nothing_of_several(tmp_path):
    code, out, err = run_cli("hold", PLATE, "--gap", "0..1@2")
    assert code == 0, err
    assert "Several plates" not in out


def test_hold_with_two_plates_explains_the_images(tmp_path):
    scene = tmp_path / "two.toml"
    scene.write_text(DISC + """
[[steel_plate]]
name = "below"
point = [0, 0, -2.5]
normal = [0, 0, 1]
thickness = 5
[[steel_plate]]
name = "above"
point = [0, 0, 12.5]
normal = [0, 0, -1]
thickness = 5
""")
    code, out, err = run_cli("hold", str(scene), "--gap", "0..1@2", "--plate", "below")
    assert code == 0, err
    assert "note: Several plates" in out


# -- 9: field plots that can be read -------------------------------------------------------------

def _field_values(scene_text, layout_args, tmp_path):
    path = tmp_path / "s.toml"
    path.write_text(scene_text)
    return _field_values_of(path, layout_args)


def _field_values_of(path, layout_args):
    from trapscape.physics.analysis.run import Analysis
    from trapscape.scene.loader import load_scene
    from trapscape.viewers.commands import field

    scene = load_scene(path)
    args = build_parser().parse_args(["field", str(path), *layout_args, "-o", "x.csv"])
    points, layout = field._sample_points(scene, args)
    return scene, points, Analysis(scene).field_at(points), layout


def test_section_plot_is_log_scaled_over_the_air_with_the_magnet_outlined(tmp_path):
    from matplotlib.colors import LogNorm

    from trapscape.viewers.field_plot import section_figure

    scene, points, values, layout = _field_values(DISC, ["--section", "y=0", "--resolution", "61"],
                                                  tmp_path)
    figure = section_figure(scene, points, values, layout)
    axes, bar_axes = figure.axes
    image = axes.collections[0]
    assert isinstance(image.norm, LogNorm)
    air = np.linalg.norm(values.B, axis=1)[values.inside_magnet < 0] * 1e3
    assert (values.inside_magnet >= 0).sum() > 100  # the section cuts the disc
    # the top is the air's (edge samples, where |B| grows without bound, left out), not the
    # ~1 T inside the magnet
    assert np.percentile(air, 99) <= image.norm.vmax <= air.max()
    assert image.norm.vmax == pytest.approx(np.percentile(air, 99.8))
    outline = axes.collections[-1]
    assert outline.get_edgecolor()[0][:3].tolist() == [0.0, 0.0, 0.0]
    assert "y = 0 mm" in axes.get_title()
    ticks = bar_axes.get_yticks()
    mantissas = {round(t / 10 ** np.floor(np.log10(t)), 6) for t in ticks}
    assert len(ticks) >= 3 and mantissas <= {1.0, 2.0, 5.0}


def test_section_resolution_follows_the_longest_side(tmp_path):
    scene, points, values, layout = _field_values_of(BEAD_CHIP, ["--section", "z=0"])
    rows, columns = layout[2]
    box = scene.search_box
    ratio = (box.max[1] - box.min[1]) / (box.max[0] - box.min[0])
    assert max(rows, columns) == 201 and rows / columns == pytest.approx(ratio, abs=0.01)


def test_line_plot_says_where_the_line_runs(tmp_path):
    from trapscape.viewers.field_plot import line_figure

    scene, points, values, layout = _field_values(DISC, ["--line", "-8,0,0", "8,0,0", "33"],
                                                  tmp_path)
    axes = line_figure(scene, values, layout).axes[0]
    assert "(-8, 0, 0) mm to (8, 0, 0) mm" in axes.get_title()
    labels = axes.get_legend_handles_labels()[1]
    assert "inside a magnet" in labels and "|B|" in labels


def test_field_values_carry_no_rounding_noise(tmp_path):
    # On the symmetry plane of two opposed discs Bz cancels exactly (by symmetry, derived here).
    text = DISC.replace('name = "disc"', 'name = "a"').replace("north = [0, 0, 1]",
                                                               "north = [0, 0, 1]\nposition = [0, 0, -5]")
    text += '[[magnet]]\nname = "b"\nshape = "cylinder"\nsize = [10, 5]\ngrade = "N42"\n' \
            'north = [0, 0, -1]\nposition = [0, 0, 5]\n'
    scene, points, values, layout = _field_values(text, ["--line", "-4,1,0", "4,1,0", "9"], tmp_path)
    assert np.all(values.B[:, 2] == 0.0) and np.all(values.H[:, 2] == 0.0)
    assert np.all(np.linalg.norm(values.B, axis=1) > 1e-3)  # the radial field is kept
