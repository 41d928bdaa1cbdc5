"""`trapscape report`: the report of every sample builds; its PDF has one page per section (the
level gauge's fits each on one) and its text holds the headline sentence and the cautions; a
broken scene or a wrong unit is one sentence and exit code 2."""
from __future__ import annotations

import re

import pytest
from repo_paths import SAMPLES, sample_scenes

from trapscape.viewers.render import prefer_egl

prefer_egl()

from trapscape.physics.analysis.display_units import parse_units  # noqa: E402
from trapscape.physics.analysis.run import load_analysis  # noqa: E402
from trapscape.physics.analysis.trap_words import headline_sentence  # noqa: E402
from trapscape.physics.safety.cautions import CAUTIONS  # noqa: E402
from trapscape.viewers.cli import main  # noqa: E402

pytest.importorskip("weasyprint", reason="the report extra is not installed "
                    "(pip install -e '.[report]')")
pypdf = pytest.importorskip("pypdf", reason="pypdf (in the test extra) is not installed")

from trapscape.viewers.report.build import write_report  # noqa: E402
from trapscape.viewers.report.pictures import SMALL  # noqa: E402

HEADINGS = ("The answer", "The assembly and its traps", "Polarity and trap families",
            "Energy and force", "Safety, handling and shipping", "What these figures rest on")


def flat(text: str) -> str:
    return re.sub(r"\s+", " ", text).strip()


def pdf_pages(path) -> list:
    return [flat(page.extract_text()) for page in pypdf.PdfReader(str(path)).pages]


@pytest.mark.parametrize("scene", sample_scenes(), ids=lambda p: p.stem)
def test_the_report_of_every_sample_builds(scene, tmp_path):
    analysis = load_analysis(scene)
    written = write_report(analysis, tmp_path, parse_units(None, analysis.scene.units),
                           sizes=SMALL, interactive=False, grid_resolution=16)
    pages = pdf_pages(written["report.pdf"])
    # each section starts a page, in order
    starts = [next(i for i, page in enumerate(pages) if heading in page[:400])
              for heading in HEADINGS]
    assert starts == sorted(starts) and len(set(starts)) == len(HEADINGS)
    text = " ".join(pages)
    assert flat(headline_sentence(analysis.traps(), analysis.scene)) in text
    for caution in CAUTIONS:
        assert flat(caution) in text
    html = written["report.html"].read_text(encoding="utf-8")
    assert "<iframe" not in html and "http://" not in html and "https://" not in html
    assert html.count("data:image/png;base64,") >= 4  # overview, section, polarity, a plot
    if scene.stem == "level_gauge":
        assert len(pages) == len(HEADINGS)  # each section fits on its page
        assert "rests on its guide line" in pages[0] and "dislodges it down" in pages[0]
    if analysis.scene.plates:
        assert (tmp_path / "pull.png").is_file()


def test_a_broken_scene_is_one_sentence(tmp_path, capsys):
    broken = tmp_path / "broken.toml"
    broken.write_text('units = "mm"\n[[magnet]]\nshape = "box"\nsize = [10, 10\n')
    assert main(["report", str(broken), "-o", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("trapscape:") and "broken.toml" in err[0]
    assert not (tmp_path / "out").exists()


@pytest.mark.parametrize("args, words", [
    (["--units", "tesla"], "--units"),
    (["--size", "10x10"], "--size"),
    (["--resolution", "4"], "--resolution"),
])
def test_wrong_options_are_said_before_any_work(tmp_path, capsys, args, words):
    code = main(["report", str(SAMPLES / "level_gauge.toml"), "-o", str(tmp_path / "out"), *args])
    assert code == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and words in err[0]
    assert not (tmp_path / "out").exists()


def test_an_output_that_is_a_file_is_refused(tmp_path, capsys):
    target = tmp_path / "taken"
    target.write_text("x")
    assert main(["report", str(SAMPLES / "level_gauge.toml"), "-o", str(target)]) == 2
    assert "is a file" in capsys.readouterr().err
