"""A whole plate-fin heat sink: physics composed into resistances, temperatures and flows.

Thermal path, from the device to the air (all per design, vectorised):

    device --R_interface--> base under the source --R_spreading + R_base--> fin roots
           --R_convection (fins with their efficiency, exposed base; radiation in parallel)--> air

``R_base = t_b/(k W L)`` is 1-D conduction through the base; ``R_spreading`` is the extra
resistance of a source smaller than the base; ``R_convection = 1/G`` with G the sink's
conductance referenced to the inlet (ambient) air temperature. The "base temperature" is the
mean temperature of the base over the source footprint (the hottest source where there are
several); the "source temperature" adds the interface material (the device case).
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from optifin.library import Library
from optifin.model.condition import Condition
from optifin.model.cost import mass_and_cost
from optifin.model.design import Designs
from optifin.model.geometry import BIT, NONEXISTENT, Geometry, derive, pair_lookup
from optifin.numerics import bracketed_root
from optifin.physics import (
    fins,
    forced_convection,
    natural_convection,
    pressure_drop,
    registry,
    spreading,
)
from optifin.physics import radiation as rad
from optifin.physics.air import T_MAX, air_properties

GRAVITY = 9.80665
RE_TRANSITION = 2300.0  # channel Reynolds number on D_h where the laminar models stop
SPREADING_CORRELATION = {
    "song_lee_au_1994": "spreading_song_lee_au_1994",
    "muzychka_2003": "flux_channel_influence_muzychka_2003",
}


@dataclass(frozen=True)
class _Solid:
    """Per-design solid properties looked up from the library."""

    k: np.ndarray  # fin and base conductivity [W/(m K)]
    emissivity: np.ndarray  # [-]
    joint: np.ndarray  # bond-line resistance of one fin [K/W] (0 for monolithic sinks)


def _solid(designs: Designs, g: Geometry, library: Library) -> _Solid:
    lib = library.array
    k = np.take(lib("conductivity"), designs.material)
    emissivity = pair_lookup(lib("emissivity"), designs.material, designs.finish)
    emissivity = np.fmax(emissivity, 0.0)  # a finish not offered (NaN): no radiation
    r_area = np.take(lib("joint_resistance"), designs.process)  # 0 for monolithic sinks
    groove = np.take(lib("groove_depth"), designs.process)
    # the bond line wets both groove walls and the groove bottom of each fin
    joint = r_area / (g.length * (g.t + 2 * groove))
    return _Solid(k=k, emissivity=emissivity, joint=joint)


def _fin_area(g: Geometry, tip: str) -> np.ndarray:
    """Area of one fin, both faces (and the tip through the corrected length) [m²]."""
    h_c = g.height + (g.t / 2 if tip == "corrected" else 0.0)
    return 2.0 * h_c * g.length


def _finned_conductance(h, g: Geometry, solid: _Solid, tip: str, count) -> tuple:
    """Conductance of ``count`` fins at coefficient h, with any bond line in series."""
    eta = fins.plate_fin_efficiency(h, solid.k, g.t, g.height, tip=tip)
    one = eta * h * _fin_area(g, tip)
    if np.any(solid.joint > 0):
        one = fins.conductance_with_root_resistance(one, solid.joint)
    return count * one, eta


# -- forced convection through a shrouded array ----------------------------------------------
@functools.lru_cache(maxsize=64)
def _inlet_air(temperature: float, pressure: float) -> tuple[float, ...]:
    """rho, c_p, k, nu, Pr of the inlet air (one condition: scalars, computed once)."""
    air = air_properties(temperature, pressure)
    return tuple(
        float(v)
        for v in (
            air.density,
            air.specific_heat,
            air.conductivity,
            air.kinematic_viscosity,
            air.prandtl,
        )
    )


def _forced(g: Geometry, solid: _Solid, cond: Condition) -> dict:
    rho, cp, k_air, nu, pr = _inlet_air(cond.ambient_temperature, cond.pressure)
    frontal = g.width * g.height
    flow = (
        cond.approach_velocity * frontal
        if cond.volumetric_flow is None
        else (np.full_like(g.width, cond.volumetric_flow))
    )
    # continuity: all of the flow passes the N-1 channels of b x H
    v_ch = flow / ((g.n - 1) * g.gap * g.height)
    capacity = rho * cp * flow  # m-dot c_p [W/K]
    re_star = forced_convection.channel_reynolds_star(v_ch, g.gap, g.length, nu)
    d_h = pressure_drop.hydraulic_diameter_rectangle(g.gap, g.height)
    re_dh = v_ch * d_h / nu

    method = cond.channel_heat_transfer
    if method == "teertstra_1999":
        inlet_ref = np.ones_like(re_dh, dtype=bool)
    elif method == "developed_laminar":
        inlet_ref = np.zeros_like(re_dh, dtype=bool)
    else:
        inlet_ref = re_dh < RE_TRANSITION
    # turbulent channels are few: evaluate their correlations on that subset only
    turbulent = np.flatnonzero(re_dh >= RE_TRANSITION)
    f_turb = np.zeros_like(re_dh)  # Petukhov's f where turbulent (0: the laminar f rules)
    f_turb[turbulent] = forced_convection.fanning_petukhov_1970(re_dh[turbulent])
    bulk = np.flatnonzero(~inlet_ref)
    if method == "developed_laminar":
        h = forced_convection.NUSSELT_PARALLEL_PLATES_T * k_air / (2 * g.gap)
    else:
        h = forced_convection.nusselt_teertstra_1999(re_star, pr) * k_air / g.gap
        if bulk.size:
            h[bulk] = (
                forced_convection.nusselt_gnielinski_1976(re_dh[bulk], pr, f_turb[bulk])
                * k_air
                / d_h[bulk]
            )
    used = ["nusselt_parallel_plates_shah_london_1978"] if method == "developed_laminar" else []
    tip = cond.tip
    fin_g, eta = _finned_conductance(h, g, solid, tip, g.n)
    ua = h * g.exposed_base_area + fin_g
    # Teertstra's h is inlet-referenced and holds the heat-capacity limit for the fin walls;
    # the exposed base adds area, so cap at m-dot c_p. Bulk-referenced h: epsilon-NTU.
    g_conv = np.minimum(ua, capacity)
    if bulk.size:
        g_conv[bulk] = forced_convection.bulk_referenced_conductance(ua[bulk], capacity[bulk])

    aspect = g.gap / g.height
    fanning = pressure_drop.fanning_channel(
        re_dh, g.length, d_h, aspect, RE_TRANSITION, turbulent=f_turb if turbulent.size else None
    )
    k_c, k_e = pressure_drop.loss_coefficients(g.sigma, cond.loss_coefficients)
    dp = pressure_drop.channel_pressure_drop(k_c, k_e, fanning, g.length, d_h, rho, v_ch)

    flags = {}
    if method != "developed_laminar":
        if np.any(inlet_ref) or method == "teertstra_1999":
            used.append("nusselt_teertstra_1999")
            flags["nusselt_teertstra_1999"] = inlet_ref & _out(
                "nusselt_teertstra_1999", re_b_star=re_star
            )
            if method == "teertstra_1999":
                flags["nusselt_teertstra_1999"] |= re_dh > RE_TRANSITION
        if np.any(~inlet_ref):
            used.append("nusselt_gnielinski_1976")
            flags["nusselt_gnielinski_1976"] = ~inlet_ref & _out(
                "nusselt_gnielinski_1976", re_dh=re_dh, pr=pr
            )
    used.append("fanning_apparent_muzychka_yovanovich")
    flags["fanning_apparent_muzychka_yovanovich"] = (re_dh < RE_TRANSITION) & _out(
        "fanning_apparent_muzychka_yovanovich", re_dh=re_dh
    )
    if np.any(re_dh >= RE_TRANSITION):
        used.append("fanning_petukhov_1970")
        flags["fanning_petukhov_1970"] = (re_dh >= RE_TRANSITION) & _out(
            "fanning_petukhov_1970", re_dh=re_dh
        )

    return {
        "g_conv": g_conv,
        "h": h,
        "fin_efficiency": eta,
        "ua": ua,
        "heat_capacity_limited": inlet_ref & (ua > capacity),
        "capacity": capacity,
        "flow": flow,
        "v_ch": v_ch,
        "re_dh": re_dh,
        "re_star": re_star,
        "dp": dp,
        "fan_power": dp * flow,
        "flags": flags,
        "used": used,
    }


def _out(name: str, **groups) -> np.ndarray:
    return registry.get(name).out_of_range(**groups)


# -- natural convection of a vertical array ----------------------------------------------------
def _natural(g: Geometry, solid: _Solid, cond: Condition, t_root) -> dict:
    t_a = cond.ambient_temperature
    d_t = np.maximum(t_root - t_a, 0.0)
    t_film = t_a + 0.5 * d_t
    air = air_properties(t_film, cond.pressure)
    beta = 1.0 / t_film  # the correlation's ideal-gas expansion coefficient
    el = natural_convection.elenbaas_number(
        g.gap,
        g.length,
        d_t,
        air.density,
        air.specific_heat,
        air.viscosity,
        air.conductivity,
        beta,
    )
    h_ch = natural_convection.nusselt_bar_cohen_rohsenow_1984(el) * air.conductivity / g.gap
    nu = air.kinematic_viscosity
    alpha = air.conductivity / (air.density * air.specific_heat)
    ra_l = GRAVITY * beta * d_t * g.length**3 / (nu * alpha)
    h_out = (
        natural_convection.nusselt_churchill_chu_1975(ra_l, air.prandtl)
        * air.conductivity
        / g.length
    )
    tip = cond.tip
    inner_g, eta = _finned_conductance(h_ch, g, solid, tip, g.n - 2)
    # the two end fins have one channel face and one open face
    end_g, _ = _finned_conductance(0.5 * (h_ch + h_out), g, solid, tip, 2.0)
    g_conv = h_ch * g.exposed_base_area + inner_g + end_g
    return {
        "g_conv": g_conv,
        "h": h_ch,
        "fin_efficiency": eta,
        "elenbaas": el,
        "flags": {
            "nusselt_bar_cohen_rohsenow_1984": _out("nusselt_bar_cohen_rohsenow_1984", el=el),
            "nusselt_churchill_chu_1975": _out(
                "nusselt_churchill_chu_1975", ra=ra_l, pr=air.prandtl
            ),
        },
        "used": ["nusselt_bar_cohen_rohsenow_1984", "nusselt_churchill_chu_1975"],
    }


# -- the whole sink ---------------------------------------------------------------------------
#: Designs per block: numpy's temporaries of a block stay in the processor cache, which is
#: about twice as fast as one pass over a million designs (measured, bench/evaluate.py).
BLOCK = 16384


def evaluate_arrays(designs: Designs, condition: Condition, library: Library) -> dict:
    """Evaluate N designs under one condition; a dict of SI arrays (no DataFrame).

    Keys are documented in :func:`optifin.model.evaluate`, whose table this feeds. Large
    populations are evaluated in blocks of :data:`BLOCK` designs (a loop over blocks, not
    over designs) and joined.
    """
    n = len(designs)
    if n <= BLOCK:
        return _evaluate_block(designs, condition, library)
    joined: dict = {}
    flags: dict[str, np.ndarray] = {}
    used: list[str] = []
    for start in range(0, n, BLOCK):
        part = _evaluate_block(designs.take(slice(start, start + BLOCK)), condition, library)
        rows = slice(start, start + len(part["reasons"]))
        for key, value in part.items():
            if isinstance(value, np.ndarray):
                if key not in joined:
                    joined[key] = np.empty(n, dtype=value.dtype)
                joined[key][rows] = value
        for name, flag in part["flags"].items():
            if name not in flags:  # a correlation first needed in a later block
                flags[name] = np.zeros(n, dtype=bool)
            flags[name][rows] = flag
        used.extend(u for u in part["used"] if u not in used)
    joined["flags"] = flags
    joined["used"] = used
    return joined


def _evaluate_block(designs: Designs, condition: Condition, library: Library) -> dict:
    cond = condition
    sources = cond.sources
    g = derive(designs, library, [(s.size_x, s.size_y, s.x, s.y) for s in sources])
    solid = _solid(designs, g, library)
    t_a, q_total = cond.ambient_temperature, cond.total_power
    r_base = g.base / (solid.k * g.base_area)
    used: list[str] = ["fin_1d_uniform"]
    flags = {"fin_1d_uniform": np.zeros(len(designs), bool)}

    forced = _forced(g, solid, cond) if cond.cooling == "forced" else None
    radiating = cond.radiation_on

    def conductances(t_root):
        """Total conductance G (W/K, on T_root - T_ambient) and its parts at T_root."""
        part = forced if forced is not None else _natural(g, solid, cond, t_root)
        g_rad = 0.0
        if radiating:
            g_rad = rad.array_radiation_conductance(
                solid.emissivity,
                g.n,
                g.gap,
                g.t,
                g.height,
                g.length,
                t_root,
                cond.t_surroundings,
                include_outer_faces=True,
                channel_efficiency=part["fin_efficiency"],
            )
            # radiation goes to surroundings that may differ from the air temperature
            with np.errstate(invalid="ignore", divide="ignore"):
                scale = np.where(
                    np.abs(t_root - t_a) > 1e-9,
                    (t_root - cond.t_surroundings) / (t_root - t_a),
                    1.0,
                )
            g_rad = g_rad * scale
        return part, part["g_conv"] + g_rad, g_rad

    spreading_method = _spreading_method(cond)
    if spreading_method != "none":
        used.append(SPREADING_CORRELATION[spreading_method])

    def spread(g_total):
        """Mean (and peak) base rise per total watt, spreading and interface included."""
        return _spreading(g, solid, cond, spreading_method, g_total / g.base_area, r_base)

    temperature_dependent = radiating or forced is None
    reasons = g.reasons.copy()
    if not temperature_dependent:
        part, g_total, g_rad = conductances(None)
        spread_out = spread(g_total)
        t_root = t_a + q_total / g_total
    else:
        t_root, ok = _solve_root_temperature(conductances, q_total, t_a, len(designs))
        reasons |= np.where(ok, 0, BIT["no_solution"])
        t_root = np.where(ok, t_root, t_a + 1.0)
        part, g_total, g_rad = conductances(t_root)
        spread_out = spread(g_total)
    r_conv = 1.0 / g_total
    r_sp = spread_out["r_mean"] - r_conv - r_base
    r_total = spread_out["r_case"]
    base_t = t_a + q_total * spread_out["r_mean"]
    out = {
        "reasons": reasons,
        "gap": g.gap,
        "aspect_ratio": g.height / g.gap,
        "thermal_resistance": r_total,
        "sink_resistance": spread_out["r_mean"],
        "convection_resistance": r_conv,
        "base_resistance": r_base,
        "spreading_resistance": r_sp,
        "interface_resistance": r_total - spread_out["r_mean"],
        "base_temperature": base_t,
        "peak_base_temperature": t_a + q_total * spread_out["r_peak"],
        "source_temperature": t_a + q_total * r_total,
        "fin_root_temperature": t_root,
        "fin_efficiency": part["fin_efficiency"],
        "h": part["h"],
        "radiation_fraction": g_rad / g_total if radiating else np.zeros_like(r_conv),
    }
    if cond.has_limit:
        out["heat_rate"] = _heat_rate_at_limit(
            cond, conductances, spread, temperature_dependent, g_total, spread_out, len(designs)
        )
    if forced is not None:
        out.update(
            volumetric_flow=forced["flow"],
            channel_velocity=forced["v_ch"],
            channel_reynolds=forced["re_dh"],
            channel_reynolds_star=forced["re_star"],
            pressure_drop=forced["dp"],
            fan_power=forced["fan_power"],
            air_temperature_rise=q_total / forced["capacity"],
            heat_capacity_limited=forced["heat_capacity_limited"],
        )
    else:
        out["elenbaas_number"] = part["elenbaas"]
    flags["fin_1d_uniform"] |= _out(
        "fin_1d_uniform", biot=fins.transverse_biot(part["h"], solid.k, g.t)
    )
    used.extend(part["used"])
    flags.update(part["flags"])
    if radiating:
        used.append("array_radiation_conductance")
    if spreading_method != "none":
        flags.update(_spreading_flags(g, cond, spreading_method))
    out.update(mass_and_cost(designs, g, library, cond.quantity))
    out["flags"] = {
        name: np.broadcast_to(f, (len(designs),)).copy() if np.ndim(f) == 0 else np.asarray(f, bool)
        for name, f in flags.items()
    }
    out["used"] = list(dict.fromkeys(used))
    gone = np.flatnonzero(reasons & NONEXISTENT)
    if gone.size:  # few rows: assigning by index costs far less than a masked copy
        for key, value in out.items():
            if isinstance(value, np.ndarray) and value.dtype.kind == "f":
                if value.base is not None or not value.flags.writeable:
                    value = out[key] = value.copy()  # never write into a caller's array
                value[gone] = np.nan
    return out


def _spreading_method(cond: Condition) -> str:
    method = cond.spreading
    single = len(cond.sources) == 1 and cond.sources[0].centred
    if method == "auto":
        return "song_lee_au_1994" if single else "muzychka_2003"
    if method == "song_lee_au_1994" and not single:
        from optifin.errors import ModelError

        raise ModelError("the Song-Lee-Au closed form needs one centred source")
    return method


def _spreading_flags(g: Geometry, cond: Condition, method: str) -> dict:
    """Validity flags of the spreading method (geometry only)."""
    name = SPREADING_CORRELATION[method]
    if method == "song_lee_au_1994":
        s = cond.sources[0]
        long_side, short_side = np.maximum(g.width, g.length), np.minimum(g.width, g.length)
        groups = {
            "epsilon": np.sqrt(s.size_x * s.size_y / g.base_area),
            "plate_aspect_ratio": long_side / short_side,
            "source_aspect_ratio": max(s.size_x, s.size_y) / min(s.size_x, s.size_y),
        }
    else:
        sx, sy, cx, cy = _source_arrays(g, cond)
        groups = spreading.source_placement_groups(g.width, g.length, sx, sy, cx, cy)
    return {name: _out(name, **groups)}


def _source_arrays(g: Geometry, cond: Condition):
    """Source sizes (S,) and centres (N, S) on the base, centred where not placed."""
    sources = cond.sources
    sx = np.array([s.size_x for s in sources])
    sy = np.array([s.size_y for s in sources])
    cx = np.stack(
        [g.width / 2 if s.x is None else np.full_like(g.width, s.x) for s in sources], axis=-1
    )
    cy = np.stack(
        [g.length / 2 if s.y is None else np.full_like(g.width, s.y) for s in sources], axis=-1
    )
    return sx, sy, cx, cy


def _spreading(g, solid, cond, method, h_eff, r_base) -> dict:
    """Mean and peak base rise and case rise per total watt over the hottest source."""
    sources = cond.sources
    q_total = cond.total_power
    weights = np.array([s.power for s in sources]) / (q_total if q_total > 0 else 1.0)
    r_film = 1.0 / (h_eff * g.base_area)
    if method == "none":
        r_mean = r_peak = r_film + r_base
        r_case = r_mean + max(
            s.interface_resistance * w for s, w in zip(sources, weights, strict=True)
        )
        return {"r_mean": r_mean, "r_peak": r_peak, "r_case": r_case}
    if method == "song_lee_au_1994":
        s = sources[0]
        r_avg, r_max = spreading.spreading_song_lee_au_1994(
            s.size_x * s.size_y, g.base_area, g.base, solid.k, h_eff
        )
        r_mean = r_film + r_base + r_avg
        return {
            "r_mean": r_mean,
            "r_peak": r_film + r_base + r_max,
            "r_case": r_mean + s.interface_resistance,
        }
    # eccentric or several sources: series solution and superposition
    sx, sy, cx, cy = _source_arrays(g, cond)
    mean, centre = spreading.flux_channel_influence_muzychka_2003(
        g.width, g.length, g.base, solid.k, h_eff, sx, sy, cx, cy
    )
    rise_mean = np.einsum("nij,j->ni", mean, weights)  # per total watt, each source i
    rise_peak = np.einsum("nij,j->ni", centre, weights)
    interface = np.array([s.interface_resistance for s in sources]) * weights
    hottest = np.argmax(rise_mean, axis=1)
    rows = np.arange(rise_mean.shape[0])
    return {
        "r_mean": rise_mean[rows, hottest],
        "r_peak": rise_peak.max(axis=1),
        "r_case": (rise_mean + interface).max(axis=1),
        "per_source_mean": rise_mean,
        "per_source_peak": rise_peak,
    }


def _solve_root_temperature(conductances, q_total, t_a, n):
    """Fin-root temperature at which the sink rejects the heat load (bracketed, vectorised)."""

    def residual(t_root):
        _, g_total, _ = conductances(t_root)
        return g_total * (t_root - t_a) - q_total

    if q_total <= 0:
        return np.full(n, t_a), np.ones(n, bool)
    low = np.full(n, t_a + 1e-6)
    high = np.full(n, min(t_a + 50.0, T_MAX - 1.0))
    for _ in range(6):  # expand the bracket where 50 K is not enough
        short = residual(high) < 0
        if not short.any():
            break
        high = np.where(short, np.minimum(t_a + 2 * (high - t_a), T_MAX - 1.0), high)
    root, ok = bracketed_root(residual, low, high, xtol=1e-6, rtol=0.0)
    return root, ok


def _heat_rate_at_limit(cond, conductances, spread, temperature_dependent, g_total, spread_now, n):
    """Heat load at which the first temperature limit (base or source) is reached [W]."""
    t_a = cond.ambient_temperature
    limits = [(cond.max_base_temperature, "r_mean"), (cond.max_source_temperature, "r_case")]
    limits = [(lim, key) for lim, key in limits if lim is not None]
    if not temperature_dependent:
        rates = [(lim - t_a) / spread_now[key] for lim, key in limits]
        return rates[0] if len(rates) == 1 else np.minimum(*rates)
    lowest = min(lim for lim, _ in limits)

    def excess(t_root):
        _, g_total, _ = conductances(t_root)
        s = spread(g_total)
        q = g_total * (t_root - t_a)
        return np.max([t_a + q * s[key] - lim for lim, key in limits], axis=0)

    root, ok = bracketed_root(excess, np.full(n, t_a), np.full(n, lowest), xtol=1e-6, rtol=0.0)
    _, g_total, _ = conductances(np.where(ok, root, t_a))
    return np.where(ok, g_total * (root - t_a), np.nan)
