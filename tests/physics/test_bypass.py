"""Tests of optifin.physics.bypass: the split of the approach flow around an unshrouded sink.

Each test says in its docstring which kind it is: published check value, invariant or
cross-method. No published worked example of the Simons & Schmidt (1997) balance was at
hand, so the checks are a closed form derived here, scipy's brentq and invariants.
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.optimize

from optifin.errors import ModelError
from optifin.physics import registry
from optifin.physics.bypass import bypass_area, split_flow_bypass
from optifin.physics.pressure_drop import (
    channel_pressure_drop,
    fanning_channel,
    hydraulic_diameter_rectangle,
    loss_coefficients,
)

# Air at 300 K, 101325 Pa: CoolProp values quoted in physics.md §2.3 (oracles.md §2).
RHO, NU = 1.17700, 1.574962e-5

# The invented sink of physics.md §2.3 (inputs, not results).
W, L, H, N_FINS, T_FIN = 0.05, 0.05, 0.025, 20, 1.0e-3
A_SINK = W * H


def quadratic_loss(k):
    """Sink loss Δp = K ρ V_s²/2 on the frontal velocity."""
    return lambda v: k * 0.5 * RHO * v * v


def sink_23_pressure_drop(v_front):
    """Δp of the §2.3 sink at frontal velocity V_f (V_ch = V_f (1 + t/b) as in physics.md
    §2.3), built from optifin's pressure-drop correlations; undefined at V_f = 0."""
    v_front = np.asarray(v_front, dtype=float)
    b = (W - N_FINS * T_FIN) / (N_FINS - 1)
    v_ch = v_front * (1 + T_FIN / b)
    d_h = hydraulic_diameter_rectangle(b, H)
    re = v_ch * d_h / NU
    f = fanning_channel(re, L, d_h, b / H)
    k_c, k_e = loss_coefficients(1 - N_FINS * T_FIN / W)
    return channel_pressure_drop(k_c, k_e, f, L, d_h, RHO, v_ch)


# --- Areas -----------------------------------------------------------------------------------


def test_bypass_area_by_hand():
    """Invariant: (50 + 2*5)(25 + 10) mm² = 2100 mm² duct, minus 1250 mm² of sink = 850;
    zero clearances give no bypass; an infinite clearance gives inf, never NaN."""
    duct, a_b = bypass_area(W, H, [0.005, 0.0, 0.0, np.inf], [0.010, 0.0, np.inf, 0.0])
    np.testing.assert_allclose(duct[:2], [2100e-6, A_SINK], rtol=1e-14)
    np.testing.assert_allclose(a_b[:2], [850e-6, 0.0], atol=1e-18)
    assert np.all(np.isinf(duct[2:])) and np.all(np.isinf(a_b[2:]))


def test_bypass_area_rejects_invalid():
    """Invariant: non-positive sink dimensions and negative or NaN clearances raise."""
    with pytest.raises(ModelError):
        bypass_area(0.0, H, 0.0, 0.0)
    with pytest.raises(ModelError):
        bypass_area(W, H, -1e-3, 0.0)
    with pytest.raises(ModelError):
        bypass_area(W, H, 0.0, np.nan)


# --- The split -------------------------------------------------------------------------------


def test_zero_clearance_is_exactly_shrouded():
    """Invariant: with no bypass area all the air goes through the sink, exactly (no
    solve): V_s = V_app, V_b = 0 and Δp = Δp_sink(V_app)."""
    v_app = np.array([0.5, 2.0, 4.0])
    v_s, v_b, dp, ok = split_flow_bypass(v_app, A_SINK, 0.0, sink_23_pressure_drop, RHO)
    assert ok.all()
    np.testing.assert_array_equal(v_s, v_app)
    np.testing.assert_array_equal(v_b, 0.0)
    np.testing.assert_array_equal(dp, sink_23_pressure_drop(v_app))


def test_quadratic_sink_loss_closed_form():
    """Cross-method: with Δp = K ρ V_s²/2 the balance ρ(V_b² - V_s²)/2 = K ρ V_s²/2 gives
    V_b = sqrt(1 + K) V_s, and continuity V_app (A_s + A_b) = V_s A_s + V_b A_b then gives
    V_s = V_app (A_s + A_b) / (A_s + sqrt(1 + K) A_b) (derived by hand); in an open stream
    V_b = V_app, so V_s = V_app / sqrt(1 + K). Solver against these to 1e-9 m/s."""
    k = 8.0
    v_app = 2.5
    a_b = np.array([1e-5, 2e-4, 850e-6, 5e-3, 1.0, np.inf])
    v_s, v_b, dp, ok = split_flow_bypass(v_app, A_SINK, a_b, quadratic_loss(k), RHO)
    root = np.sqrt(1 + k)
    finite = np.isfinite(a_b)
    expected = np.where(
        finite,
        v_app * (A_SINK + np.where(finite, a_b, 0)) / (A_SINK + root * np.where(finite, a_b, 1)),
        v_app / root,
    )
    assert ok.all()
    np.testing.assert_allclose(v_s, expected, rtol=0, atol=1e-9)
    np.testing.assert_allclose(v_b, np.where(finite, root * expected, v_app), rtol=1e-9)
    np.testing.assert_allclose(dp, k * 0.5 * RHO * expected**2, rtol=1e-9)


def test_nonlinear_sink_against_brentq():
    """Cross-method: scipy.optimize.brentq on the same two equations, design by design, for
    the §2.3 sink (developing laminar friction plus end losses), several clearances."""
    v_app = np.array([0.8, 2.0, 3.0, 2.0])
    a_b = np.array([3e-4, 850e-6, 4e-3, np.inf])
    v_s, v_b, _, ok = split_flow_bypass(v_app, A_SINK, a_b, sink_23_pressure_drop, RHO)
    assert ok.all()
    for i in range(v_app.size):
        if np.isinf(a_b[i]):

            def vb(x, i=i):
                return v_app[i]

            top = v_app[i]
        else:

            def vb(x, i=i):
                return (v_app[i] * (A_SINK + a_b[i]) - x * A_SINK) / a_b[i]

            top = v_app[i] * (A_SINK + a_b[i]) / A_SINK

        def residual(x, vb=vb):
            return 0.5 * RHO * (vb(x) ** 2 - x * x) - float(sink_23_pressure_drop(x))

        ref = scipy.optimize.brentq(residual, 1e-9 * top, top, xtol=1e-14, rtol=1e-14)
        assert v_s[i] == pytest.approx(ref, rel=1e-10)
        assert v_b[i] == pytest.approx(vb(ref), rel=1e-9)


def test_mass_and_energy_balances_hold():
    """Invariant: continuity V_s A_s + V_b A_b = V_app A_duct and the Bernoulli balance
    ρ(V_b² - V_s²)/2 = Δp_sink hold at the solution, over a 2-D population."""
    v_app = np.array([[1.0], [3.0]])
    a_b = np.array([[1e-4, 850e-6, 3e-3]])
    v_s, v_b, dp, ok = split_flow_bypass(v_app, A_SINK, a_b, sink_23_pressure_drop, RHO)
    assert v_s.shape == (2, 3) and ok.all()
    np.testing.assert_allclose(v_s * A_SINK + v_b * a_b, v_app * (A_SINK + a_b), rtol=1e-12)
    np.testing.assert_allclose(0.5 * RHO * (v_b**2 - v_s**2), dp, rtol=1e-9)


def test_sink_velocity_falls_with_clearance():
    """Invariant: the wider the clearance, the less air goes through the sink, down to the
    open-stream value, which a very wide clearance approaches."""
    clearance = np.array([0.0, 1e-3, 3e-3, 1e-2, 3e-2, 0.1, 1.0, 30.0, np.inf])
    _, a_b = bypass_area(W, H, clearance, clearance)
    v_s, _, _, ok = split_flow_bypass(2.0, A_SINK, a_b, sink_23_pressure_drop, RHO)
    assert ok.all()
    assert np.all(np.diff(v_s) < 0)
    assert v_s[-2] == pytest.approx(v_s[-1], rel=1e-3)
    assert v_s[0] == 2.0 and v_s[-1] < 2.0


def test_high_loss_sink_in_wide_clearance_is_mostly_bypassed():
    """Invariant: for a high-loss sink (K = 200) with 0.2 m of clearance most of the duct
    air goes around it: the bypass fraction exceeds 0.99 (closed form 0.9990)."""
    _, a_b = bypass_area(W, H, 0.2, 0.2)
    v_s, v_b, _, ok = split_flow_bypass(2.0, A_SINK, a_b, quadratic_loss(200.0), RHO)
    fraction = v_b * a_b / (2.0 * (A_SINK + a_b))
    assert ok.all() and fraction > 0.99
    assert fraction == pytest.approx(1 - v_s * A_SINK / (2.0 * (A_SINK + a_b)), rel=1e-12)


def test_still_air_and_callable_contract():
    """Invariant: no approach flow gives zeros exactly; the sink callable is only ever
    called with positive velocities (friction correlations are undefined at V = 0)."""
    seen = []

    def dp(v):
        seen.append(np.min(v))
        return sink_23_pressure_drop(v)

    v_app = np.array([0.0, 0.0, 2.0, 1.0])
    a_b = np.array([850e-6, np.inf, 850e-6, 0.0])
    v_s, v_b, d, ok = split_flow_bypass(v_app, A_SINK, a_b, dp, RHO)
    assert ok.all()
    np.testing.assert_array_equal(v_s[:2], 0.0)
    np.testing.assert_array_equal(v_b[:2], 0.0)
    np.testing.assert_array_equal(d[:2], 0.0)
    assert min(seen) > 0


def test_failed_callable_is_flagged_not_silent():
    """Invariant: a sink callable that returns NaN for a design gives ok False and NaN
    results for that design only."""

    def dp(v):
        out = quadratic_loss(4.0)(v)
        return np.where(np.arange(v.size) == 1, np.nan, out)

    v_s, v_b, d, ok = split_flow_bypass(2.0, A_SINK, np.array([5e-4, 5e-4, 5e-4]), dp, RHO)
    np.testing.assert_array_equal(ok, [True, False, True])
    assert np.isnan(v_s[1]) and np.isnan(v_b[1]) and np.isnan(d[1])
    assert v_s[0] == pytest.approx(v_s[2], rel=1e-15)


def test_split_rejects_invalid_arguments():
    """Invariant: negative velocity, non-positive sink area or density, negative bypass
    area and a callable of the wrong shape raise ModelError."""
    dp = quadratic_loss(2.0)
    with pytest.raises(ModelError):
        split_flow_bypass(-1.0, A_SINK, 1e-3, dp, RHO)
    with pytest.raises(ModelError):
        split_flow_bypass(1.0, 0.0, 1e-3, dp, RHO)
    with pytest.raises(ModelError):
        split_flow_bypass(1.0, A_SINK, -1e-3, dp, RHO)
    with pytest.raises(ModelError):
        split_flow_bypass(1.0, A_SINK, 1e-3, dp, 0.0)
    with pytest.raises(ModelError, match="shape"):
        split_flow_bypass(1.0, A_SINK, np.array([1e-3, 2e-3]), lambda v: np.ones(3), RHO)


def test_split_registered_with_reference():
    """Invariant: the registry lists the bypass balance with its source, for run.json."""
    entry = registry.get("split_flow_bypass")
    assert "Simons & Schmidt" in entry.reference and "from memory" in entry.reference
