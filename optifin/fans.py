"""The fan data file: fan curves with units read into SI :class:`FanCurve` objects.

The bundled ``optifin/data/fans.yaml`` holds invented demo fans for examples and tests (not
any vendor's fans). A user file has the same layout::

    fans:
      my_fan:
        name: My 80 mm fan
        size: 80 mm
        power: 1.5 W
        curve:
          - {flow: 0 CFM, pressure: 0.12 inH2O}
          - ...
          - {flow: 35 CFM, pressure: 0 inH2O}

Every value must carry its unit. This module is the edge where the file is read; the
curves it returns are validated by :func:`optifin.physics.fan.fan_curve`.
"""

from __future__ import annotations

import functools
from collections.abc import Mapping
from dataclasses import dataclass
from importlib import resources
from pathlib import Path
from typing import Any

import yaml

from optifin.errors import DataError, ModelError, UnitError
from optifin.physics.fan import FanCurve, fan_curve
from optifin.units import parse_quantity

__all__ = ["FAN_FIELDS", "POINT_FIELDS", "Fan", "bundled_path", "load_fans", "parse_fans"]

#: Fields of a fan entry and the quantity kind of each (``None``: plain text or a table).
FAN_FIELDS: dict[str, str | None] = {
    "name": None,
    "size": "length",
    "power": "power",
    "curve": None,
}
#: Fields of one curve point and their quantity kinds.
POINT_FIELDS: dict[str, str] = {"flow": "volumetric_flow", "pressure": "pressure"}
_EXPECTED = {
    "size": 'a length such as "80 mm"',
    "power": 'a power such as "1.5 W"',
    "flow": 'a volumetric flow such as "12 CFM" or "20 m^3/h"',
    "pressure": 'a pressure such as "0.12 inH2O" or "30 Pa"',
}
BUNDLED = "fans.yaml"


@dataclass(frozen=True)
class Fan:
    """One fan of a fan file: its curve and the data-sheet facts around it.

    Attributes
    ----------
    key : str
        The fan's key in the file (what a problem file names under ``fan: model:``).
    name : str
        A label.
    size : float
        Frame size [m].
    power : float
        Electrical input power [W].
    curve : FanCurve
        Static pressure against volumetric flow, SI.
    """

    key: str
    name: str
    size: float
    power: float
    curve: FanCurve


def bundled_path() -> str:
    """Where the bundled fan file lives (for messages)."""
    return str(resources.files("optifin.data").joinpath(BUNDLED))


def _quantity(value: Any, kind: str, where: str, field: str) -> float:
    """``value`` in SI; a :class:`DataError` naming ``where`` and what was expected."""
    if isinstance(value, int | float) and not isinstance(value, bool):
        raise DataError(
            f"{where}: expected {_EXPECTED[field]} with its unit, found the bare number {value!r}"
        )
    if not isinstance(value, str):
        raise DataError(f"{where}: expected {_EXPECTED[field]}, found {value!r}")
    try:
        si = parse_quantity(value, kind, where)
    except UnitError as exc:
        hint = "" if "expected" in str(exc) else f" (expected {_EXPECTED[field]})"
        raise DataError(f"{exc}{hint}") from None
    return si


def _parse_fan(key: Any, entry: Any, source: str) -> Fan:
    path = f"{source}: fans.{key}"
    if not isinstance(key, str) or not key:
        raise DataError(f"{source}: fans: a fan key must be a non-empty text, found {key!r}")
    if not isinstance(entry, Mapping):
        raise DataError(f"{path}: expected a mapping with {', '.join(FAN_FIELDS)}, found {entry!r}")
    unknown = sorted(set(map(str, entry)) - set(FAN_FIELDS))
    if unknown:
        raise DataError(f"{path}: unknown field(s) {unknown} (known: {', '.join(FAN_FIELDS)})")
    for name in FAN_FIELDS:
        if name not in entry:
            raise DataError(f"{path}.{name}: missing")
    name = entry["name"]
    if not isinstance(name, str) or not name.strip():
        raise DataError(f"{path}.name: expected a non-empty text, found {name!r}")
    size = _quantity(entry["size"], "length", f"{path}.size", "size")
    power = _quantity(entry["power"], "power", f"{path}.power", "power")
    for field, value in (("size", size), ("power", power)):
        if not value > 0:
            raise DataError(f"{path}.{field}: must be > 0, found {entry[field]!r}")
    points = entry["curve"]
    if not isinstance(points, list) or len(points) < 2:
        raise DataError(
            f"{path}.curve: expected a list of at least 2 points {{flow, pressure}}, "
            f"found {points!r}"
        )
    flows, pressures = [], []
    for i, point in enumerate(points):
        where = f"{path}.curve[{i}]"
        if not isinstance(point, Mapping) or set(map(str, point)) != set(POINT_FIELDS):
            raise DataError(
                f"{where}: expected a point {{flow: ..., pressure: ...}}, found {point!r}"
            )
        flows.append(_quantity(point["flow"], "volumetric_flow", f"{where}.flow", "flow"))
        pressures.append(_quantity(point["pressure"], "pressure", f"{where}.pressure", "pressure"))
    try:
        curve = fan_curve(flows, pressures, name=key)
    except ModelError as exc:
        raise DataError(f"{path}.curve: {exc}") from None
    return Fan(key=key, name=name.strip(), size=size, power=power, curve=curve)


def parse_fans(document: Any, source: str = "<fans>") -> dict[str, Fan]:
    """The fans of a parsed fan document, keyed by fan key.

    Parameters
    ----------
    document
        The YAML document as Python objects (a mapping with one key, ``fans``).
    source
        The file name, put at the head of every error message.

    Raises
    ------
    DataError
        Naming the file, the fan key, the field and what was expected.
    """
    if not isinstance(document, Mapping) or "fans" not in document:
        raise DataError(f"{source}: expected a mapping with the key `fans`, found {document!r}")
    unknown = sorted(set(map(str, document)) - {"fans"})
    if unknown:
        raise DataError(f"{source}: unknown top-level key(s) {unknown} (known: fans)")
    fans = document["fans"]
    if not isinstance(fans, Mapping) or not fans:
        raise DataError(f"{source}: fans: expected a mapping of fan keys to fans, found {fans!r}")
    return {key: _parse_fan(key, entry, source) for key, entry in fans.items()}


def _read(path: Path, source: str) -> Any:
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as exc:
        raise DataError(f"{source}: cannot read the fan file ({exc.strerror or exc})") from None
    try:
        return yaml.safe_load(text)
    except yaml.YAMLError as exc:
        raise DataError(f"{source}: not valid YAML ({exc})") from None


@functools.cache
def _bundled() -> dict[str, Fan]:
    source = bundled_path()
    try:
        text = resources.files("optifin.data").joinpath(BUNDLED).read_text(encoding="utf-8")
    except OSError as exc:  # a broken installation
        raise DataError(f"{source}: cannot read the fan file ({exc})") from None
    try:
        document = yaml.safe_load(text)
    except yaml.YAMLError as exc:
        raise DataError(f"{source}: not valid YAML ({exc})") from None
    return parse_fans(document, source)


def load_fans(path: str | Path | None = None) -> dict[str, Fan]:
    """The fans of a fan file: the bundled demo fans by default (read once and cached).

    Parameters
    ----------
    path
        A fan file of the bundled file's layout; ``None`` for the bundled file.

    Returns
    -------
    dict[str, Fan]
        Fan key to :class:`Fan`, in file order (a fresh dict; the fans are immutable).

    Raises
    ------
    DataError
        For a file that cannot be read or parsed, or an entry that is not valid; the message
        names the file, the fan key, the field and what was expected.
    """
    if path is None:
        return dict(_bundled())
    path = Path(path)
    return parse_fans(_read(path, str(path)), str(path))
