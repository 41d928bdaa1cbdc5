"""--units on every command that prints or plots (issue 17): the numbers a reader sees in inches,
pounds-force and gauss are the SI numbers of the JSON or CSV the same run wrote, converted with
the standard factors; the files stay SI; the default is unchanged; a wrong unit is one sentence
and exit code 2, at a terminal and in a pipe."""
from __future__ import annotations

import csv
import json
import re

import numpy as np
import pytest
from repo_paths import SAMPLES
from test_terminal import at_terminal, in_pipe

from trapscape.physics.analysis.display_units import DisplayUnits, parse_units
from trapscape.scene.errors import SceneError

# NIST Special Publication 811 (2008), Appendix B.8 and B.9: exact definitions
INCH_M = 0.0254  # 1 in = 0.0254 m
LBF_N = 4.4482216152605  # 1 lbf = 4.448 221 615 260 5 N
KGF_N = 9.80665  # 1 kgf = 9.806 65 N
GAUSS_T = 1e-4  # 1 G = 1e-4 T
MM_M = 1e-3
THREE_DIGITS = 6e-3  # a number printed to 3 significant digits is within half its last digit
FOUR_DIGITS = 6e-4

PAIR = str(SAMPLES / "bead_pair.toml")
PLATE = str(SAMPLES / "holding_plate.toml")
GAUGE = str(SAMPLES / "level_gauge.toml")
IMPERIAL = "in,lbf,gauss"


def _mm_to_in(value):
    return np.asarray(value, float) * MM_M / INCH_M


def _close(printed: str, expected, rel=THREE_DIGITS, abs=0.0):
    assert float(printed) == pytest.approx(expected, rel=rel, abs=abs), (printed, expected)


# -- the factors and the parser ------------------------------------------------------------------

def test_the_factors_are_the_standard_ones():
    shown = DisplayUnits(field="gauss", force="lbf", length="in")
    assert shown.L(INCH_M) == pytest.approx(1.0, rel=1e-15)  # NIST SP 811, B.8
    assert shown.F(LBF_N) == pytest.approx(1.0, rel=1e-14)  # NIST SP 811, B.8
    assert shown.B(GAUSS_T) == pytest.approx(1.0, rel=1e-15)  # NIST SP 811, B.8
    assert DisplayUnits(force="kgf").F(KGF_N) == pytest.approx(1.0, rel=1e-15)  # NIST SP 811
    assert DisplayUnits(length="mm").L(0.0254) == pytest.approx(25.4, rel=1e-15)
    assert shown.stiffness(LBF_N / INCH_M) == pytest.approx(1.0, rel=1e-14)
    assert shown.torque(LBF_N * INCH_M) == pytest.approx(1.0, rel=1e-14)
    assert shown.strong_B(0.1) == pytest.approx(1.0)  # 1 kG = 0.1 T (NIST SP 811, B.8)
    # the scene's own unit reads exactly as before --units existed: divided by its scale
    assert DisplayUnits(length="mm").L(0.0123) == 0.0123 / 1e-3


def test_one_syntax_any_order_any_subset():
    assert parse_units("gauss,lbf,in") == parse_units(" in , LBF, G ") == \
        DisplayUnits(field="gauss", force="lbf", length="in")
    assert parse_units("kgf", default_length="cm") == DisplayUnits("mT", "kgf", "cm")
    assert parse_units(None, default_length="in") == DisplayUnits("mT", "N", "in")
    for wrong, words in (("furlong", "'furlong' is not a display unit"),
                         ("in,mm", "two length units")):
        with pytest.raises(SceneError, match=words):
            parse_units(wrong)


# -- check ---------------------------------------------------------------------------------------

def test_check_prints_the_json_numbers_converted(tmp_path):
    code, out, err = in_pipe(["check", PLATE, "--units", IMPERIAL, "-o", "check.json"], tmp_path)
    assert code == 0, err
    summary = json.loads((tmp_path / "check.json").read_text())
    assert summary["length_unit"] == "mm"  # the file stays SI, lengths in the scene's unit
    lines = out.splitlines()
    assert lines[0].endswith("units mm, shown in in")
    header = lines[1].split()
    assert "in^3" in header and "kG" in header
    for part, row in zip(summary["parts"], lines[3:5]):
        cells = row.split()  # name, shape, grade, volume, mass, [m], |m|, Br, north
        _close(cells[3], part["volume_m3"] / INCH_M ** 3, FOUR_DIGITS)
        _close(cells[-2], part["remanence_T"] / GAUSS_T / 1e3)  # kG
    box = next(line for line in lines if line.startswith("bounding box:"))
    numbers = [float(v) for v in re.findall(r"-?\d+(?:\.\d*)?(?:e[-+]?\d+)?", box)]
    expected = np.r_[summary["bounding_box"]["min"], summary["bounding_box"]["max"]]
    assert numbers == pytest.approx(_mm_to_in(expected), rel=FOUR_DIGITS, abs=1e-4)
    spacing = re.search(r"spacing ([\d.]+) in", out).group(1)
    _close(spacing, _mm_to_in(summary["search_box"]["spacing"]))
    diameter = re.search(r"diameter ([\d.]+) in", out).group(1)
    _close(diameter, _mm_to_in(summary["probe"]["diameter"]))
    safety = summary["safety"]
    implant = re.search(r"\|B\| = ([\d.]+) G \(ICNIRP 2009\): reaches ([\d.]+) in from the "
                        r"nearest magnet, ([\d.]+) in", out)
    _close(implant.group(1), safety["implant_limit_T"] / GAUSS_T)
    _close(implant.group(2), _mm_to_in(safety["implant_distance_from_surface"]))
    _close(implant.group(3), _mm_to_in(safety["implant_radius"]))
    pinch = re.search(r"([\d.]+) lbf pinch level", out).group(1)
    _close(pinch, safety["pinch_force_N"] / LBF_N)
    package = re.search(r"package ([\d.]+) x ([\d.]+) x ([\d.]+) in", out)
    for printed, mm in zip(package.groups(), summary["shipping"]["package_size"]):
        _close(printed, _mm_to_in(mm))


def test_check_without_units_is_as_before(tmp_path):
    code, out, err = in_pipe(["check", PLATE], tmp_path)
    assert code == 0, err
    assert out.splitlines()[0].endswith("2 part(s), units mm")
    assert "Br T" in out and "0.5 mT (ICNIRP 2009)" in out and "N pinch level" in out


# -- traps ---------------------------------------------------------------------------------------

ROW = re.compile(r"^\s*(\d+)\s+(\d+)\s+(stable|marginal|saddle|unstable)\s+(\S+, \S+, \S+)\s+"
                 r"(\S+)\s+(\S+)\s+(\S+)\s+(\S+)\s+(.*)$")


def _family_rows(out):
    return {int(m.group(1)): m.groups() for m in map(ROW.match, out.splitlines()) if m}


def test_traps_table_is_the_json_converted(tmp_path):
    code, out, err = in_pipe(["traps", PAIR, "--units", IMPERIAL, "-o", "traps.json"], tmp_path)
    assert code == 0, err
    result = json.loads((tmp_path / "traps.json").read_text())
    assert result["length_unit"] == "mm"
    assert "position of one member (in)" in out and "escape force lbf" in out and "|B| G" in out
    rows = _family_rows(out)
    assert len(rows) == len(result["families"]) >= 2
    for family in result["families"]:
        eq = result["equilibria"][family["representative"] - 1]  # numbered from 1
        row = rows[family["number"]]
        position = [float(v) for v in row[3].split(", ")]
        assert position == pytest.approx(_mm_to_in(eq["position"]), rel=FOUR_DIGITS, abs=1e-4)
        if family["escape_force_N"] is not None:
            _close(row[4], family["escape_force_N"]["min"] / LBF_N)
        _close(row[7], np.linalg.norm(eq["B_T"]) / GAUSS_T)
    stiff = next(e for e in result["equilibria"] if e["stiffness_N_per_m"])
    printed = re.search(rf"#{stiff['family']} (-?[\d.e+-]+) along", out).group(1)
    _close(printed, stiff["stiffness_N_per_m"][0] / LBF_N * INCH_M)
    assert "Stiffness (lbf/in)" in out
    # the headline in the reader's units, the JSON's in the scene's
    stable = next(e for e in result["equilibria"] if e["class"] == "stable")
    where = ", ".join(f"{v:.3f}" for v in _mm_to_in(stable["position"])).replace("0.000", "0")
    assert f"at ({where}) in" in out.splitlines()[0]
    assert f"{stable['escape_force_N'] / LBF_N:.3g} lbf" in out.splitlines()[0]
    assert ") mm," in result["headline"] and ") in" not in result["headline"]


def test_traps_margin_warning_in_pounds_force(tmp_path):
    code, out, err = in_pipe(["traps", GAUGE, "--set", "gap=4", "--units", "lbf,in",
                              "-o", "traps.json"], tmp_path)
    assert code == 0, err
    result = json.loads((tmp_path / "traps.json").read_text())
    warning = next(line for line in out.splitlines() if line.startswith("Warning"))
    held, weight = (float(v) for v in re.findall(r"([\d.e+-]+) lbf", warning))
    family = next(f for f in result["families"] if f["class"] == "stable")
    _close(str(held), family["escape_force_N"]["min"] / LBF_N)
    assert "mN" not in warning and " in is held" in warning
    assert "1.07 x the probe's weight" in warning  # the ratio does not depend on the unit
    assert result["warnings"][0].count(" N") + result["warnings"][0].count("mN") >= 1


def test_traps_table_says_ring_directions_in_plain_words(tmp_path):
    code, out, err = in_pipe(["traps", PLATE], tmp_path)
    assert code == 0, err
    for clumsy in ("along around", "along radial", "along along"):
        assert clumsy not in out
    stiffness = out[out.index("Stiffness (N/m)"):].splitlines()
    # a circle's stiffness around the ring is zero but for rounding: printed as 0
    ring = next(line for line in stiffness if line.startswith("  #1 "))
    assert ring.startswith("  #1 0 around the ring; ") and " radially, " in ring
    assert any("along the axis" in line for line in stiffness)
    # the rule check says nothing around a ring, where the symmetry fixes the stiffness
    rules = out[out.index("Finite-size rule error"):].splitlines()
    ring_rule = next(line for line in rules if line.startswith("  #1 "))
    assert "around the ring" not in ring_rule and " N/m radially; energy to " in ring_rule


def test_traps_at_a_terminal_with_units(tmp_path):
    code, screen = at_terminal(["traps", PAIR, "--units", "kgf,in"], tmp_path)
    assert code == 0 and "Traceback" not in screen, screen[-2000:]
    assert "escape force kgf" in screen and "Stiffness (kgf/in)" in screen


# -- hold ----------------------------------------------------------------------------------------

def test_hold_table_is_the_json_converted(tmp_path):
    code, out, err = in_pipe(["hold", PLATE, "--gap", "0..2@3", "--friction", "0.2",
                              "--units", IMPERIAL, "-o", "hold.json", "--plot", "pull.png"],
                             tmp_path)
    assert code == 0, err
    payload = json.loads((tmp_path / "hold.json").read_text())
    assert [r["gap"] for r in payload["rows"]] == [0.0, 1.0, 2.0]  # mm, as the scene
    lines = out.splitlines()
    header = next(line for line in lines if line.lstrip().startswith("gap_in"))
    assert header.split() == ["gap_in", "pull_lbf", "slip_lbf", "peel_lbf_in", "plate_B_kG"]
    table = lines[lines.index(header) + 1: lines.index(header) + 4]
    for row, expected in zip(table, payload["rows"]):
        gap, pull, slip, peel, plate_B = row.split()[:5]
        _close(gap, _mm_to_in(expected["gap"]), FOUR_DIGITS)
        _close(pull, expected["pull_N"] / LBF_N, FOUR_DIGITS)
        _close(slip, expected["slip_N"] / LBF_N, FOUR_DIGITS)
        if expected["peel_torque_N_m"] is not None:
            _close(peel, expected["peel_torque_N_m"] / (LBF_N * INCH_M), FOUR_DIGITS)
        _close(plate_B, expected["plate_flux_density_T"] / GAUSS_T / 1e3)
    assert (tmp_path / "pull.png").stat().st_size > 1000


def test_hold_plot_is_drawn_in_display_units(tmp_path):
    from trapscape.physics.analysis.run import load_analysis
    from trapscape.viewers.commands.hold import pull_figure

    analysis = load_analysis(PLATE, [])
    gaps_m = np.array([0.0, 1e-3, 2e-3])
    result = analysis.hold(gaps_m, friction=0.2)
    figure = pull_figure(analysis.scene, parse_units("lbf,in"), result, 0.2)
    axes = figure.axes[0]
    pull, slip = axes.lines[:2]
    assert pull.get_xdata() == pytest.approx(gaps_m / INCH_M)
    assert pull.get_ydata() == pytest.approx([r.pull / LBF_N for r in result.rows])
    assert slip.get_ydata() == pytest.approx([r.slip / LBF_N for r in result.rows])
    assert axes.get_xlabel() == "gap (in)" and axes.get_ylabel() == "force (lbf)"


# -- field ---------------------------------------------------------------------------------------

def test_field_plot_in_gauss_and_inches_csv_stays_si(tmp_path):
    (tmp_path / "matplotlibrc").write_text("svg.fonttype: none\n")  # text kept as text
    code, out, err = in_pipe(["field", GAUGE, "--line", "0,0,-20", "0,0,20", "21",
                              "--units", "gauss,in", "-o", "axis.csv", "--plot", "axis.svg"],
                             tmp_path)
    assert code == 0, err
    with open(tmp_path / "axis.csv", newline="") as handle:
        header = next(csv.reader(handle))
    assert header[:4] == ["x_mm", "y_mm", "z_mm", "Bx_T"]  # the CSV stays SI
    svg = (tmp_path / "axis.svg").read_text()
    assert "distance from the line's start (in)" in svg and "B (G)" in svg
    assert "(0, 0, -0.7874) in" in svg  # the line's start, -20 mm


def test_field_figures_draw_the_csv_numbers_converted(tmp_path):
    from trapscape.physics.analysis.run import load_analysis
    from trapscape.viewers.commands.field import _section_points
    from trapscape.viewers.field_plot import line_figure, section_figure

    analysis = load_analysis(GAUGE, [])
    scene = analysis.scene
    start, stop = np.array([0.0, 0.0, -20.0]), np.array([0.0, 0.0, 20.0])
    t = np.linspace(0.0, 1.0, 11)
    points = (start + t[:, None] * (stop - start)) * scene.unit_scale
    values = analysis.field_at(points)
    units = parse_units("gauss,in")
    figure = line_figure(scene, values, ("line", t * 40.0, start, stop), units)
    norm = figure.axes[0].lines[3]
    assert norm.get_xdata() == pytest.approx(_mm_to_in(t * 40.0))
    assert norm.get_ydata() == pytest.approx(np.linalg.norm(values.B, axis=1) / GAUSS_T)
    points, layout = _section_points(scene, "z=0", 12)
    values = analysis.field_at(points)
    figure = section_figure(scene, points, values, layout, units)
    axes = figure.axes[0]
    assert axes.get_xlabel() == "x (in)"
    mesh = axes.collections[0]
    shown = np.asarray(mesh.get_array()).ravel()
    air = np.asarray(values.inside_magnet).ravel() < 0
    expected = np.linalg.norm(values.B, axis=1) / GAUSS_T
    assert shown[air].max() == pytest.approx(expected[air].max(), rel=1e-12)
    assert "G, log scale" in figure.axes[-1].get_ylabel()


# -- the polarity map and the report -------------------------------------------------------------

def test_polarity_map_axes_read_in_inches(tmp_path):
    from trapscape.physics.analysis.run import load_analysis
    from trapscape.viewers.layers.context import ViewContext
    from trapscape.viewers.polarity import draw_polarity_map
    import matplotlib.pyplot as plt

    ctx = ViewContext.of(load_analysis(GAUGE, []), traps=False)
    captured = {}
    real_close = plt.close
    plt.close = lambda figure=None: captured.setdefault("figure", figure)
    try:
        draw_polarity_map(ctx, str(tmp_path / "map.png"), size=(640, 480),
                          units=parse_units("in"))
    finally:
        plt.close = real_close
    axes = captured["figure"].axes[0]
    assert axes.get_xlabel() == "x (in)"
    ticks = axes.get_xticks()
    labels = [float(t.get_text()) for t in axes.get_xticklabels()]
    assert ticks == pytest.approx(np.array(labels) * INCH_M / MM_M)  # drawn in mm, read in in
    assert all(abs(v * 4 - round(v * 4)) < 1e-9 for v in labels)  # round values of the inch
    real_close(captured["figure"])


# -- a wrong unit --------------------------------------------------------------------------------

WRONG = {
    "check": ["check", PLATE],
    "traps": ["traps", PAIR],
    "field": ["field", GAUGE, "--line", "0,0,-1", "0,0,1", "3", "-o", "f.csv"],
    "hold": ["hold", PLATE, "--gap", "1"],
    "sweep": ["sweep", GAUGE, "--vary", "gap=2..3@2", "-o", "sweep"],
    "render": ["render", PAIR, "-o", "view.png"],
    "export": ["export", PAIR, "-o", "view.html"],
    "report": ["report", PAIR, "-o", "report"],
    "demo": ["demo", "-o", "demo"],
}


@pytest.mark.parametrize("command", list(WRONG))
def test_a_wrong_unit_is_one_sentence_and_exit_2(command, tmp_path):
    args = WRONG[command] + ["--units", "gauss,furlong"]
    code, out, err = in_pipe(args, tmp_path, timeout=60)
    assert code == 2 and out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("trapscape: --units gauss,furlong: 'furlong'")
    assert lines[0].endswith("e.g. --units gauss,lbf,in.")
    code, screen = at_terminal(args, tmp_path, timeout=60)
    assert code == 2 and "Traceback" not in screen and "'furlong' is not a display unit" in screen
    assert not any((tmp_path / name).exists() for name in ("report", "f.csv", "view.png",
                                                           "view.html", "sweep"))


def test_report_margin_warnings_in_the_readers_units():
    from trapscape.physics.analysis.run import load_analysis
    from trapscape.physics.analysis.trap_words import margin_warnings

    analysis = load_analysis(GAUGE, ["gap=4"])
    report = analysis.traps()
    shown = margin_warnings(report, analysis.scene, parse_units("kgf,in"))
    assert len(shown) == 1 and "mN" not in shown[0] and " in is held by " in shown[0]
    family = next(f for f in report.families if f.classification == "stable")
    held = float(re.search(r"held by ([\d.]+) kgf", shown[0]).group(1))
    assert held == pytest.approx(family.escape_force_N[0] / KGF_N, rel=THREE_DIGITS)
    # without units: as before, the scene's mm and newtons' prefixes (the JSON's warnings)
    assert margin_warnings(report, analysis.scene)[0] == \
        json.loads(json.dumps(analysis.traps_result()["warnings"]))[0]


def test_report_in_inches_pounds_force_and_gauss(tmp_path):
    pypdf = pytest.importorskip("pypdf")
    pytest.importorskip("weasyprint")
    code, out, err = in_pipe(["report", PAIR, "-o", "report", "--units", IMPERIAL, "--no-3d",
                              "--size", "480x360", "--resolution", "16", "--quiet"], tmp_path)
    assert code == 0, err
    code, _, err = in_pipe(["traps", PAIR, "-o", "traps.json", "--quiet"], tmp_path)
    assert code == 0, err
    result = json.loads((tmp_path / "traps.json").read_text())
    pages = [re.sub(r"\s+", " ", page.extract_text())
             for page in pypdf.PdfReader(str(tmp_path / "report" / "report.pdf")).pages]
    text = " ".join(pages)
    assert "Units in this report: G, lbf, in." in text
    stable = next(e for e in result["equilibria"] if e["class"] == "stable")
    assert f"{stable['escape_force_N'] / LBF_N:.3g} lbf" in pages[0]  # the headline
    assert " mN" not in text and " mm," not in text


def test_render_labels_and_polarity_map_in_the_readers_units(tmp_path):
    from trapscape.physics.analysis.run import load_analysis
    from trapscape.viewers.layers.context import ViewContext
    from trapscape.viewers.layers.markers import label_text, table_rows

    code, out, err = in_pipe(["render", PAIR, "--view", "polarity", "--units", "in",
                              "-o", "map.png", "--size", "480x360"], tmp_path)
    assert code == 0 and (tmp_path / "map.png").stat().st_size > 1000, err
    ctx = ViewContext.of(load_analysis(PAIR, []), grid_resolution=16,
                         display=parse_units(IMPERIAL))
    stable = next(e for e in ctx.equilibria if e.kind == "stable")
    label = label_text(stable, ctx.unit, True, ctx.size, ctx)
    x_in = float(re.search(r"\((-?[\d.]+),", label).group(1))
    assert x_in == pytest.approx(stable.position[0] * MM_M / INCH_M, abs=0.006)  # mm -> in
    held = float(re.search(r"holds ([\d.]+) lbf", label).group(1))
    assert held == pytest.approx(stable.escape_force_N / LBF_N, rel=THREE_DIGITS)
    assert all(" in" in row and "mm" not in row for row in table_rows(ctx))


def test_sweep_figure_draws_positions_and_stiffness_in_the_readers_units():
    """The sweep's rows (scene unit mm, stiffness N/m) drawn in inches and lbf/in: each plotted
    value is the row's converted with NIST SP 811's factors; the escape ratio has no unit."""
    from types import SimpleNamespace

    from trapscape.viewers.sweep_plot import sweep_figure

    rows = [{"trap": "1", "class": "stable", "rings": n, "coordinate": -1.25 * n,
             "position": [0.0, 0.0, -1.25 * n], "smallest_stiffness_N_per_m": 40.0 * n,
             "escape_over_weight": 3.0 * n} for n in (1, 2, 3)]
    figure = sweep_figure(rows, [], [SimpleNamespace(name="rings")], "mm",
                          parse_units(IMPERIAL), "stack")
    position, stiffness, escape = (axis.lines[0].get_ydata() for axis in figure.axes[:3])
    n = np.array([1, 2, 3])
    assert np.allclose(position, _mm_to_in(-1.25 * n), rtol=1e-14)
    assert np.allclose(stiffness, 40.0 * n / LBF_N * INCH_M, rtol=1e-14)  # N/m -> lbf/in
    assert np.allclose(escape, 3.0 * n, rtol=1e-14)
    assert "(in)" in figure.axes[0].get_ylabel() and "(lbf/in)" in figure.axes[1].get_ylabel()
