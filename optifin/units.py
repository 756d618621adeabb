"""Unit-aware parsing at the edge: strings with units in, SI floats out.

Everything past this module works in SI (m, kg, s, K, W, Pa). The registry is pint's, with
the trade units it lacks: ``CFM`` (cubic feet per minute) and ``LFM`` (linear feet per
minute). pint has no such units and would read an undefined ``cfm`` as centi-femto-metre;
``mil`` is an angle in pint, so thousandths of an inch are spelled ``thou``.

Examples
--------
>>> to_si("200 LFM", "velocity")
1.016
>>> round(to_si("12 CFM", "volumetric_flow"), 8)
0.00566337
>>> to_si("45 degC", "temperature")
318.15
"""

from __future__ import annotations

import functools
import re
from typing import Any

from optifin.errors import UnitError

#: Quantity kinds: the SI unit every value of the kind is converted to.
SI_UNITS: dict[str, str] = {
    "length": "m",
    "area": "m**2",
    "mass": "kg",
    "time": "s",
    "temperature": "K",
    "temperature_difference": "K",
    "power": "W",
    "pressure": "Pa",
    "velocity": "m/s",
    "volumetric_flow": "m**3/s",
    "thermal_conductivity": "W/(m*K)",
    "heat_transfer_coefficient": "W/(m**2*K)",
    "thermal_resistance": "K/W",
    "area_thermal_resistance": "K*m**2/W",
    "density": "kg/m**3",
    "specific_heat": "J/(kg*K)",
    "price_per_mass": "1/kg",
    "price_per_length": "1/m",
    "price_per_volume": "1/m**3",
    "dimensionless": "",
    "angle": "rad",
    "altitude": "m",
}

#: Units written after a bare number in messages, for the user's benefit.
EXAMPLES: dict[str, str] = {
    "length": '"1.5 mm"',
    "temperature": '"45 degC"',
    "temperature_difference": '"30 K"',
    "power": '"25 W"',
    "pressure": '"101.3 kPa"',
    "velocity": '"2 m/s" or "400 LFM"',
    "volumetric_flow": '"12 CFM"',
    "thermal_conductivity": '"180 W/m/K"',
    "thermal_resistance": '"0.2 K/W"',
    "area_thermal_resistance": '"0.2 K*cm^2/W"',
    "area": '"4 cm^2"',
    "mass": '"0.5 kg"',
    "altitude": '"1500 m"',
}

_OFFSET_UNITS = re.compile(r"\b(deg\s*C|degC|celsius|deg\s*F|degF|fahrenheit|°C|°F)\b", re.I)


@functools.cache
def registry():
    """The pint registry, built once on first use (importing pint costs ~0.2 s)."""
    import pint

    ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=False)
    ureg.define("cubic_foot_per_minute = foot ** 3 / minute = CFM = cfm")
    ureg.define("linear_foot_per_minute = foot / minute = LFM = lfm")
    # currency-free price units: money is a bare number, so "USD/kg" means 1/kg
    ureg.define("USD = [] = usd")
    ureg.define("EUR = [] = eur")
    return ureg


_NUMBER = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")


def _quantity(text: str, what: str):
    ureg = registry()
    import pint

    cleaned = text.strip().replace("°C", "degC").replace("°F", "degF").replace("^", "**")
    match = _NUMBER.match(cleaned)
    if not match:
        raise UnitError(f"{what}: cannot read {text!r} as a number with a unit")
    magnitude, unit = float(match.group(1)), match.group(2) or "dimensionless"
    try:
        # number and unit apart, so that offset units ("45 degC") are not multiplied
        return ureg.Quantity(magnitude, unit)
    except (pint.errors.UndefinedUnitError, pint.errors.DefinitionSyntaxError) as exc:
        raise UnitError(f"{what}: cannot read {text!r} as a quantity ({exc})") from None
    except Exception as exc:  # pint raises assorted tokenizer errors on garbage
        raise UnitError(f"{what}: cannot read {text!r} as a quantity ({exc})") from None


def to_si(value: Any, kind: str, what: str | None = None) -> float:
    """Convert ``value`` (a string with units, or a number already in SI) to an SI float.

    Parameters
    ----------
    value
        ``"1.5 mm"``, ``"200 LFM"``, ``"45 degC"``, ... or a plain int/float, taken as SI
        (a bare number is accepted only for dimensionless kinds and for numbers that are
        already SI by the caller's contract).
    kind
        One of :data:`SI_UNITS`.
    what
        Name of the quantity for error messages (a YAML path, say).

    Raises
    ------
    UnitError
        When the string does not parse or has the wrong dimension.
    """
    what = what or kind
    if kind not in SI_UNITS:
        raise KeyError(f"unknown quantity kind {kind!r}")
    if isinstance(value, bool):
        raise UnitError(f"{what}: expected a quantity with units, found {value!r}")
    if isinstance(value, int | float):
        return float(value)
    if not isinstance(value, str):
        raise UnitError(
            f"{what}: expected a quantity such as {EXAMPLES.get(kind, kind)}, found {value!r}"
        )
    q = _quantity(value, what)
    target = SI_UNITS[kind]
    import pint

    if kind == "temperature_difference" and _OFFSET_UNITS.search(value):
        # "30 degC" as a difference means 30 K
        q = registry().Quantity(q.magnitude, "delta_" + str(q.units))
    if kind == "dimensionless" and q.dimensionless:
        return float(q.to("").magnitude)
    try:
        return float(q.to(target).magnitude)
    except pint.errors.DimensionalityError:
        expected = EXAMPLES.get(kind, target)
        if kind == "length" and re.search(r"\bmils?\b", value):
            expected += '; "mil" is an angle here, write thousandths of an inch as "thou"'
        raise UnitError(
            f"{what}: {value!r} is not a {kind.replace('_', ' ')} (expected e.g. {expected})"
        ) from None
    except pint.errors.OffsetUnitCalculusError:
        raise UnitError(f"{what}: cannot use {value!r} here") from None


def parse_quantity(value: Any, kind: str, what: str | None = None) -> float:
    """Like :func:`to_si`, but a bare number is an error unless the kind is dimensionless.

    Problem files must say their units, so ``thickness: 1.5`` is refused with a hint.
    """
    what = what or kind
    if kind != "dimensionless" and isinstance(value, int | float) and not isinstance(value, bool):
        raise UnitError(
            f"{what}: a bare number {value!r} has no unit; write it with units, "
            f"e.g. {EXAMPLES.get(kind, SI_UNITS[kind])}"
        )
    return to_si(value, kind, what)


def format_si(value: float, kind: str, unit: str) -> str:
    """Format an SI float in ``unit`` (``format_si(0.0015, "length", "mm") == "1.5 mm"``)."""
    q = registry().Quantity(value, SI_UNITS[kind])
    return f"{q.to(unit).magnitude:.6g} {unit}"
