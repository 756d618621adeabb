"""Properties of dry air as functions of temperature and pressure.

Values come from CoolProp's reference equation of state for air (Lemmon, Jacobsen,
Penoncello & Friend, J. Phys. Chem. Ref. Data 29 (2000) 331, doi:10.1063/1.1285884) and its
transport correlations (Lemmon & Jacobsen, Int. J. Thermophys. 25 (2004) 21,
doi:10.1023/B:IJOT.0000022327.04529.f3). CoolProp is imported on first use only (it takes
1.5-2 s), evaluated once per pressure on a 1 K grid and then interpolated linearly, so one
call serves a million designs. The interpolation error is below 1e-5 relative (density, the
most curved, varies as 1/T: the linear-interpolation error is about (ΔT/T)²/4).

Because importing CoolProp takes seconds, a table once computed is kept in the user's cache
folder (``$XDG_CACHE_HOME/optifin`` or ``~/.cache/optifin``), keyed by pressure and CoolProp
version; set ``OPTIFIN_NO_CACHE=1`` to always compute afresh.
"""

from __future__ import annotations

import functools
import os
from dataclasses import dataclass
from importlib import metadata
from pathlib import Path

import numpy as np

from optifin.errors import ModelError

#: Temperature range of the tables [K]. CoolProp's air model is valid 59.75-2000 K; heat
#: sinks in air live well inside 200-700 K.
T_MIN = 200.0
T_MAX = 700.0
_STEP = 1.0


@dataclass(frozen=True)
class AirProperties:
    """Air properties at given temperatures (arrays broadcast like the input)."""

    temperature: np.ndarray  #: [K]
    density: np.ndarray  #: ρ [kg/m³]
    specific_heat: np.ndarray  #: c_p [J/(kg·K)]
    viscosity: np.ndarray  #: μ [Pa·s]
    conductivity: np.ndarray  #: k [W/(m·K)]
    prandtl: np.ndarray  #: Pr [-]
    expansion: np.ndarray  #: isobaric expansion coefficient β [1/K]

    @property
    def kinematic_viscosity(self) -> np.ndarray:
        """ν = μ/ρ [m²/s]."""
        return self.viscosity / self.density


_KEYS = ("D", "C", "V", "L", "Prandtl", "isobaric_expansion_coefficient")


def _cache_file(pressure_pa: float) -> Path | None:
    if os.environ.get("OPTIFIN_NO_CACHE"):
        return None
    try:
        version = metadata.version("CoolProp")
    except metadata.PackageNotFoundError:
        return None
    root = Path(os.environ.get("XDG_CACHE_HOME") or Path.home() / ".cache") / "optifin"
    return root / f"air-coolprop{version}-{pressure_pa:.1f}Pa-{T_MIN:g}-{T_MAX:g}K.npy"


@functools.lru_cache(maxsize=16)
def _table(pressure_pa: float) -> tuple[np.ndarray, ...]:
    t = np.arange(T_MIN, T_MAX + _STEP / 2, _STEP)
    path = _cache_file(pressure_pa)
    stored = None
    if path is not None and path.exists():
        try:
            stored = np.load(path, allow_pickle=False)
        except (OSError, ValueError):
            stored = None
    if stored is not None and stored.shape == (len(_KEYS), t.size):
        columns = tuple(np.array(row) for row in stored)
    else:
        columns = _coolprop_columns(t, pressure_pa)
        if path is not None:
            try:
                path.parent.mkdir(parents=True, exist_ok=True)
                tmp = path.with_suffix(f".{os.getpid()}.tmp.npy")
                np.save(tmp, np.vstack(columns), allow_pickle=False)
                tmp.replace(path)
            except OSError:
                pass  # a cache is a convenience; an unwritable home is not an error
    for col in (t, *columns):
        col.setflags(write=False)
    return (t, *columns)


def _coolprop_columns(t: np.ndarray, pressure_pa: float) -> tuple[np.ndarray, ...]:
    from CoolProp.CoolProp import PropsSI  # lazy: importing CoolProp costs 1.5-4 s

    p = np.full_like(t, pressure_pa)
    columns = tuple(np.asarray(PropsSI(key, "T", t, "P", p, "Air"), dtype=float) for key in _KEYS)
    for key, col in zip(_KEYS, columns, strict=True):
        if not np.all(np.isfinite(col)):
            raise ModelError(f"CoolProp returned non-finite air {key} at {pressure_pa} Pa")
    return columns


def air_properties(temperature, pressure: float = 101325.0) -> AirProperties:
    """Dry-air properties at ``temperature`` [K] (any array shape) and ``pressure`` [Pa].

    Parameters
    ----------
    temperature : array_like
        Air temperature [K], within 200-700 K.
    pressure : float
        Absolute pressure [Pa], one value per call (one operating condition), 10-200 kPa.

    Raises
    ------
    ModelError
        For temperatures outside the table or a pressure outside 10-200 kPa.
    """
    pressure = float(pressure)
    if not 10e3 <= pressure <= 200e3:
        raise ModelError(f"air pressure {pressure:g} Pa is outside 10-200 kPa")
    temperature = np.asarray(temperature, dtype=float)
    finite = temperature[np.isfinite(temperature)]
    if finite.size and (finite.min() < T_MIN or finite.max() > T_MAX):
        raise ModelError(
            f"air temperature {finite.min():.1f}-{finite.max():.1f} K is outside "
            f"the property table {T_MIN:.0f}-{T_MAX:.0f} K"
        )
    grid, *columns = _table(round(pressure, 1))
    values = [np.interp(temperature, grid, col) for col in columns]
    return AirProperties(temperature, *values)
