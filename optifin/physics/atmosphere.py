"""Ambient pressure at altitude by the U.S. Standard Atmosphere 1976.

U.S. Standard Atmosphere, 1976 (NOAA, NASA, USAF), identical to ISO 2533:1975 up to 32 km.
Geopotential altitude H = r0 z/(r0 + z); in each layer with lapse rate L_b,
P = P_b (T_b/(T_b + L_b (H - H_b)))^(g0 M/(R* L_b)), and P = P_b exp(-g0 M (H - H_b)/(R* T_b))
where L_b = 0. Layers up to 47 km are tabulated here (heat sinks work far below that).
"""

from __future__ import annotations

import numpy as np

from optifin.errors import ModelError

_G0 = 9.80665  # m/s², standard gravity
_M = 0.0289644  # kg/mol, mean molar mass of air (1976 standard)
_R_STAR = 8.31432  # J/(mol K), the 1976 standard's gas constant
_R0 = 6356766.0  # m, effective Earth radius for geopotential altitude
# layer base geopotential altitude [m], base temperature [K], lapse rate [K/m]
_H_BASE = np.array([0.0, 11000.0, 20000.0, 32000.0])
_T_BASE = np.array([288.15, 216.65, 216.65, 228.65])
_LAPSE = np.array([-0.0065, 0.0, 0.001, 0.0028])
_TOP = 47000.0


def _base_pressures() -> np.ndarray:
    p = [101325.0]
    for i in range(len(_H_BASE) - 1):
        p.append(_layer_pressure(_H_BASE[i + 1], i, p[i]))
    return np.array(p)


def _layer_pressure(h, i, p_base):
    dh = h - _H_BASE[i]
    if _LAPSE[i] == 0.0:
        return p_base * np.exp(-_G0 * _M * dh / (_R_STAR * _T_BASE[i]))
    ratio = _T_BASE[i] / (_T_BASE[i] + _LAPSE[i] * dh)
    return p_base * ratio ** (_G0 * _M / (_R_STAR * _LAPSE[i]))


_P_BASE = _base_pressures()


def pressure_at_altitude(altitude) -> np.ndarray:
    """Standard-atmosphere pressure [Pa] at geometric ``altitude`` [m] above sea level.

    Valid from -1000 m (below sea level, the first layer extended) to 47 km.
    """
    z = np.asarray(altitude, dtype=float)
    if np.any(z < -1000.0) or np.any(z > _TOP):
        raise ModelError(f"altitude outside -1000 m to {_TOP:.0f} m: {z}")
    h = _R0 * z / (_R0 + z)
    i = np.clip(np.searchsorted(_H_BASE, h, side="right") - 1, 0, len(_H_BASE) - 1)
    p = np.empty_like(h)
    for layer in range(len(_H_BASE)):  # a loop over four layers, not over designs
        mask = i == layer
        if np.any(mask):
            p[mask] = _layer_pressure(h[mask], layer, _P_BASE[layer])
    return p if p.ndim else float(p)


def temperature_at_altitude(altitude) -> np.ndarray:
    """Standard-atmosphere temperature [K] at geometric ``altitude`` [m]."""
    z = np.asarray(altitude, dtype=float)
    h = _R0 * z / (_R0 + z)
    i = np.clip(np.searchsorted(_H_BASE, h, side="right") - 1, 0, len(_H_BASE) - 1)
    t = _T_BASE[i] + _LAPSE[i] * (h - _H_BASE[i])
    return t if t.ndim else float(t)
