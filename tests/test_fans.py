"""Tests of optifin.fans: the bundled demo fan file and the errors of a bad fan file.

Each test says in its docstring which kind it is: published check value, invariant or
cross-method.
"""

from __future__ import annotations

import textwrap
from importlib import resources

import numpy as np
import pytest

from optifin.errors import DataError
from optifin.fans import Fan, bundled_path, load_fans
from optifin.physics.fan import FanCurve

CFM = 0.3048**3 / 60.0  # m^3/s; exact from the international foot (0.3048 m)
# Conventional inch of water: 0.0254 m x 1000 kg/m^3 x 9.80665 m/s^2 (standard gravity);
# NIST SP 811 lists "inch of water, conventional" as 2.490889e2 Pa [from memory].
IN_H2O = 0.0254 * 1000.0 * 9.80665

BUNDLED_TEXT = resources.files("optifin.data").joinpath("fans.yaml").read_text(encoding="utf-8")


# --- The bundled file ------------------------------------------------------------------------


def test_bundled_file_loads_with_every_size():
    """Invariant: 5 to 8 demo fans, the frame sizes 40, 60, 80, 92 and 120 mm all present,
    each a Fan with an SI curve named after its key, positive size and power."""
    fans = load_fans()
    assert 5 <= len(fans) <= 8
    sizes = {round(f.size * 1000) for f in fans.values()}
    assert {40, 60, 80, 92, 120} <= sizes
    for key, fan in fans.items():
        assert isinstance(fan, Fan) and isinstance(fan.curve, FanCurve)
        assert fan.key == key == fan.curve.name
        assert fan.size > 0 and 0 < fan.power < 20


def test_bundled_curves_are_monotone_from_shutoff_to_free_delivery():
    """Invariant: every bundled curve has 5-8 points, strictly increasing flow, pressure
    that never rises, shut-off at zero flow and free delivery at zero pressure."""
    for fan in load_fans().values():
        q, p = fan.curve.flow, fan.curve.pressure
        assert 5 <= q.size <= 8
        assert np.all(np.diff(q) > 0) and np.all(np.diff(p) <= 0)
        assert q[0] == 0 and p[-1] == 0 and np.all(p[:-1] > 0)


def test_bundled_magnitudes_are_plausible():
    """Invariant (common practice, no source; the ranges stated in the file's header): a
    40 mm fan 5-10 CFM free delivery and 20-40 Pa shut-off, a 120 mm fan 60-110 CFM and
    30-80 Pa; sizes in between lie between those."""
    for fan in load_fans().values():
        cfm, pa = fan.curve.free_delivery / CFM, fan.curve.shutoff_pressure
        size = round(fan.size * 1000)
        if size == 40:
            assert 5 <= cfm <= 10 and 20 <= pa <= 40, fan.key
        elif size == 120:
            assert 60 <= cfm <= 110 and 30 <= pa <= 80, fan.key
        else:
            assert 5 <= cfm <= 110 and 20 <= pa <= 80, fan.key


def test_bundled_units_convert_by_their_definitions():
    """Cross-method: the file's "0.12 inH2O" and "7.5 CFM" against the unit definitions
    written out here (conventional inch of water; cubic foot per minute from the
    international foot), and "36 m^3/h" = 0.01 m³/s."""
    fans = load_fans()
    small = fans["demo_40x10"].curve
    assert small.shutoff_pressure == pytest.approx(0.12 * IN_H2O, rel=1e-12)
    assert small.free_delivery == pytest.approx(7.5 * CFM, rel=1e-12)
    assert IN_H2O == pytest.approx(249.0889, rel=1e-6)
    assert fans["demo_60x25"].curve.free_delivery == pytest.approx(0.01, rel=1e-12)


def test_bundled_file_says_it_is_invented():
    """Invariant: the header tells readers the fans are invented demo data."""
    head = BUNDLED_TEXT.split("fans:")[0]
    assert "INVENTED DEMO DATA" in head and "NOT ANY VENDOR'S FAN" in head
    assert "common practice, no source" in head


def test_bundled_fans_are_cached_but_returned_fresh():
    """Invariant: the file is parsed once (same Fan objects), but each call gets its own
    dict, so a caller's change does not leak into the next call."""
    first = load_fans()
    first.pop("demo_40x10")
    second = load_fans()
    assert "demo_40x10" in second
    assert second["demo_80x25"] is load_fans()["demo_80x25"]


# --- A user file -----------------------------------------------------------------------------

GOOD = """\
fans:
  my_fan:
    name: My fan
    size: 50 mm
    power: 0.9 W
    curve:
      - {flow: 0 CFM, pressure: 30 Pa}
      - {flow: 5 CFM, pressure: 15 Pa}
      - {flow: 10 CFM, pressure: 0 Pa}
"""


def _write(tmp_path, text: str):
    path = tmp_path / "fans.yaml"
    path.write_text(textwrap.dedent(text), encoding="utf-8")
    return path


def test_user_file_loads_in_si(tmp_path):
    """Invariant: a user file of the same layout gives SI values."""
    fan = load_fans(_write(tmp_path, GOOD))["my_fan"]
    assert fan.size == pytest.approx(0.05) and fan.power == pytest.approx(0.9)
    np.testing.assert_allclose(fan.curve.flow, np.array([0, 5, 10]) * CFM, rtol=1e-12)
    np.testing.assert_allclose(fan.curve.pressure, [30, 15, 0])


BAD_FILES = {
    "bare number": (GOOD.replace("{flow: 5 CFM", "{flow: 5"), ".curve[1].flow", "bare number"),
    "wrong dimension": (
        GOOD.replace("pressure: 15 Pa", "pressure: 15 mm"),
        ".curve[1].pressure",
        "is not a pressure",
    ),
    "unknown unit": (
        GOOD.replace("power: 0.9 W", "power: 0.9 Wats"),
        ".power",
        "expected a power",
    ),
    "rising pressure": (
        GOOD.replace("pressure: 15 Pa", "pressure: 35 Pa"),
        ".curve",
        "must not increase",
    ),
    "no free delivery": (
        GOOD.replace("pressure: 0 Pa", "pressure: 2 Pa"),
        ".curve",
        "free delivery",
    ),
    "one point": (
        GOOD.split("      - {flow: 5")[0],
        ".curve",
        "at least 2 points",
    ),
    "missing power": (GOOD.replace("    power: 0.9 W\n", ""), ".power", "missing"),
    "unknown field": (GOOD.replace("    power:", "    noise: 20 dB\n    power:"), "", "unknown"),
    "negative size": (GOOD.replace("size: 50 mm", "size: -50 mm"), ".size", "must be > 0"),
    "point not a mapping": (
        GOOD.replace("- {flow: 5 CFM, pressure: 15 Pa}", "- 5 CFM"),
        ".curve[1]",
        "expected a point",
    ),
}


@pytest.mark.parametrize(("text", "field", "expected"), BAD_FILES.values(), ids=BAD_FILES.keys())
def test_bad_file_names_file_fan_field_and_expectation(tmp_path, text, field, expected):
    """Invariant: a bad entry raises DataError naming the file, the fan key, the field and
    what was expected."""
    path = _write(tmp_path, text)
    with pytest.raises(DataError) as info:
        load_fans(path)
    message = str(info.value)
    assert str(path) in message
    assert f"fans.my_fan{field}" in message
    assert expected in message


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("fans: [\n", "not valid YAML"),
        ("motors: {}\n", "`fans`"),
        ("fans: {}\n", "mapping of fan keys"),
        (GOOD + "extra: 1\n", "unknown top-level"),
    ],
)
def test_bad_file_structure_names_file(tmp_path, text, expected):
    """Invariant: a file that is not a fan document raises DataError naming the file."""
    path = _write(tmp_path, text)
    with pytest.raises(DataError, match=expected) as info:
        load_fans(path)
    assert str(path) in str(info.value)


def test_missing_file_names_file(tmp_path):
    """Invariant: a file that does not exist raises DataError naming it."""
    path = tmp_path / "none.yaml"
    with pytest.raises(DataError) as info:
        load_fans(path)
    assert str(path) in str(info.value)
    assert bundled_path().endswith("fans.yaml")
