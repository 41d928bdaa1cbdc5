"""The grade table and users' materials files."""
from __future__ import annotations

import pytest

from trapscape.scene.errors import SceneError
from trapscape.scene.grades import built_in_grades, find_grade
from trapscape.scene.loader import load_scene_text

MAGNET = '[[magnet]]\nshape = "box"\nsize = [1, 1, 1]\ngrade = "{grade}"\n'


def test_nominal_remanence_is_the_middle_of_the_range():
    for grade in built_in_grades().values():
        low, high = grade.remanence_range
        assert grade.remanence == pytest.approx((low + high) / 2, abs=1e-4)
        assert 0.2 < grade.remanence < 1.6 and grade.source


def test_families_and_variants_are_present():
    table = built_in_grades()
    for name in ("N35", "N42", "N52", "N55", "N42M", "N42H", "N42SH", "N38UH", "N35EH",
                 "SMCO5-YX20", "SM2CO17-YXG28", "YXG30", "Y30", "Y35", "C8", "BNP-10"):
        assert name in table
    # higher coercivity classes allow higher working temperatures (supplier practice, from memory)
    temps = [table[n].max_temperature for n in ("N38", "N38M", "N38H", "N38SH", "N38UH", "N38EH")]
    assert temps == sorted(temps) and len(set(temps)) == 6
    assert table["N42"].remanence == table["N42SH"].remanence


def test_lookup_is_case_insensitive_and_suggests():
    table = built_in_grades()
    assert find_grade("n42sh", table, "here").name == "N42SH"
    with pytest.raises(SceneError, match=r'unknown grade "N24".*did you mean'):
        find_grade("N24", table, "here")


def test_materials_file_adds_and_overrides_grades(tmp_path):
    (tmp_path / "mine.toml").write_text(
        '[grade.N42]\nsource = "our incoming inspection, lot 7"\nremanence = 1.27\n'
        '[grade.ACME-9]\nsource = "ACME datasheet rev B"\nremanence_range = [1.0, 1.1]\n'
        'density = 7400\n')
    text = 'units = "mm"\nmaterials = "mine.toml"\n' + MAGNET.format(grade="n42") + \
        MAGNET.format(grade="ACME-9").replace('shape', 'position = [5, 0, 0]\nshape')
    scene = load_scene_text(text, base_dir=tmp_path)
    assert scene.magnets[0].remanence == 1.27
    assert scene.magnets[1].remanence == pytest.approx(1.05)
    assert scene.magnets[1].density == 7400


@pytest.mark.parametrize("body, fragment", [
    ('[grade.X]\nremanence = 1.2\n', "'source' is missing"),
    ('[grade.X]\nsource = "s"\n', "exactly one of remanence"),
    ('[grade.X]\nsource = "s"\nremanence = 1200\n', "not millitesla"),
    ('[grade.X]\nsource = "s"\nremanence = 1.2\ncolour = "red"\n', "unknown key 'colour'"),
    ('[grades.X]\nsource = "s"\n', "unknown key 'grades'"),
])
def test_materials_file_errors(tmp_path, body, fragment):
    (tmp_path / "mine.toml").write_text(body)
    text = 'units = "mm"\nmaterials = "mine.toml"\n' + MAGNET.format(grade="X")
    with pytest.raises(SceneError, match=fragment):
        load_scene_text(text, base_dir=tmp_path)
