"""The whole-sink model: published check values, cross-method bounds and invariants.

No published worked example of a whole plate-fin sink could be recalled with enough
confidence to serve as a check value, so the whole-sink checks here are cross-method (the
composite Teertstra model must sit between the heat-capacity limit and the developed-flow
epsilon-NTU rating, physics.md section 2.3) and invariants, plus the reference notes'
worked sink as a formula check of the assembly.
"""

import numpy as np
import pandas as pd
import pytest

from optifin.library import load_library
from optifin.model import Condition, Designs, HeatSource, evaluate
from optifin.model.sink import evaluate_arrays
from optifin.physics.air import air_properties

LIB = load_library()

# The reference notes' invented sink (physics.md section 2.3): W = L = 50 mm, H = 25 mm,
# N = 20, t = 1 mm, t_b = 3 mm, k = 209 (6063-T5), V_f = 2 m/s, air at 300 K.
SINK = dict(
    fin_count=20,
    fin_thickness=1e-3,
    fin_height=0.025,
    base_thickness=0.003,
    width=0.05,
    length=0.05,
    material="al_6063_t5",
    process="machining",
)
GAP = (0.05 - 20 * 1e-3) / 19


def _condition(**kw):
    base = dict(
        sources=[HeatSource(30.0, 0.05, 0.05)],
        ambient_temperature=300.0,
        max_base_temperature=360.0,
    )
    base.update(kw)
    return Condition(**base)


def test_worked_sink_formula_check():
    """Formula check of the assembly against the reference notes' worked sink (physics.md
    2.3 and 3, values [calc] from the same published forms: Teertstra et al. 1999 Nu,
    Muzychka & Yovanovich f_app, K_c/K_e of Culham & Muzychka 2001 [forms from memory]).
    The notes take V_ch = V_f (1 + t/b) and the tip through H + t/2; both are set here."""
    v_ch = 2.0 * (1 + 1e-3 / GAP)
    cond = _condition(
        volumetric_flow=v_ch * 19 * GAP * 0.025,
        fin_tip="corrected",
        loss_coefficients="culham_muzychka_2001",
    )
    row = evaluate(SINK, cond).iloc[0]
    assert row["h_W_per_m2K"] == pytest.approx(41.13741, rel=1e-5)
    assert row["fin_efficiency"] == pytest.approx(0.922591, rel=1e-5)
    assert row["convection_resistance_K_per_W"] == pytest.approx(0.500674, rel=1e-5)
    assert row["base_resistance_K_per_W"] == pytest.approx(0.005742, rel=1e-3)
    assert row["pressure_drop_Pa"] == pytest.approx(25.10667, rel=1e-4)
    # the source covers the whole base: no spreading
    assert row["spreading_resistance_K_per_W"] == pytest.approx(0.0, abs=1e-12)


def test_teertstra_sits_between_capacity_limit_and_developed_flow():
    """Cross-method (physics.md 2.3): 1/(m-dot c_p) < R_conv(Teertstra) < R(epsilon-NTU with
    the fully developed Nu_Dh = 7.541 of Shah & London 1978 [from memory]); Teertstra is
    lower because of the entrance region."""
    cond_t = _condition(approach_velocity=2.0, fin_tip="corrected")
    cond_d = _condition(
        approach_velocity=2.0, fin_tip="corrected", channel_heat_transfer="developed_laminar"
    )
    t = evaluate(SINK, cond_t).iloc[0]
    d = evaluate(SINK, cond_d).iloc[0]
    air = air_properties(300.0)
    capacity = air.density * air.specific_heat * t["volumetric_flow_m3_per_s"]
    assert 1 / capacity < t["convection_resistance_K_per_W"] < d["convection_resistance_K_per_W"]
    # and ignoring air heating (R = 1/hA with the developed h) would be far optimistic
    assert d["convection_resistance_K_per_W"] > 1.3 * (1 / capacity)


def test_starved_flow_never_beats_heat_capacity():
    """Invariant: at any flow, R_conv >= 1/(m-dot c_p), for both heat-transfer models."""
    for method in ("teertstra_1999", "developed_laminar", "auto"):
        for v in (0.02, 0.1, 0.5, 2.0, 8.0):
            row = evaluate(
                SINK, _condition(approach_velocity=v, channel_heat_transfer=method)
            ).iloc[0]
            air = air_properties(300.0)
            capacity = air.density * air.specific_heat * row["volumetric_flow_m3_per_s"]
            assert row["convection_resistance_K_per_W"] >= 1 / capacity * (1 - 1e-12)


def test_energy_balance_closes():
    """Invariant: heat load = G (T_root - T_amb), and T_base = T_amb + Q R_sink."""
    cond = Condition(
        sources=[HeatSource(40.0, 0.02, 0.02)],
        ambient_temperature=308.15,
        approach_velocity=1.5,
        max_base_temperature=370.0,
    )
    out = evaluate_arrays(Designs.from_columns(SINK, LIB), cond, LIB)
    q = (out["fin_root_temperature"] - 308.15) / out["convection_resistance"]
    assert q == pytest.approx(40.0, rel=1e-9)
    assert out["base_temperature"] == pytest.approx(308.15 + 40.0 * out["sink_resistance"])
    parts = (
        out["convection_resistance"]
        + out["base_resistance"]
        + out["spreading_resistance"]
        + out["interface_resistance"]
    )
    assert out["thermal_resistance"] == pytest.approx(parts, rel=1e-12)
    # heat rate at the limit is the load that puts the base at the limit
    assert out["heat_rate"] == pytest.approx((370.0 - 308.15) / out["sink_resistance"])


def test_natural_energy_balance_with_radiation():
    """Invariant, natural convection with radiation: the solved root temperature rejects
    the load, and the heat rate at the limit puts the base exactly at the limit."""
    cond = Condition(
        sources=[HeatSource(20.0, 0.04, 0.04)],
        ambient_temperature=308.15,
        cooling="natural",
        max_base_temperature=353.15,
    )
    d = dict(
        SINK,
        width=0.1,
        length=0.15,
        fin_count=10,
        fin_thickness=2e-3,
        base_thickness=5e-3,
        fin_height=0.03,
        process="extrusion",
    )
    out = evaluate_arrays(Designs.from_columns(d, LIB), cond, LIB)
    q = (out["fin_root_temperature"] - 308.15) / out["convection_resistance"]
    assert q == pytest.approx(20.0, rel=1e-6)
    assert 0 < out["radiation_fraction"][0] < 1
    limit = Condition(
        sources=[HeatSource(float(out["heat_rate"][0]), 0.04, 0.04)],
        ambient_temperature=308.15,
        cooling="natural",
        max_base_temperature=353.15,
    )
    again = evaluate_arrays(Designs.from_columns(d, LIB), limit, LIB)
    assert again["base_temperature"] == pytest.approx(353.15, abs=1e-4)


def _sweep(**columns):
    n = max(np.size(v) for v in columns.values())
    base = {k: np.full(n, v) if not isinstance(v, str) else v for k, v in SINK.items()}
    base.update(columns)
    return evaluate(base, _condition(approach_velocity=2.0))


def test_resistance_falls_with_conductivity():
    """Invariant: more conductive metal, lower resistance (same geometry)."""
    table = _sweep(material=np.array(["al_a380", "al_6061_t6", "al_6063_t5", "cu_c11000"]))
    r = table["thermal_resistance_K_per_W"].to_numpy()
    assert np.all(np.diff(r) < 0)


def test_resistance_falls_with_air_speed():
    """Invariant: more air (higher h), lower resistance; more pressure drop."""
    rows = [evaluate(SINK, _condition(approach_velocity=v)).iloc[0] for v in (0.5, 1, 2, 4, 8)]
    r = np.array([row["thermal_resistance_K_per_W"] for row in rows])
    dp = np.array([row["pressure_drop_Pa"] for row in rows])
    assert np.all(np.diff(r) < 0) and np.all(np.diff(dp) > 0)


def test_resistance_falls_with_fin_count_at_fixed_flow():
    """Invariant: in a shrouded sink at a fixed approach flow, adding fins always lowers the
    resistance, which tends to the heat-capacity limit 1/(m-dot c_p) (an optimum fin count
    needs a fan curve or natural convection, see the next test)."""
    table = _sweep(fin_count=np.arange(4, 41))
    r = table["convection_resistance_K_per_W"].to_numpy()
    assert np.all(np.diff(r) < 0)
    air = air_properties(300.0)
    capacity = air.density * air.specific_heat * table["volumetric_flow_m3_per_s"].to_numpy()
    assert r[-1] == pytest.approx(1 / capacity[-1], rel=0.1)


def _natural_array(counts):
    """The reference notes' natural-convection array (physics.md 4): W 100 mm, L 0.1 m,
    H 30 mm, t 1.5 mm, 6063-T5, on a 5 mm base; 25 W over the whole base, convection only."""
    n = counts.size
    designs = dict(
        fin_count=counts,
        fin_thickness=np.full(n, 1.5e-3),
        fin_height=np.full(n, 0.03),
        base_thickness=np.full(n, 5e-3),
        width=np.full(n, 0.1),
        length=np.full(n, 0.1),
        material="al_6063_t5",
        process="extrusion",
    )
    cond = Condition(
        sources=[HeatSource(25.0, 0.1, 0.1)],
        ambient_temperature=300.0,
        cooling="natural",
        radiation=False,
        max_base_temperature=350.0,
    )
    return designs, cond


def test_natural_convection_has_an_optimum_fin_count():
    """Cross-method with the optimum spacing of Bar-Cohen & Rohsenow (1984): the reference
    notes' natural-convection array (physics.md 4: W 100 mm, L 0.1 m, H 30 mm, t 1.5 mm,
    k 209, dT about 50 K) has its lowest resistance near N = 12-14 (b_opt = 2.714 P^-1/4 =
    6.4 mm, [calc]); the optimum here must sit there too."""
    counts = np.arange(6, 22)
    r = evaluate(*_natural_array(counts))["convection_resistance_K_per_W"].to_numpy()
    best = counts[int(np.argmin(r))]
    assert 11 <= best <= 14


def test_impossible_designs_are_rows_with_reasons():
    """A design that cannot exist is an infeasible row that says why, never a silent NaN."""
    table = _sweep(fin_count=np.array([1, 20, 60]))
    assert list(table["feasible"]) == [False, False, False]  # machining aspect ratio too
    assert "fewer than 2 fins" in table["infeasible_reason"][0]
    assert "do not fit" in table["infeasible_reason"][2]
    assert np.isnan(table["thermal_resistance_K_per_W"][2])
    assert np.isfinite(table["thermal_resistance_K_per_W"][1])


def test_process_limits_flag_but_still_rate():
    """A makeable geometry outside a process's limits is rated and flagged infeasible."""
    d = dict(SINK, process="extrusion", material="cu_c11000")
    row = evaluate(d, _condition(approach_velocity=2.0)).iloc[0]
    assert not row["feasible"]
    assert "cannot form this material" in row["infeasible_reason"]
    assert np.isfinite(row["thermal_resistance_K_per_W"])


def test_spreading_appears_for_small_sources_and_interface_adds():
    small = Condition(
        sources=[HeatSource(30.0, 0.01, 0.01, interface_resistance=0.1)],
        ambient_temperature=300.0,
        approach_velocity=2.0,
        max_base_temperature=360.0,
        max_source_temperature=370.0,
    )
    row = evaluate(SINK, small).iloc[0]
    assert row["spreading_resistance_K_per_W"] > 0
    assert row["interface_resistance_K_per_W"] == pytest.approx(0.1)
    assert row["source_temperature_C"] - row["base_temperature_C"] == pytest.approx(3.0)
    assert row["peak_base_temperature_C"] > row["base_temperature_C"]
    # the binding limit sets the heat rate
    by_base = (360.0 - 300.0) / row["sink_resistance_K_per_W"]
    by_case = (370.0 - 300.0) / row["thermal_resistance_K_per_W"]
    assert row["heat_rate_W"] == pytest.approx(min(by_base, by_case))


def test_series_and_closed_form_spreading_agree_in_the_model():
    """Cross-method inside the model: a centred source rated by the Muzychka et al. (2003)
    series and by the Song-Lee-Au (1994) closed form gives resistances within 10 %."""
    base = dict(
        sources=[HeatSource(30.0, 0.015, 0.015)],
        ambient_temperature=300.0,
        approach_velocity=2.0,
        max_base_temperature=360.0,
    )
    a = evaluate(SINK, Condition(**base, spreading="song_lee_au_1994")).iloc[0]
    b = evaluate(SINK, Condition(**base, spreading="muzychka_2003")).iloc[0]
    assert a["spreading_resistance_K_per_W"] == pytest.approx(
        b["spreading_resistance_K_per_W"], rel=0.10
    )


def test_mass_and_cost_by_hand():
    """Invariant: mass = rho (W L t_b + N t H L); machining buys the whole block."""
    row = evaluate(SINK, _condition(approach_velocity=2.0)).iloc[0]
    volume = 0.05 * 0.05 * 0.003 + 20 * 1e-3 * 0.025 * 0.05
    assert row["mass_kg"] == pytest.approx(2700 * volume)
    block = 0.05 * 0.05 * 0.028
    assert row["material_cost"] == pytest.approx(3.0 * 2700 * block)
    assert row["volume_cm3"] == pytest.approx(block * 1e6)


def test_blocks_join_to_the_same_answer():
    """Invariant: evaluating in blocks (large populations) equals one pass."""
    from optifin.model import sink

    rng = np.random.default_rng(3)
    n = sink.BLOCK + 123
    d = Designs(
        fin_count=rng.integers(2, 40, n),
        fin_thickness=rng.uniform(3e-4, 3e-3, n),
        fin_height=rng.uniform(0.01, 0.05, n),
        base_thickness=rng.uniform(0.002, 0.01, n),
        width=np.full(n, 0.08),
        length=np.full(n, 0.1),
        material=rng.integers(0, len(LIB.materials), n),
        process=rng.integers(0, len(LIB.processes), n),
        finish=np.zeros(n, np.int64),
    )
    cond = _condition(approach_velocity=3.0)
    whole = evaluate(d, cond)
    parts = pd.concat(
        [evaluate(d.take(slice(0, 100)), cond), evaluate(d.take(slice(100, n)), cond)],
        ignore_index=True,
    )
    text = ["material", "process", "finish", "infeasible_reason"]
    whole[text] = whole[text].astype(str)
    parts[text] = parts[text].astype(str)
    pd.testing.assert_frame_equal(whole, parts)


def test_natural_array_against_the_reference_table():
    """Cross-method: the reference notes' natural-convection array table (physics.md 4,
    [calc] from Bar-Cohen & Rohsenow 1984 with air at a 325 K film, convection only,
    eta on H + t/2, every fin face a channel face): Q at a 50 K base rise 26.077 / 25.265 /
    21.253 W for N = 12 / 14 / 16. Our model rates the two outer faces as isolated plates
    (Churchill & Chu 1975) and conducts through a 5 mm base, hence 4 %."""
    counts = np.array([12, 14, 16])
    q = evaluate(*_natural_array(counts))["heat_rate_W"].to_numpy()
    np.testing.assert_allclose(q, [26.077, 25.265, 21.253], rtol=0.04)


def test_invariant_conductance_rises_through_transition():
    """Invariant: a rising flow never lowers the sink's conductance, also through Re_Dh 2300
    where the auto mode moves from the developing-laminar rating (Teertstra et al. 1999) to
    the larger of it and the developed-turbulent one (Gnielinski 1976, epsilon-NTU); and
    auto is never below the Teertstra-only rating."""
    sink = {**SINK, "fin_count": 12, "width": 0.06, "length": 0.06, "process": "skived"}
    speeds = np.linspace(2.0, 8.0, 25)
    auto, lam = [], []
    for v in speeds:
        auto.append(evaluate(sink, _condition(approach_velocity=v)).iloc[0])
        lam.append(
            evaluate(
                sink, _condition(approach_velocity=v, channel_heat_transfer="teertstra_1999")
            ).iloc[0]
        )
    reynolds = np.array([r["channel_reynolds"] for r in auto])
    assert reynolds.min() < 2300 < reynolds.max()
    r_conv = np.array([r["convection_resistance_K_per_W"] for r in auto])
    assert np.all(np.diff(r_conv) < 0)
    r_lam = np.array([r["convection_resistance_K_per_W"] for r in lam])
    assert np.all(r_conv <= r_lam * (1 + 1e-12))
