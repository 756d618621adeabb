"""Whole-sink model under real operating conditions: fans, bypass, pin fins, several sources.

Kinds of check, named in each test: published (a published result or worked example),
cross-method (an independent library or formula), invariant (a property the model must
have whatever its numbers).
"""

import numpy as np
import pytest

from optifin.errors import ModelError
from optifin.fans import load_fans
from optifin.library import load_library
from optifin.model import Condition, HeatSource, evaluate
from optifin.physics import fan as fan_physics
from optifin.physics import fins, pin_fins
from optifin.physics.air import air_properties

ht = pytest.importorskip("ht")

LIB = load_library()
FANS = load_fans()
PLATE = dict(
    fin_count=16,
    fin_thickness=1e-3,
    fin_height=0.025,
    base_thickness=0.004,
    width=0.06,
    length=0.06,
    material="al_6063_t5",
    process="skived",
)
SOURCE = [HeatSource(40.0, 0.03, 0.03)]


def _cond(**kw):
    base = dict(sources=SOURCE, ambient_temperature=300.0, max_base_temperature=360.0)
    base.update(kw)
    return Condition(**base)


# -- fan operating point -----------------------------------------------------------------------
def test_invariant_operating_point_is_on_the_fan_curve_and_the_sink_curve():
    """Invariant: the flow found is where the fan's static pressure equals the system's Δp,
    and rating the sink at that flow as a set volumetric flow gives the same Δp and R."""
    curve = FANS["demo_60x25"].curve
    counts = np.arange(8, 30)
    table = evaluate({**PLATE, "fin_count": counts}, _cond(fan=curve))
    flow = table["volumetric_flow_m3_per_s"].to_numpy()
    dp = table["pressure_drop_Pa"].to_numpy()
    np.testing.assert_allclose(fan_physics.fan_pressure(curve, flow), dp, rtol=1e-8, atol=1e-8)
    for i in (0, 7, 15):
        fixed = evaluate({**PLATE, "fin_count": counts[i]}, _cond(volumetric_flow=flow[i]))
        assert fixed["pressure_drop_Pa"].iloc[0] == pytest.approx(dp[i], rel=1e-7)
        assert fixed["thermal_resistance_K_per_W"].iloc[0] == pytest.approx(
            table["thermal_resistance_K_per_W"].iloc[i], rel=1e-7
        )


def test_published_optimum_fin_count_exists_with_a_fan():
    """Published (qualitative): with a fan curve coupling flow and Δp, the thermal resistance
    and the entropy generation rate have an optimum at an interior fin count (Culham &
    Muzychka 2001, IEEE Trans. Compon. Packag. Technol. 24(2) 159-165 [from memory]): more
    fins add area but choke the fan's flow. Checked on a laminar sink, process limits off."""
    curve = FANS["demo_40x10"].curve
    counts = np.arange(8, 41)
    designs = {
        **PLATE,
        "fin_count": counts,
        "fin_thickness": 0.6e-3,
        "width": 0.04,
        "length": 0.04,
        "process": "machining",
    }
    table = evaluate(designs, _cond(fan=curve, sources=[HeatSource(15.0, 0.02, 0.02)]))
    assert (table["channel_reynolds"] < 2300).all()
    for column in ("thermal_resistance_K_per_W", "entropy_generation_rate_W_per_K"):
        best = int(np.nanargmin(table[column].to_numpy()))
        assert 0 < best < len(counts) - 1, column
    flow = table["volumetric_flow_m3_per_s"].to_numpy()
    assert np.all(np.diff(flow) < 0)  # every added fin costs the fan flow


def test_invariant_more_fans_or_less_loss_give_more_flow():
    """Invariant: two fans in parallel deliver more than one, two in series more than one,
    and an extra duct loss reduces the flow."""
    curve = FANS["demo_60x25"].curve
    one = evaluate(PLATE, _cond(fan=curve))["volumetric_flow_m3_per_s"].iloc[0]
    for arrangement in ("parallel", "series"):
        two = evaluate(PLATE, _cond(fan=fan_physics.combine(curve, 2, arrangement)))
        assert two["volumetric_flow_m3_per_s"].iloc[0] > one
    lossy = evaluate(PLATE, _cond(fan=curve, extra_loss_coefficient=3.0))
    assert lossy["volumetric_flow_m3_per_s"].iloc[0] < one
    assert lossy["system_pressure_drop_Pa"].iloc[0] > lossy["pressure_drop_Pa"].iloc[0]
    measured = evaluate(PLATE, _cond(fan=curve, extra_loss_pressure=10.0, extra_loss_flow=0.004))
    row = measured.iloc[0]
    q = row["volumetric_flow_m3_per_s"]
    extra = 10.0 * (q / 0.004) ** 2  # common practice, no source: quadratic loss scaling
    assert row["system_pressure_drop_Pa"] == pytest.approx(row["pressure_drop_Pa"] + extra)


def test_invariant_entropy_generation_is_its_definition():
    """Invariant: the column equals Q² R/T² + Δp V/T (Culham & Muzychka 2001 form)."""
    row = evaluate(PLATE, _cond(approach_velocity=2.0)).iloc[0]
    q, t = 40.0, 300.0
    expected = (
        q**2 * row["thermal_resistance_K_per_W"] / t**2
        + row["pressure_drop_Pa"] * row["volumetric_flow_m3_per_s"] / t
    )
    assert row["entropy_generation_rate_W_per_K"] == pytest.approx(expected, rel=1e-12)


# -- bypass ----------------------------------------------------------------------------------
def test_invariant_zero_clearance_equals_the_shrouded_sink():
    """Invariant: an open sink with no clearance is the shrouded sink, in every column."""
    shrouded = evaluate(PLATE, _cond(approach_velocity=3.0))
    zero = evaluate(PLATE, _cond(approach_velocity=3.0, side_clearance=0.0, top_clearance=0.0))
    for column in shrouded.columns:
        assert shrouded[column].iloc[0] == zero[column].iloc[0] or (
            np.isnan(shrouded[column].iloc[0]) and np.isnan(zero[column].iloc[0])
        ), column


def test_invariant_clearance_sends_air_around_the_fins():
    """Invariant: more clearance, less air through the fins and a higher resistance; a large
    clearance around a dense array sends most of the duct's air around it."""
    clearances = [0.001, 0.003, 0.01, 0.03, 0.1]
    dense = {**PLATE, "fin_count": 24}
    rows = [
        evaluate(dense, _cond(approach_velocity=3.0, side_clearance=c, top_clearance=c)).iloc[0]
        for c in clearances
    ]
    flows = [r["volumetric_flow_m3_per_s"] for r in rows]
    resistances = [r["thermal_resistance_K_per_W"] for r in rows]
    assert np.all(np.diff(flows) < 0)
    assert np.all(np.diff(resistances) > 0)
    assert rows[-1]["bypass_fraction"] > 0.9
    mass_in = 3.0 * (0.06 + 0.2) * (0.025 + 0.1)  # duct flow, mass conserved
    through = rows[-1]["volumetric_flow_m3_per_s"]
    around = rows[-1]["bypass_velocity_m_per_s"] * (mass_in / 3.0 - 0.06 * 0.025)
    assert through + around == pytest.approx(mass_in, rel=1e-9)


def test_invariant_open_stream_is_the_large_clearance_limit():
    """Invariant: an open stream (infinite clearance) is the limit of ever larger ducts."""
    open_row = evaluate(
        PLATE, _cond(approach_velocity=3.0, side_clearance=np.inf, top_clearance=np.inf)
    ).iloc[0]
    wide = evaluate(PLATE, _cond(approach_velocity=3.0, side_clearance=50.0, top_clearance=50.0))
    assert wide["volumetric_flow_m3_per_s"].iloc[0] == pytest.approx(
        open_row["volumetric_flow_m3_per_s"], rel=1e-3
    )


# -- pin fins ------------------------------------------------------------------------------------
PINS = dict(
    fin_count=2,
    fin_thickness=1e-3,
    fin_height=0.02,
    base_thickness=0.004,
    width=0.1,
    length=0.12,
    material="al_1050a",
    process="forging",
    fin_type="pin",
    pin_diameter=2e-3,
    pin_pitch_transverse=5e-3,
    pin_pitch_longitudinal=5e-3,
    pin_layout="inline",
)


def test_cross_method_pin_h_matches_ht_tube_bank():
    """Cross-method: the model's pin h at 24 rows (no row correction) and Re_max in the
    10³-2×10⁵ band equals ht.Nu_Zukauskas_Bejan (Zukauskas 1972 as fitted by Bejan) with
    the same air properties; V_max from the pitches (Zukauskas' in-line rule)."""
    cond = _cond(approach_velocity=12.0)
    row = evaluate(PINS, cond).iloc[0]
    assert row["pin_rows"] == 24
    air = air_properties(300.0, 101325.0)
    v_max = 12.0 * 5e-3 / (5e-3 - 2e-3)
    re = v_max * 2e-3 / float(air.kinematic_viscosity)
    assert 1e3 < re < 2e5 and row["channel_reynolds"] == pytest.approx(re, rel=1e-9)
    nu = ht.conv_tube_bank.Nu_Zukauskas_Bejan(re, float(air.prandtl), 24, 5e-3, 5e-3)
    assert row["h_W_per_m2K"] == pytest.approx(nu * float(air.conductivity) / 2e-3, rel=1e-3)


def test_cross_method_pin_pressure_drop_near_ht_dp_zukauskas():
    """Cross-method: Jakob's (1938) friction [from memory] against ht.dP_Zukauskas (digitised
    Zukauskas charts) for a staggered pin array in Jakob's Re range: within 35 %."""
    designs = {**PINS, "pin_layout": "staggered", "pin_pitch_longitudinal": 4.33e-3}
    row = evaluate(designs, _cond(approach_velocity=10.0)).iloc[0]
    air = air_properties(300.0, 101325.0)
    rho = float(air.density)
    v_max = row["channel_velocity_m_per_s"]
    re = row["channel_reynolds"]
    assert 2e3 < re < 4e4
    dp_ht = ht.conv_tube_bank.dP_Zukauskas(
        re, int(row["pin_rows"]), 5e-3, 4.33e-3, 2e-3, rho, v_max
    )
    assert row["pressure_drop_Pa"] == pytest.approx(dp_ht, rel=0.35)


def test_cross_method_pin_array_conductance_by_hand():
    """Cross-method: G = ε-NTU of N η h π D (H + D/4·0) + h A_base, from the physics
    functions called one by one (pin efficiency, V_max, Zukauskas Nu)."""
    cond = _cond(approach_velocity=4.0)
    row = evaluate(PINS, cond).iloc[0]
    air = air_properties(300.0, 101325.0)
    counts = pin_fins.pin_array_counts(0.1, 0.12, 2e-3, 5e-3, 5e-3, False)
    h = row["h_W_per_m2K"]
    eta = fins.pin_fin_efficiency(
        h,
        229.0 if False else LIB.materials["al_1050a"].conductivity.si,
        2e-3,
        0.02,
        tip="adiabatic",
    )
    ua = counts.total * eta * h * np.pi * 2e-3 * 0.02 + h * (
        0.1 * 0.12 - counts.total * np.pi * 1e-6
    )
    capacity = float(air.density) * float(air.specific_heat) * 4.0 * 0.1 * 0.02
    g = capacity * (1 - np.exp(-ua / capacity))
    assert row["convection_resistance_K_per_W"] == pytest.approx(1 / g, rel=1e-9)
    assert row["pin_count"] == counts.total


def test_invariant_plates_and_pins_evaluate_together():
    """Invariant: a mixed table rates each row as it would be rated alone."""
    mixed = {k: [PLATE.get(k, PINS.get(k)), PINS.get(k, PLATE.get(k))] for k in PINS}
    mixed["fin_type"] = ["plate", "pin"]
    mixed["process"] = ["machining", "machining"]
    mixed["material"] = ["al_6063_t5", "al_6063_t5"]
    table = evaluate(mixed, _cond(approach_velocity=3.0))
    for i in range(2):
        alone = evaluate({k: v[i] for k, v in mixed.items()}, _cond(approach_velocity=3.0))
        assert table["thermal_resistance_K_per_W"].iloc[i] == pytest.approx(
            alone["thermal_resistance_K_per_W"].iloc[0], rel=1e-12
        )


def test_invariant_pins_refused_in_natural_convection_and_by_plate_processes():
    """Invariant: no pin-array natural-convection correlation is implemented, so the model
    refuses; an extrusion cannot make pins (a reason, not an error)."""
    with pytest.raises(ModelError, match="natural convection"):
        evaluate(PINS, Condition(sources=SOURCE, cooling="natural"))
    row = evaluate(
        {**PINS, "process": "extrusion", "material": "al_6063_t5"}, _cond(approach_velocity=3.0)
    ).iloc[0]
    assert "cannot make this fin type" in row["infeasible_reason"]


def test_invariant_overlapping_pins_cannot_exist():
    """Invariant: pins wider than their pitch give an infeasible row with NaN metrics."""
    row = evaluate({**PINS, "pin_diameter": 6e-3}, _cond(approach_velocity=3.0)).iloc[0]
    assert not row["feasible"] and np.isnan(row["thermal_resistance_K_per_W"])


# -- several sources ---------------------------------------------------------------------------
WIDE = {**PLATE, "width": 0.2, "length": 0.06, "fin_count": 40, "base_thickness": 0.006}


def test_cross_method_one_centred_source_series_against_closed_form():
    """Cross-method: one centred source by the flux-channel series (Muzychka, Culham &
    Yovanovich 2003) and by the Song-Lee-Au (1994) closed form on a square base agree
    within 3 % in the sink resistance (the closed form's own accuracy [from memory])."""
    square = {**PLATE, "width": 0.06, "length": 0.06}
    closed = evaluate(square, _cond(approach_velocity=2.0, spreading="song_lee_au_1994"))
    series = evaluate(square, _cond(approach_velocity=2.0, spreading="muzychka_2003"))
    assert series["sink_resistance_K_per_W"].iloc[0] == pytest.approx(
        closed["sink_resistance_K_per_W"].iloc[0], rel=0.03
    )


def test_invariant_superposition_is_linear_in_power():
    """Invariant: in forced convection (temperature-independent h) each source's rise is the
    sum of the rises caused by each source alone."""
    a = dict(size_x=0.02, size_y=0.02, x=0.04, y=0.03, name="a")
    b = dict(size_x=0.03, size_y=0.02, x=0.14, y=0.03, name="b")

    def rises(qa, qb):
        cond = _cond(approach_velocity=2.0, sources=[HeatSource(qa, **a), HeatSource(qb, **b)])
        row = evaluate(WIDE, cond).iloc[0]
        return np.array([row["a_base_temperature_C"], row["b_base_temperature_C"]]) - 26.85

    both = rises(30.0, 50.0)
    np.testing.assert_allclose(both, rises(30.0, 0.0) + rises(0.0, 50.0), rtol=1e-9)
    np.testing.assert_allclose(rises(60.0, 100.0), 2 * both, rtol=1e-9)


def test_invariant_far_apart_sources_act_independently():
    """Invariant: two equal sources on a long base: the farther apart they are, the closer
    each one's rise is to its rise with the other switched off (two independent sources)."""
    long_base = {**WIDE, "width": 0.4, "fin_count": 80}

    def rise(x_other, q_other):
        cond = _cond(
            approach_velocity=2.0,
            sources=[
                HeatSource(40.0, 0.02, 0.02, x=0.05, y=0.03, name="one"),
                HeatSource(q_other, 0.02, 0.02, x=x_other, y=0.03, name="two"),
            ],
        )
        return evaluate(long_base, cond)["one_base_temperature_C"].iloc[0] - 26.85

    excess = [rise(x, 40.0) / rise(x, 0.0) - 1.0 for x in (0.09, 0.2, 0.35)]
    assert excess[0] > excess[1] > excess[2] > 0
    assert excess[2] < 0.02


def test_invariant_hottest_source_sets_the_limits():
    """Invariant: the reported case temperature is the hottest source's."""
    cond = _cond(
        approach_velocity=2.0,
        sources=[
            HeatSource(20.0, 0.02, 0.02, x=0.05, y=0.03, name="low", interface_resistance=0.1),
            HeatSource(60.0, 0.02, 0.02, x=0.15, y=0.03, name="high"),
        ],
    )
    row = evaluate(WIDE, cond).iloc[0]
    hottest = max(row["low_temperature_C"], row["high_temperature_C"])
    assert row["source_temperature_C"] == pytest.approx(hottest, rel=1e-12)


def test_invariant_pins_with_radiation_are_refused():
    """Invariant: the radiation model is for plate channels; pins with radiation refuse."""
    with pytest.raises(ModelError, match="radiation from pin-fin arrays"):
        evaluate(PINS, _cond(approach_velocity=3.0, radiation=True))


def test_invariant_an_impossible_design_with_an_insert_does_not_stop_the_batch():
    """Invariant: a sink that cannot exist is a NaN row even with an insert; its neighbours
    are rated (regression of a batch-wide error found in review)."""
    designs = {
        **PLATE,
        "fin_count": [10, 40],
        "fin_thickness": [1e-3, 2.5e-3],
        "width": 0.08,
        "length": 0.08,
        "insert_material": "cu_c11000",
        "insert_thickness": 2e-3,
        "insert_width": 0.04,
        "insert_length": 0.04,
        "process": "machining",
    }
    table = evaluate(designs, _cond(approach_velocity=2.0))
    assert np.isfinite(table["thermal_resistance_K_per_W"].iloc[0])
    assert not table["feasible"].iloc[1]


@pytest.mark.parametrize(
    ("designs", "kw"),
    [
        (PLATE, dict(fan=FANS["demo_60x25"].curve)),
        (PLATE, dict(approach_velocity=3.0, side_clearance=0.005, top_clearance=0.005)),
        (PINS, dict(approach_velocity=3.0)),
        (PINS, dict(approach_velocity=3.0, pin_heat_transfer="khan_2005")),
        ({**PLATE, "fin_tip_thickness": 0.6e-3}, dict(approach_velocity=3.0)),
        (
            {
                **PLATE,
                "insert_material": "cu_c11000",
                "insert_thickness": 2e-3,
                "insert_width": 0.04,
                "insert_length": 0.04,
                "process": "machining",
            },
            dict(approach_velocity=3.0),
        ),
    ],
)
def test_invariant_every_correlation_used_is_registered(designs, kw):
    """Invariant: the run record cites every correlation the model used, so each name the
    model reports must be in the registry, with a validity flag column."""
    from optifin.physics import registry

    table = evaluate(designs, _cond(**kw))
    for name in table.attrs["correlations"]:
        registry.get(name)
    flagged = {c.removeprefix("out_of_range_") for c in table.columns if c.startswith("out_of")}
    assert flagged <= set(table.attrs["correlations"])
