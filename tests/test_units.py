"""Units at the edge: pint with the trade units defined, wrong dimensions refused.

Check values: the definitions of the units (1 ft = 0.3048 m exactly, 1 in = 25.4 mm exactly,
1 inH2O = 249.08891 Pa as pint defines it at 39.2 °F), not our own output.
"""

import pytest

from optifin.errors import OptifinError, UnitError
from optifin.units import parse_quantity, to_si


@pytest.mark.parametrize(
    ("text", "kind", "expected"),
    [
        ("1.5 mm", "length", 1.5e-3),
        ("0.06 in", "length", 0.06 * 0.0254),  # 1 in = 25.4 mm exactly
        ("40 thou", "length", 40 * 0.0254e-3),
        ("200 LFM", "velocity", 200 * 0.3048 / 60),  # 1 ft = 0.3048 m exactly
        ("12 CFM", "volumetric_flow", 12 * 0.3048**3 / 60),
        ("12 cfm", "volumetric_flow", 12 * 0.3048**3 / 60),
        ("45 degC", "temperature", 318.15),
        ("45 °C", "temperature", 318.15),
        ("113 degF", "temperature", 318.15),
        ("30 degC", "temperature_difference", 30.0),
        ("0.1 inH2O", "pressure", 24.908891),  # pint's inch of water at 39.2 °F
        ("180 W/m/K", "thermal_conductivity", 180.0),
        ("0.2 K*cm^2/W", "area_thermal_resistance", 0.2e-4),
        ("13 USD/kg", "price_per_mass", 13.0),
    ],
)
def test_parse_trade_units(text, kind, expected):
    """Invariant: unit definitions (exact conversion factors named beside each case)."""
    assert to_si(text, kind) == pytest.approx(expected, rel=1e-9)


def test_wrong_dimension_names_the_quantity():
    with pytest.raises(UnitError, match=r"fins\.thickness: '3 kg' is not a length"):
        to_si("3 kg", "length", "fins.thickness")


def test_lowercase_cfm_is_not_a_length():
    """pint alone would read 'cfm' as centi-femto-metre; ours is a flow."""
    with pytest.raises(UnitError, match="not a length"):
        to_si("3 cfm", "length")


def test_mil_is_refused_with_a_hint():
    with pytest.raises(UnitError, match="thou"):
        to_si("40 mil", "length")


def test_bare_number_needs_a_unit():
    with pytest.raises(UnitError, match="has no unit"):
        parse_quantity(1.5, "length", "fin_thickness")


@pytest.mark.parametrize("bad", ["", "abc", "3 foo", "mm", None, [1, 2], True])
def test_garbage_is_our_error(bad):
    with pytest.raises(OptifinError):
        to_si(bad, "length")
