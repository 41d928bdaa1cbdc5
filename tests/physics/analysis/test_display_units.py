"""Display units: the factors against their definitions, and --units read as a person types it."""
from __future__ import annotations

import pytest

from trapscape.physics.analysis.display_units import DisplayUnits, parse_units
from trapscape.scene.errors import SceneError


def test_factors_are_the_exact_definitions():
    units = DisplayUnits(field="gauss", force="lbf", length="in")
    # 1 G = 1e-4 T (CGS definition); 1 lbf = 4.4482216152605 N and 1 in = 25.4 mm exactly
    # (international yard and pound agreement, 1959; NIST SP 811, appendix B)
    assert units.B(1e-4) == pytest.approx(1.0, rel=1e-15)
    assert units.F(4.4482216152605) == pytest.approx(1.0, rel=1e-13)
    assert units.L(0.0254) == pytest.approx(1.0, rel=1e-15)
    # 1 kgf = 9.80665 N (standard gravity, CGPM 1901)
    assert DisplayUnits(force="kgf").F(9.80665) == pytest.approx(1.0, rel=1e-15)
    assert DisplayUnits().B(0.5e-3) == pytest.approx(0.5)


def test_units_are_read_in_any_order_and_case():
    assert parse_units("lbf, IN,Gauss") == DisplayUnits(field="gauss", force="lbf", length="in")
    assert parse_units(None, default_length="in") == DisplayUnits(length="in")
    # a cm or m scene keeps its own unit by default, as the tables of every command showed it
    assert parse_units("", default_length="cm") == DisplayUnits(length="cm")
    assert parse_units("kgf").force_text(9.80665) == "1 kgf"
    assert parse_units(None).force_text(0.00502) == "5 mN"


@pytest.mark.parametrize("text", ["tesla", "mT,gauss", "N,lbf", "mm,m"])
def test_a_wrong_unit_is_one_sentence(text):
    with pytest.raises(SceneError) as error:
        parse_units(text)
    message = str(error.value)
    assert message.count(".") >= 1 and "\n" not in message and "--units" in message
