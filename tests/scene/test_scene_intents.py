"""magnetization = "axial" | "diametral" | "thickness" (and "-..." reversed) | "radial-out" |
"radial-in": the north each shape gives, and the one-sentence errors."""
from __future__ import annotations

import numpy as np
import pytest
import trimesh

from trapscape.scene.errors import SceneError
from trapscape.scene.loader import load_scene_text
from trapscape.scene.patterns import rotation_from_degrees


def north(shape, size, word, extra=""):
    scene = load_scene_text(f'units = "mm"\n[[magnet]]\nshape = "{shape}"\nsize = {size}\n'
                            f'grade = "N42"\nmagnetization = "{word}"\n{extra}')
    magnet = scene.magnets[0]
    return magnet.north_world, magnet.radial


@pytest.mark.parametrize("shape, size, word, expected", [
    ("cylinder", "[10, 5]", "axial", [0, 0, 1]),
    ("cylinder", "[10, 5]", "-axial", [0, 0, -1]),
    ("cylinder", "[10, 5]", "diametral", [1, 0, 0]),
    ("cylinder", "[10, 5]", "thickness", [0, 0, 1]),  # a disc is thinnest along its axis
    ("cylinder", "[4, 10]", "thickness", [1, 0, 0]),  # a rod across its diameter
    ("ring", "[20, 10, 5]", "axial", [0, 0, 1]),
    ("box", "[10, 4, 6]", "thickness", [0, 1, 0]),
    ("box", "[10, 4, 6]", "-thickness", [0, -1, 0]),
    ("sphere", "8", "diametral", [0, 0, 1]),
])
def test_the_intent_gives_the_shapes_direction(shape, size, word, expected):
    found, radial = north(shape, size, word)
    assert radial is None and found == pytest.approx(expected, abs=1e-15)


def test_the_intent_turns_with_the_part():
    found, _ = north("cylinder", "[10, 5]", "axial", "rotation = [30, 0, 45]\n")
    assert found == pytest.approx(rotation_from_degrees([30, 0, 45])[:, 2], abs=1e-15)


def test_radial_intents_are_the_radial_words():
    assert north("ring", "[20, 10, 5]", "radial-in")[1] == "radial-in"


def test_a_mesh_finds_its_axis_from_its_principal_axes(tmp_path):
    rod = trimesh.creation.cylinder(radius=2, height=20, sections=48)
    turn = rotation_from_degrees([0, 50, 10])
    rod.vertices = rod.vertices @ turn.T
    rod.export(tmp_path / "rod.stl")
    text = ('units = "mm"\n[[magnet]]\nshape = "mesh"\nfile = "rod.stl"\ngrade = "N42"\n'
            'magnetization = "axial"\n')
    magnet = load_scene_text(text, base_dir=tmp_path).magnets[0]
    axis = turn[:, 2] if turn[np.argmax(np.abs(turn[:, 2])), 2] > 0 else -turn[:, 2]
    assert magnet.north_world == pytest.approx(axis, abs=1e-6)


@pytest.mark.parametrize("shape, size, entry, words", [
    ("box", "[5, 5, 5]", 'magnetization = "thickness"', "no single thickness direction"),
    ("box", "[10, 4, 6]", 'magnetization = "axial"', "no single axial direction"),
    ("box", "[10, 4, 6]", 'magnetization = "axil"', 'did you mean "axial"'),
    ("box", "[10, 4, 6]", 'magnetization = "axial"\nnorth = "+z"', "both north and"),
    ("box", "[10, 4, 6]", 'magnetization = "radial-out"', "rings and arcs only"),
])
def test_a_wrong_intent_is_one_sentence(shape, size, entry, words):
    with pytest.raises(SceneError, match=words) as error:
        load_scene_text(f'units = "mm"\n[[magnet]]\nshape = "{shape}"\nsize = {size}\n'
                        f'grade = "N42"\n{entry}\n')
    assert "\n" not in str(error.value)
