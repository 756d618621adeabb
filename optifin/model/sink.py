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
from dataclasses import dataclass, fields, replace

import numpy as np

from optifin.errors import ModelError
from optifin.library import Library
from optifin.model.condition import Condition
from optifin.model.cost import mass_and_cost
from optifin.model.design import Designs
from optifin.model.geometry import (
    BIT,
    NONEXISTENT,
    Geometry,
    derive,
    pair_lookup,
)
from optifin.numerics import bracketed_root
from optifin.physics import (
    bypass,
    fan,
    fins,
    forced_convection,
    layered_base,
    natural_convection,
    pin_fins,
    pressure_drop,
    registry,
    spreading,
)
from optifin.physics import radiation as rad
from optifin.physics.air import T_MAX, air_properties

GRAVITY = 9.80665
RE_TRANSITION = 2300.0  # channel Reynolds number on D_h where the laminar models stop
PIN_PRESSURE_DROP = "friction_factor_jakob_1938"  # registry name of the pin-array Δp
SPREADING_CORRELATION = {
    "song_lee_au_1994": "spreading_song_lee_au_1994",
    "muzychka_2003": "flux_channel_influence_muzychka_2003",
}


@dataclass(frozen=True)
class _Solid:
    """Per-design solid properties looked up from the library."""

    k: np.ndarray  # fin conductivity [W/(m K)]
    emissivity: np.ndarray  # [-]
    joint: np.ndarray  # bond-line resistance of one fin [K/W] (0 for monolithic sinks)
    k_base: np.ndarray  # base conductivity [W/(m K)]
    tapered: bool  # some fins are thinner at the tip than at the root


def _solid(designs: Designs, g: Geometry, library: Library) -> _Solid:
    lib = library.array
    k = np.take(lib("conductivity"), designs.material)
    k_base = k
    if designs.has_base_material:
        k_base = np.take(lib("conductivity"), designs.base_material_code)
    emissivity = pair_lookup(lib("emissivity"), designs.material, designs.finish)
    emissivity = np.fmax(emissivity, 0.0)  # a finish not offered (NaN): no radiation
    r_area = np.take(lib("joint_resistance"), designs.process)  # 0 for monolithic sinks
    groove = np.take(lib("groove_depth"), designs.process)
    # the bond line wets both groove walls and the groove bottom of each fin
    joint = r_area / (g.length * (g.t + 2 * groove))
    return _Solid(
        k=k, emissivity=emissivity, joint=joint, k_base=k_base, tapered=designs.is_tapered
    )


def _fin_area(g: Geometry, tip: str) -> np.ndarray:
    """Area of one fin, both faces (and the tip through the corrected length) [m²]."""
    h_c = g.height + (g.t_tip / 2 if tip == "corrected" else 0.0)
    return 2.0 * h_c * g.length


def _finned_conductance(h, g: Geometry, solid: _Solid, tip: str, count) -> tuple:
    """Conductance of ``count`` fins at coefficient h, with any bond line in series."""
    if solid.tapered:
        eta = fins.trapezoidal_fin_efficiency(h, solid.k, g.t, g.t_tip, g.height, tip=tip)
    else:
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


def _forced(g: Geometry, solid: _Solid, cond: Condition, pins: dict | None = None) -> dict:
    """Forced convection through the array: flow (set, fan or bypass), h, G and Δp."""
    rho, cp, k_air, nu, pr = _inlet_air(cond.ambient_temperature, cond.pressure)
    frontal = g.width * g.height
    if pins is None:
        hydraulics = functools.partial(_plate_hydraulics, g, cond, rho, nu)
    else:
        hydraulics = functools.partial(_pin_hydraulics, g, pins, rho, nu)
    reasons = np.zeros(g.n.shape, dtype=np.int32)
    extra = {}
    if cond.fan is not None:

        def system(flow):
            return hydraulics(flow)["dp"] + _extra_loss(cond, flow, frontal, rho)

        flow, fan_dp, ok = fan.operating_point(cond.fan, system, g.n.shape[0])
        reasons |= np.where(ok, 0, BIT["fan_stall"]).astype(np.int32)
        flow = np.where(ok, flow, 1e-3 * cond.fan.free_delivery)
        extra["system_pressure_drop"] = np.where(ok, fan_dp, np.nan)
    elif cond.bypassed:
        _, bypass_area = bypass.bypass_area(
            g.width, g.height, cond.side_clearance or 0.0, cond.top_clearance or 0.0
        )

        def sink_dp(v_front):
            return hydraulics(v_front * frontal)["dp"]

        v_s, v_b, _, ok = bypass.split_flow_bypass(
            cond.approach_velocity, frontal, bypass_area, sink_dp, rho
        )
        reasons |= np.where(ok, 0, BIT["no_solution"]).astype(np.int32)
        v_s = np.where(ok, v_s, cond.approach_velocity)
        flow = v_s * frontal
        extra["bypass_velocity"] = v_b
        duct = frontal + bypass_area
        with np.errstate(invalid="ignore"):
            extra["bypass_fraction"] = np.where(
                np.isfinite(duct), 1.0 - flow / (cond.approach_velocity * duct), np.nan
            )
    elif cond.volumetric_flow is None:
        flow = cond.approach_velocity * frontal
    else:
        flow = np.full_like(g.width, cond.volumetric_flow)
    hyd = hydraulics(flow)
    capacity = rho * cp * flow  # m-dot c_p [W/K]
    if pins is None:
        out = _plate_heat_transfer(g, solid, cond, hyd, capacity, k_air, nu, pr)
    else:
        out = _pin_heat_transfer(g, pins, solid, cond, hyd, capacity, k_air, pr)
    out["flags"].update(hyd["flags"])
    out["used"] += hyd["used"]
    out.update(
        capacity=capacity,
        flow=flow,
        v_ch=hyd["velocity"],
        re_dh=hyd["reynolds"],
        dp=hyd["dp"],
        fan_power=hyd["dp"] * flow,
        reasons=reasons,
        extra=extra,
    )
    return out


def _extra_loss(cond: Condition, flow, frontal, rho):
    """Duct or grille loss in series with the sink: K (1/2) rho V^2 plus Δp_ref (Q/Q_ref)^2."""
    loss = 0.0
    if cond.extra_loss_coefficient:
        area = frontal if cond.extra_loss_area is None else cond.extra_loss_area
        loss = fan.system_loss_coefficient(flow, cond.extra_loss_coefficient, area, rho)
    if cond.extra_loss_pressure:
        loss = loss + fan.system_loss_reference(
            flow, cond.extra_loss_pressure, cond.extra_loss_flow
        )
    return loss


def _plate_hydraulics(g: Geometry, cond: Condition, rho, nu, flow) -> dict:
    """Channel velocity, Reynolds number, friction and Δp of a plate-fin array at a flow."""
    # continuity: all of the flow passes the N-1 channels of b x H
    v_ch = flow / ((g.n - 1) * g.gap * g.height)
    d_h = pressure_drop.hydraulic_diameter_rectangle(g.gap, g.height)
    re_dh = v_ch * d_h / nu
    # turbulent channels are few: evaluate their correlations on that subset only
    turbulent = np.flatnonzero(re_dh >= RE_TRANSITION)
    f_turb = np.zeros_like(re_dh)  # Petukhov's f where turbulent (0: the laminar f rules)
    f_turb[turbulent] = forced_convection.fanning_petukhov_1970(re_dh[turbulent])
    aspect = g.gap / g.height
    fanning = pressure_drop.fanning_channel(
        re_dh, g.length, d_h, aspect, RE_TRANSITION, turbulent=f_turb if turbulent.size else None
    )
    k_c, k_e = pressure_drop.loss_coefficients(g.sigma, cond.loss_coefficients)
    dp = pressure_drop.channel_pressure_drop(k_c, k_e, fanning, g.length, d_h, rho, v_ch)
    flags = {
        "fanning_apparent_muzychka_yovanovich": (re_dh < RE_TRANSITION)
        & _out("fanning_apparent_muzychka_yovanovich", re_dh=re_dh)
    }
    used = ["fanning_apparent_muzychka_yovanovich"]
    if turbulent.size:
        used.append("fanning_petukhov_1970")
        flags["fanning_petukhov_1970"] = (re_dh >= RE_TRANSITION) & _out(
            "fanning_petukhov_1970", re_dh=re_dh
        )
    return {
        "velocity": v_ch,
        "reynolds": re_dh,
        "d_h": d_h,
        "f_turb": f_turb,
        "turbulent": turbulent,
        "dp": dp,
        "flags": flags,
        "used": used,
    }


def _plate_heat_transfer(g, solid, cond, hyd, capacity, k_air, nu, pr) -> dict:
    v_ch, re_dh, d_h, f_turb = hyd["velocity"], hyd["reynolds"], hyd["d_h"], hyd["f_turb"]
    re_star = forced_convection.channel_reynolds_star(v_ch, g.gap, g.length, nu)
    method = cond.channel_heat_transfer
    if method == "teertstra_1999":
        inlet_ref = np.ones_like(re_dh, dtype=bool)
    elif method == "developed_laminar":
        inlet_ref = np.zeros_like(re_dh, dtype=bool)
    else:
        inlet_ref = re_dh < RE_TRANSITION
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
    if method == "auto" and bulk.size:
        # Above Re_Dh = 2300 the flow in a short channel may still be a developing laminar
        # boundary layer (Re on the flow length far below a plate's transition), and a
        # developed-turbulent correlation is low near transition: take the larger of the two
        # ratings, so that the conductance never drops as the flow rises through 2300.
        rows = bulk
        sub_g, sub_solid = _rows(g, rows), _rows(solid, rows)
        h_lam = forced_convection.nusselt_teertstra_1999(re_star[rows], pr) * k_air / sub_g.gap
        fin_lam, eta_lam = _finned_conductance(h_lam, sub_g, sub_solid, tip, sub_g.n)
        ua_lam = h_lam * sub_g.exposed_base_area + fin_lam
        g_lam = np.minimum(ua_lam, capacity[rows])
        laminar = g_lam > g_conv[rows]
        if laminar.any():
            won = rows[laminar]
            g_conv[won], h[won], ua[won] = g_lam[laminar], h_lam[laminar], ua_lam[laminar]
            eta = np.array(eta, dtype=float, copy=True)
            eta[won] = eta_lam[laminar]
            inlet_ref = inlet_ref.copy()
            inlet_ref[won] = True

    flags = {}
    if method != "developed_laminar":
        if np.any(inlet_ref) or method == "teertstra_1999":
            used.append("nusselt_teertstra_1999")
            flags["nusselt_teertstra_1999"] = inlet_ref & _out(
                "nusselt_teertstra_1999", re_b_star=re_star
            )
            # laminar developing flow rated above Re_Dh 2300 (mode teertstra_1999, or where
            # it exceeds the turbulent rating in auto): outside the published range
            flags["nusselt_teertstra_1999"] |= inlet_ref & (re_dh >= RE_TRANSITION)
        if np.any(~inlet_ref):
            used.append("nusselt_gnielinski_1976")
            flags["nusselt_gnielinski_1976"] = ~inlet_ref & _out(
                "nusselt_gnielinski_1976", re_dh=re_dh, pr=pr
            )
    return {
        "g_conv": g_conv,
        "h": h,
        "fin_efficiency": eta,
        "ua": ua,
        "heat_capacity_limited": inlet_ref & (ua > capacity),
        "re_star": re_star,
        "flags": flags,
        "used": used,
    }


# -- pin-fin arrays in cross flow ----------------------------------------------------------------
def _rows(obj, rows):
    """The rows ``rows`` of a Geometry or _Solid (arrays indexed; scalars and flags kept)."""
    n = obj.k.shape[0] if isinstance(obj, _Solid) else obj.n.shape[0]
    changes = {}
    for f in fields(obj):
        value = getattr(obj, f.name)
        if isinstance(value, np.ndarray) and value.ndim and value.shape[0] == n:
            changes[f.name] = value[rows]
    return replace(obj, **changes)


def _pin_hydraulics(g: Geometry, pins: dict, rho, nu, flow) -> dict:
    """V_max, Re_D and the array pressure drop of a pin-fin array at a flow."""
    v_front = flow / (g.width * g.height)
    d = pins["diameter"]
    v_max = pin_fins.pin_array_max_velocity(
        v_front, d, pins["pitch_transverse"], pins["pitch_longitudinal"], pins["staggered"]
    )
    re = v_max * d / nu
    a_t, b_l = pins["pitch_transverse"] / d, pins["pitch_longitudinal"] / d
    dp = pin_fins.pressure_drop_pin_array(re, rho, v_max, pins["rows"], a_t, b_l, pins["staggered"])
    name = PIN_PRESSURE_DROP
    return {
        "velocity": v_max,
        "reynolds": re,
        "dp": dp,
        "flags": {name: _out(name, re_max=re, a_t=a_t, b_l=b_l)},
        "used": [name],
    }


def _pin_heat_transfer(g, pins, solid, cond, hyd, capacity, k_air, pr) -> dict:
    re, d = hyd["reynolds"], pins["diameter"]
    a_t, b_l = pins["pitch_transverse"] / d, pins["pitch_longitudinal"] / d
    if cond.pin_heat_transfer == "khan_2005":
        name = "nusselt_khan_2005"
        nu_d = pin_fins.nusselt_khan_2005(re, pr, a_t, b_l, pins["staggered"])
        flag = _out(name, re_max=re, a_t=a_t, b_l=b_l)
    else:
        name = "nusselt_zukauskas_1972"
        nu_d = pin_fins.nusselt_zukauskas_1972(
            re, pr, pr, pins["staggered"], a_t / b_l, pins["rows"]
        )
        flag = pin_fins.zukauskas_1972_out_of_range(re, pr, pins["staggered"], a_t / b_l)
    h = nu_d * k_air / d
    eta = fins.pin_fin_efficiency(h, solid.k, d, g.height, tip=cond.tip)
    h_c = g.height + (d / 4 if cond.tip == "corrected" else 0.0)
    ua = g.n * eta * h * np.pi * d * h_c + h * g.exposed_base_area
    # tube-bank h goes with the log-mean temperature difference: epsilon-NTU on the inlet
    g_conv = forced_convection.bulk_referenced_conductance(ua, capacity)
    return {
        "g_conv": g_conv,
        "h": h,
        "fin_efficiency": eta,
        "ua": ua,
        "heat_capacity_limited": np.zeros(g.n.shape, bool),
        "re_star": np.full(g.n.shape, np.nan),
        "flags": {name: flag},
        "used": [name],
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
    if designs.has_pins:
        if condition.cooling == "natural":
            raise ModelError(
                "pin fins in natural convection: no published pin-array correlation is "
                "implemented; use plate fins or forced cooling"
            )
        if condition.radiation_on:
            raise ModelError(
                "radiation from pin-fin arrays is not modelled (the view factors are for "
                "plate-fin channels); turn radiation off for pin fins"
            )
        pin = designs.fin_type == 1
        if not pin.all():  # plates and pins: each through its own model, then joined
            parts = [np.flatnonzero(~pin), np.flatnonzero(pin)]
            return _join(
                n, [(i, evaluate_arrays(designs.take(i), condition, library)) for i in parts]
            )
    if n <= BLOCK:
        return _evaluate_block(designs, condition, library)
    return _join(
        n,
        [
            (
                slice(start, min(start + BLOCK, n)),
                _evaluate_block(designs.take(slice(start, start + BLOCK)), condition, library),
            )
            for start in range(0, n, BLOCK)
        ],
    )


def _join(n: int, parts) -> dict:
    """One result dict from the results of row subsets (slices or index arrays)."""
    joined: dict = {}
    flags: dict[str, np.ndarray] = {}
    used: list[str] = []
    everywhere = set.intersection(*(set(part) for _, part in parts))
    for rows, part in parts:
        for key, value in part.items():
            if isinstance(value, np.ndarray):
                if key not in joined:
                    shape = (n, *value.shape[1:])
                    if key in everywhere:  # every row is written: no fill needed
                        joined[key] = np.empty(shape, dtype=value.dtype)
                    elif value.dtype.kind == "f":  # a metric some parts do not have
                        joined[key] = np.full(shape, np.nan)
                    else:
                        joined[key] = np.zeros(shape, dtype=value.dtype)
                joined[key][rows] = value
        for name, flag in part["flags"].items():
            if name not in flags:  # a correlation first needed in a later part
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
    r_base = g.base / (solid.k_base * g.base_area)
    used: list[str] = ["fin_1d_uniform"]
    flags = {"fin_1d_uniform": np.zeros(len(designs), bool)}
    pins = _pin_arrays(designs, g) if designs.has_pins else None  # a block: plates or pins
    if solid.tapered:
        used.append("fin_1d_trapezoidal")

    forced = _forced(g, solid, cond, pins) if cond.cooling == "forced" else None
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

    inserts = np.flatnonzero(designs.insert_material >= 0) if designs.has_inserts else None
    if inserts is not None:
        used.append("insert_base_variational")

    def spread(g_total):
        """Mean (and peak) base rise per total watt, spreading and interface included."""
        out = _spreading(g, solid, cond, spreading_method, g_total / g.base_area, r_base)
        if inserts is not None:
            _insert_spreading(out, inserts, designs, g, solid, cond, g_total, library)
        return out

    temperature_dependent = radiating or forced is None
    reasons = g.reasons.copy()
    if forced is not None:
        reasons |= forced["reasons"]
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
            # fan.entropy_generation_rate, with its scalar factors folded (Culham & Muzychka)
            entropy_generation_rate=(q_total / t_a) ** 2 * r_total
            + forced["extra"].get("system_pressure_drop", forced["dp"]) * (forced["flow"] / t_a),
            **forced["extra"],
        )
    else:
        out["elenbaas_number"] = part["elenbaas"]
    if pins is not None:
        out["pin_count"] = g.n
        out["pin_rows"] = pins["rows"]
    if "per_source_mean" in spread_out:
        out["per_source_base_temperature"] = t_a + q_total * spread_out["per_source_mean"]
        out["per_source_peak_temperature"] = t_a + q_total * spread_out["per_source_peak"]
        out["per_source_temperature"] = t_a + q_total * spread_out["per_source_case"]
    flags["fin_1d_uniform"] |= _out(
        "fin_1d_uniform", biot=fins.transverse_biot(part["h"], solid.k, g.t)
    )
    if solid.tapered:
        flags["fin_1d_trapezoidal"] = _out(
            "fin_1d_trapezoidal",
            biot=fins.transverse_biot(part["h"], solid.k, g.t),
            half_angle=fins.tapered_fin_half_angle(g.t, g.t_tip, g.height),
        )
    if inserts is not None:
        s0 = cond.sources[0]
        flags["insert_base_variational"] = _out(
            "insert_base_variational",
            **layered_base.insert_groups(
                designs.insert_width,
                designs.insert_length,
                np.take(library.array("conductivity"), np.maximum(designs.insert_material, 0)),
                s0.size_x,
                s0.size_y,
                solid.k_base,
            ),
        ) & (designs.insert_material >= 0)
    if forced is not None and cond.bypassed:
        used.append("split_flow_bypass")
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
            s.size_x * s.size_y, g.base_area, g.base, solid.k_base, h_eff
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
        g.width,
        g.length,
        g.base,
        solid.k_base,
        h_eff,
        sx,
        sy,
        cx,
        cy,
        n_terms=series_terms(g.width, g.length, sx, sy),
    )
    rise_mean = np.einsum("nij,j->ni", mean, weights)  # per total watt, each source i
    rise_peak = np.einsum("nij,j->ni", centre, weights)
    interface = np.array([s.interface_resistance for s in sources]) * weights
    hottest = np.argmax(rise_mean, axis=1)
    rows = np.arange(rise_mean.shape[0])
    case = rise_mean + interface
    return {
        "r_mean": rise_mean[rows, hottest],
        "r_peak": rise_peak.max(axis=1),
        "r_case": case.max(axis=1),
        "per_source_mean": rise_mean,
        "per_source_peak": rise_peak,
        "per_source_case": case,
    }


#: Fourier terms per wavelength ratio plate/source of the flux-channel series, and bounds.
TERMS_PER_RATIO, MIN_TERMS, MAX_TERMS = 6, 32, 128


def series_terms(width, length, size_x, size_y) -> int:
    """Terms of the flux-channel series for sources of these sizes on these plates.

    The truncation error of the series (with its tail correction) falls as
    (plate/(source · terms))³; 6 terms per plate-to-source ratio keep it below about 1e-4
    of the rise (measured in the spreading module's notes: 128 terms at source = plate/20
    give 2e-5 to 7e-5), and cost, which grows as terms², 4-16 times less than the fixed
    128 for sources a fifth to a half of the plate.
    """
    ratio = max(
        float(np.max(width)) / float(np.min(size_x)), float(np.max(length)) / float(np.min(size_y))
    )
    return int(np.clip(np.ceil(TERMS_PER_RATIO * ratio), MIN_TERMS, MAX_TERMS))


def _insert_spreading(out, rows, designs, g, solid, cond, g_total, library) -> None:
    """Replace the base rise of designs with a spreader insert (one centred source)."""
    if len(cond.sources) != 1 or not cond.sources[0].centred:
        raise ModelError("a spreader insert needs one heat source centred on the base")
    s = cond.sources[0]
    rows = rows[(g.reasons[rows] & NONEXISTENT) == 0]  # stand-in rows are NaN'd later
    if not rows.size:
        return
    k_ins = np.take(library.array("conductivity"), designs.insert_material[rows])
    h_eff = (g_total / g.base_area)[rows]
    r_mean, r_peak = layered_base.insert_base_resistance(
        g.width[rows],
        g.length[rows],
        g.base[rows],
        solid.k_base[rows] if np.ndim(solid.k_base) else solid.k_base,
        designs.insert_width[rows],
        designs.insert_length[rows],
        designs.insert_thickness[rows],
        k_ins,
        s.size_x,
        s.size_y,
        h_eff,
    )
    for key in ("r_mean", "r_peak", "r_case"):
        out[key] = np.array(out[key], dtype=float)
    out["r_mean"][rows] = r_mean
    out["r_peak"][rows] = r_peak
    out["r_case"][rows] = r_mean + s.interface_resistance


def _pin_arrays(designs: Designs, g: Geometry) -> dict:
    """Pin diameter, pitches, layout and rows of a block of pin-fin designs."""
    pg = g.pins  # derive's pin_geometry: the block is all pins
    d, s_t, s_l = pg["stand_in"]  # the pins where defined, safe stand-ins elsewhere
    return {
        "diameter": d,
        "pitch_transverse": s_t,
        "pitch_longitudinal": s_l,
        "staggered": designs.pin_layout == 1,
        "rows": pg["rows"],
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
