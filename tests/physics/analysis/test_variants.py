"""A scene's [sweep] table: lists, ranges, the full grid and a seeded Latin hypercube."""
from __future__ import annotations

import shutil

import numpy as np
import pytest
from repo_paths import SAMPLES

from trapscape.physics.analysis.screen import layouts_from
from trapscape.physics.analysis.variants import variants
from trapscape.scene.errors import SceneError

PARAMS = {"gap": 3.0, "bead": 3.0, "block": 5.0}


def test_a_grid_is_every_combination_of_lists_and_ranges():
    result = variants({"gap": [2, 4], "bead": "2..4@3"}, PARAMS, "s.toml")
    assert len(result) == 6
    assert {(v["gap"], v["bead"]) for v in result} == {(g, b) for g in (2.0, 4.0)
                                                       for b in (2.0, 3.0, 4.0)}


def test_a_latin_hypercube_puts_one_variant_in_each_slice_of_every_range_and_repeats_by_seed():
    # the defining property (McKay, Beckman & Conover 1979): with n samples, each of the n equal
    # slices of every parameter's range holds exactly one
    table = {"gap": "2..6@2", "block": "4..8@2", "mode": "latin", "samples": 8, "seed": 7}
    result = variants(table, PARAMS, "s.toml")
    for name, (low, high) in (("gap", (2, 6)), ("block", (4, 8))):
        slices = np.floor((np.array([v[name] for v in result]) - low) / (high - low) * 8)
        assert sorted(slices.astype(int)) == list(range(8))
    assert variants(table, PARAMS, "s.toml") == result
    assert variants({**table, "seed": 8}, PARAMS, "s.toml") != result


def test_a_list_in_a_latin_hypercube_takes_its_own_values():
    table = {"gap": [2, 3, 5], "mode": "latin", "samples": 6, "seed": 1}
    assert {v["gap"] for v in variants(table, PARAMS, "s.toml")} <= {2.0, 3.0, 5.0}


@pytest.mark.parametrize("table, words", [
    ({"nope": [1]}, "not in the scene's"),
    ({"gap": "1..2"}, "START..STOP@COUNT"),
    ({"gap": []}, "list of numbers"),
    ({"gap": [1], "mode": "random"}, "grid or latin"),
    ({"gap": "1..2@2", "mode": "latin"}, "samples"),
])
def test_a_bad_sweep_table_is_one_sentence(table, words):
    with pytest.raises(SceneError, match=words.replace(".", r"\.")):
        variants(table, PARAMS, "s.toml")


def test_screen_takes_a_scenes_own_sweep_table(tmp_path):
    scene = tmp_path / "gauge.toml"
    shutil.copy(SAMPLES / "level_gauge.toml", scene)
    with scene.open("a") as handle:
        handle.write('\n[sweep]\ngap = [2, 4]\nbead = "2..3@2"\n')
    keys = [x.key for x in layouts_from([str(scene)])]
    assert keys == [f"{scene} gap=2.0 bead=2.0", f"{scene} gap=2.0 bead=3.0",
                    f"{scene} gap=4.0 bead=2.0", f"{scene} gap=4.0 bead=3.0"]
