"""Tapered (trapezoidal) plate fins through the whole-sink model.

Kinds of check: cross-method (the model's columns against the physics functions called by
hand) and invariants.
"""

import numpy as np
import pytest

from optifin.library import load_library
from optifin.model import Condition, HeatSource, evaluate
from optifin.physics import fins

LIB = load_library()
SINK = dict(
    fin_count=14,
    fin_thickness=2.0e-3,
    fin_height=0.035,
    base_thickness=0.006,
    width=0.08,
    length=0.1,
    material="al_6063_t5",
    process="extrusion",
)
COND = Condition(
    sources=[HeatSource(50.0, 0.04, 0.04)], ambient_temperature=300.0, approach_velocity=2.5
)


def test_invariant_no_taper_is_the_uniform_fin_exactly():
    """Invariant: a tip as thick as the root gives the untapered sink in every column."""
    plain = evaluate(SINK, COND)
    same = evaluate({**SINK, "fin_tip_thickness": SINK["fin_thickness"]}, COND)
    for column in plain.columns:
        assert plain[column].iloc[0] == same[column].iloc[0], column


def test_cross_method_tapered_efficiency_mass_and_gap():
    """Cross-method: efficiency = trapezoidal_fin_efficiency(h, k, t, t_tip, H); mass =
    rho (W L t_b + N (t + t_tip)/2 H L); the air sees the mean gap."""
    row = evaluate({**SINK, "fin_tip_thickness": 1.0e-3}, COND).iloc[0]
    k = LIB.materials["al_6063_t5"].conductivity.si
    eta = fins.trapezoidal_fin_efficiency(row["h_W_per_m2K"], k, 2e-3, 1e-3, 0.035)
    assert row["fin_efficiency"] == pytest.approx(float(eta), rel=1e-12)
    rho = LIB.materials["al_6063_t5"].density.si
    mass = rho * (0.08 * 0.1 * 0.006 + 14 * 1.5e-3 * 0.035 * 0.1)
    assert row["mass_kg"] == pytest.approx(mass, rel=1e-12)
    assert row["fin_gap_mm"] == pytest.approx((80 - 14 * 1.5) / 13, rel=1e-12)


def test_invariant_taper_trades_little_heat_for_metal():
    """Invariant: at equal root thickness, a taper removes metal and opens the channels;
    the resistance changes by less than the mass does."""
    plain = evaluate(SINK, COND).iloc[0]
    taper = evaluate({**SINK, "fin_tip_thickness": 1.2e-3}, COND).iloc[0]
    assert taper["mass_kg"] < plain["mass_kg"]
    d_mass = 1 - taper["mass_kg"] / plain["mass_kg"]
    d_r = abs(taper["thermal_resistance_K_per_W"] / plain["thermal_resistance_K_per_W"] - 1)
    assert d_r < d_mass


def test_invariant_tip_thicker_than_root_is_refused():
    """Invariant: an inverted taper is not a fin this model rates: an infeasible row."""
    row = evaluate({**SINK, "fin_tip_thickness": 2.5e-3}, COND).iloc[0]
    assert not row["feasible"] and "tip is thicker" in row["infeasible_reason"]
    assert np.isnan(row["thermal_resistance_K_per_W"])
