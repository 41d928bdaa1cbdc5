"""The scene's [report] table: the cover's document number, revision, author and logo."""
from __future__ import annotations

import pytest

from trapscape.scene.errors import SceneError
from trapscape.scene.loader import load_scene_text

BASE = 'units = "mm"\n[[magnet]]\nshape = "box"\nsize = [10, 10, 5]\ngrade = "N42"\n'


def test_report_table_is_read(tmp_path):
    (tmp_path / "logo.png").write_bytes(b"\x89PNG\r\n\x1a\n")
    scene = load_scene_text(BASE + '[report]\ndocument = "TS-0042"\nrevision = "B"\n'
                            'author = "A. Engineer"\nlogo = "logo.png"\n', base_dir=tmp_path)
    assert (scene.report.document, scene.report.revision, scene.report.author) == \
        ("TS-0042", "B", "A. Engineer")
    assert scene.report.logo == (tmp_path / "logo.png").resolve()


def test_without_report_table_nothing_is_set():
    report = load_scene_text(BASE).report
    assert report.document is None and report.logo is None


@pytest.mark.parametrize("table, words", [
    ('[report]\nlogo = "missing.png"\n', "does not exist"),
    ('[report]\nlogo = "notes.txt"\n', "not a PNG"),
    ('[report]\nauthr = "A"\n', "authr"),
    ('[report]\nrevision = 2\n', "revision"),
])
def test_report_mistakes_are_one_sentence(tmp_path, table, words):
    (tmp_path / "notes.txt").write_text("x")
    with pytest.raises(SceneError) as error:
        load_scene_text(BASE + table, base_dir=tmp_path)
    assert words in str(error.value) and "[report]" in str(error.value)
