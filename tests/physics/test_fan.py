"""Tests of optifin.physics.fan: fan curves, system losses, operating point, entropy rate.

Each test says in its docstring which kind it is: published check value, invariant or
cross-method. Numbers tagged [calc] in the reference notes (physics.md) were computed from
the formula; where a test uses one it is recomputed here by an independent route.
"""

from __future__ import annotations

import math

import fluids
import numpy as np
import pytest
import scipy.interpolate
import scipy.optimize

from optifin.errors import ModelError
from optifin.physics import registry
from optifin.physics.fan import (
    FanCurve,
    combine,
    entropy_generation_rate,
    fan_curve,
    fan_pressure,
    operating_point,
    system_loss_coefficient,
    system_loss_reference,
)

CFM = 0.3048**3 / 60.0  # m^3/s; exact from the international foot (0.3048 m)

# An invented curve with the magnitudes of an 80 mm fan (common practice, no source).
FLOW = np.array([0.0, 8.0, 16.0, 24.0, 30.0, 35.0]) * CFM
PRESSURE = np.array([30.0, 25.0, 18.7, 11.2, 5.0, 0.0])


@pytest.fixture
def curve() -> FanCurve:
    return fan_curve(FLOW, PRESSURE, name="test80")


# --- Curve validation ------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("flow", "pressure", "message"),
    [
        ([0.0], [10.0], "at least 2 points"),
        ([0.0, 1.0, 1.0], [10.0, 5.0, 0.0], "strictly increasing"),
        ([0.0, 2.0, 1.0], [10.0, 5.0, 0.0], "strictly increasing"),
        ([0.0, 1.0, 2.0], [10.0, 12.0, 0.0], "must not increase"),
        ([-1.0, 1.0, 2.0], [10.0, 5.0, 0.0], "flows must be >= 0"),
        ([0.0, 1.0, 2.0], [10.0, 5.0, -1.0], "pressures must be >= 0"),
        ([0.5, 1.0, 2.0], [10.0, 5.0, 0.0], "shut-off"),
        ([0.0, 1.0, 2.0], [10.0, 5.0, 1.0], "free delivery"),
        ([0.0, 1.0, 2.0], [10.0, 0.0, 0.0], "only the last point"),
        ([0.0, 1.0, 2.0], [10.0, 5.0], "every point needs both"),
        ([0.0, np.nan, 2.0], [10.0, 5.0, 0.0], "finite"),
        ([[0.0, 1.0]], [[1.0, 0.0]], "1-D"),
    ],
)
def test_fan_curve_rejects_invalid_tables(flow, pressure, message):
    """Invariant: an invalid table raises ModelError naming the curve and the fault."""
    with pytest.raises(ModelError, match=message) as info:
        fan_curve(flow, pressure, name="bad")
    assert "'bad'" in str(info.value)


def test_direct_construction_is_validated_too():
    """Invariant: FanCurve(...) runs the same checks as fan_curve(...)."""
    with pytest.raises(ModelError, match="must not increase"):
        FanCurve(np.array([0.0, 1.0, 2.0]), np.array([1.0, 2.0, 0.0]))


def test_curve_arrays_are_read_only_copies():
    """Invariant: the inputs are not aliased or mutated; the stored arrays are frozen."""
    flow, pressure = FLOW.copy(), PRESSURE.copy()
    c = fan_curve(flow, pressure)
    flow[1] = 99.0
    assert c.flow[1] == FLOW[1]
    with pytest.raises(ValueError):
        c.pressure[0] = 1.0


def test_free_delivery_and_shutoff(curve):
    """Invariant: the ends of the table are the free delivery and the shut-off pressure."""
    assert curve.free_delivery == FLOW[-1]
    assert curve.shutoff_pressure == PRESSURE[0]
    assert fan_pressure(curve, curve.free_delivery) == 0.0
    assert fan_pressure(curve, 0.0) == curve.shutoff_pressure


def test_equal_curves_compare_and_hash_equal(curve):
    """Invariant: value equality and hashing (a curve sits in a hashable Condition)."""
    twin = fan_curve(list(FLOW), list(PRESSURE), name="test80")
    assert twin == curve and hash(twin) == hash(curve)
    assert fan_curve(FLOW, PRESSURE * 1.01, name="test80") != curve


# --- Fan pressure ----------------------------------------------------------------------------


def test_fan_pressure_against_scipy_interp1d(curve):
    """Cross-method: scipy's linear interpolation with linear extrapolation past the end
    (``fill_value="extrapolate"`` continues the last segment) over the table and beyond
    free delivery, where the pressure must turn negative."""
    q = np.linspace(0.0, 1.5 * curve.free_delivery, 301)
    oracle = scipy.interpolate.interp1d(FLOW, PRESSURE, kind="linear", fill_value="extrapolate")
    np.testing.assert_allclose(fan_pressure(curve, q), oracle(q), rtol=1e-12, atol=1e-12)
    assert np.all(fan_pressure(curve, q[q > curve.free_delivery]) < 0)


def test_fan_pressure_hits_table_points_and_keeps_shape(curve):
    """Invariant: the table's points are reproduced exactly, array shape is kept."""
    np.testing.assert_array_equal(fan_pressure(curve, FLOW), PRESSURE)
    assert fan_pressure(curve, np.zeros((3, 4))).shape == (3, 4)


def test_fan_pressure_rejects_negative_flow(curve):
    """Invariant: reverse flow is outside the curve and raises."""
    with pytest.raises(ModelError, match=">= 0"):
        fan_pressure(curve, np.array([0.001, -0.001]))


# --- Combining fans --------------------------------------------------------------------------


@pytest.mark.parametrize("count", [2, 3])
def test_parallel_fans_add_flow_at_equal_pressure(curve, count):
    """Invariant: n fans in parallel deliver n times the flow at every pressure."""
    both = combine(curve, count, "parallel")
    q = np.linspace(0.0, curve.free_delivery, 50)
    np.testing.assert_allclose(fan_pressure(both, count * q), fan_pressure(curve, q), rtol=1e-12)
    assert both.free_delivery == pytest.approx(count * curve.free_delivery, rel=1e-15)
    assert both.shutoff_pressure == curve.shutoff_pressure


@pytest.mark.parametrize("count", [2, 3])
def test_series_fans_add_pressure_at_equal_flow(curve, count):
    """Invariant: n fans in series give n times the pressure at every flow."""
    both = combine(curve, count, "series")
    q = np.linspace(0.0, curve.free_delivery, 50)
    np.testing.assert_allclose(fan_pressure(both, q), count * fan_pressure(curve, q), rtol=1e-12)
    assert both.free_delivery == curve.free_delivery


def test_combine_one_fan_and_invalid_arguments(curve):
    """Invariant: one fan is itself; a bad count or arrangement raises."""
    assert combine(curve, 1, "series") is curve
    for count in (0, -2, 1.5, True):
        with pytest.raises(ModelError, match="fan count"):
            combine(curve, count, "parallel")
    with pytest.raises(ModelError, match="parallel, series"):
        combine(curve, 2, "push-pull")


# --- System losses ---------------------------------------------------------------------------


def test_system_loss_coefficient_against_fluids():
    """Cross-method: ``fluids.dP_from_K(K, rho, V)`` (fluids 1.3.1) = K rho V^2/2 at
    V = flow/area, for a population of K and flows."""
    flow = np.array([1e-3, 5e-3, 2e-2])
    k = np.array([0.5, 1.5, 4.0])
    area, rho = 1.2e-3, 1.177
    expected = [
        fluids.dP_from_K(K=ki, rho=rho, V=qi / area) for ki, qi in zip(k, flow, strict=True)
    ]
    np.testing.assert_allclose(system_loss_coefficient(flow, k, area, rho), expected, rtol=1e-13)


def test_system_loss_reference_scales_with_flow_squared():
    """Invariant: Δp_ref at Q_ref, four times that at twice the flow, and the same curve as
    the loss coefficient K = Δp_ref / (ρ (Q_ref/A)²/2) it implies."""
    q_ref, dp_ref = 20 * CFM, 8.0
    assert system_loss_reference(q_ref, dp_ref, q_ref) == pytest.approx(dp_ref, rel=1e-15)
    assert system_loss_reference(2 * q_ref, dp_ref, q_ref) == pytest.approx(4 * dp_ref)
    area, rho = 4e-3, 1.177
    k = dp_ref / (0.5 * rho * (q_ref / area) ** 2)
    q = np.linspace(0.0, 3 * q_ref, 7)
    np.testing.assert_allclose(
        system_loss_reference(q, dp_ref, q_ref), system_loss_coefficient(q, k, area, rho)
    )


def test_system_losses_reject_invalid_arguments():
    """Invariant: non-physical coefficients, areas, densities and reference flows raise."""
    with pytest.raises(ModelError):
        system_loss_coefficient(1e-3, -1.0, 1e-3, 1.2)
    with pytest.raises(ModelError):
        system_loss_coefficient(1e-3, 1.0, 0.0, 1.2)
    with pytest.raises(ModelError):
        system_loss_coefficient(1e-3, 1.0, 1e-3, 0.0)
    with pytest.raises(ModelError):
        system_loss_reference(1e-3, 5.0, 0.0)


# --- Operating point -------------------------------------------------------------------------


def test_operating_point_linear_fan_quadratic_system_closed_form():
    """Cross-method: a straight fan curve p0 (1 - Q/Q0) against a system c Q² meets it at
    the positive root of c Q² + (p0/Q0) Q - p0 = 0 (quadratic formula, by hand), for a
    population of systems at once."""
    p0, q0 = 40.0, 0.02
    c = np.array([1e3, 1e4, 1e5, 1e6, 1e7])
    line = fan_curve([0.0, q0], [p0, 0.0])
    flow, pressure, ok = operating_point(line, lambda q: c * q * q, c.size)
    b = p0 / q0
    expected = (-b + np.sqrt(b * b + 4 * c * p0)) / (2 * c)
    assert ok.all()
    np.testing.assert_allclose(flow, expected, rtol=1e-10)
    np.testing.assert_allclose(pressure, c * expected**2, rtol=1e-9)


def test_operating_point_against_brentq(curve):
    """Cross-method: scipy.optimize.brentq on the same residual, design by design, on a
    multi-point curve with laminar-plus-turbulent systems a Q + b Q²."""
    a = np.array([100.0, 1000.0, 3000.0, 50.0])
    b = np.array([1e4, 2e5, 1e6, 5e7])

    def system(q):
        return a * q + b * q * q

    flow, pressure, ok = operating_point(curve, system, a.size)
    assert ok.all()
    for i in range(a.size):
        root = scipy.optimize.brentq(
            lambda q, i=i: float(fan_pressure(curve, q)) - (a[i] * q + b[i] * q * q),
            0.0,
            curve.free_delivery,
            xtol=1e-15,
            rtol=1e-14,
        )
        assert flow[i] == pytest.approx(root, rel=1e-10)
        assert pressure[i] == pytest.approx(a[i] * root + b[i] * root**2, rel=1e-9)


def test_operating_point_stall_is_flagged(curve):
    """Invariant: a system needing more than the shut-off pressure at zero flow has no
    crossing: ok is False and flow and pressure are NaN there, the others are solved."""
    offset = np.array([0.0, 2 * curve.shutoff_pressure, 0.5 * curve.shutoff_pressure])
    flow, pressure, ok = operating_point(curve, lambda q: offset + 1e5 * q * q, 3)
    np.testing.assert_array_equal(ok, [True, False, True])
    assert np.isnan(flow[1]) and np.isnan(pressure[1])
    assert np.all(np.isfinite(flow[[0, 2]])) and flow[2] < flow[0]


def test_operating_point_limits(curve):
    """Invariant: no system loss runs the fan at free delivery; an enormous loss drives the
    flow towards zero and the pressure towards shut-off."""
    flow, pressure, ok = operating_point(curve, lambda q: 0.0 * q, 2)
    assert ok.all()
    np.testing.assert_allclose(flow, curve.free_delivery, rtol=1e-12)
    np.testing.assert_allclose(pressure, 0.0, atol=1e-9)
    flow, pressure, ok = operating_point(curve, lambda q: 1e12 * q * q, 1)
    assert ok[0] and flow[0] < 1e-3 * curve.free_delivery
    assert pressure[0] == pytest.approx(curve.shutoff_pressure, rel=1e-3)


def test_operating_point_never_asks_for_zero_flow(curve):
    """Invariant (contract with the sink model): the system curve is only called with
    positive flows, since friction correlations have no value at Re = 0."""
    seen = []

    def system(q):
        seen.append(q.min())
        return 5e5 * q * q

    operating_point(curve, system, 4)
    assert min(seen) > 0


def test_more_fans_more_flow_less_than_proportional(curve):
    """Invariant: on a rising system curve two fans in parallel deliver more than one but
    less than twice its flow; two in series give more pressure but less than twice."""
    c = np.array([2e4, 2e5, 2e6])

    def system(q):
        return c * q * q

    one, p_one, _ = operating_point(curve, system, 3)
    two, _, _ = operating_point(combine(curve, 2, "parallel"), system, 3)
    _, p_series, _ = operating_point(combine(curve, 2, "series"), system, 3)
    assert np.all((two > one) & (two < 2 * one))
    assert np.all((p_series > p_one) & (p_series < 2 * p_one))


def test_operating_point_bad_system_shape_and_count(curve):
    """Invariant: a system callable of the wrong shape and a bad design count raise."""
    with pytest.raises(ModelError, match="shape"):
        operating_point(curve, lambda q: np.ones(q.size + 1), 3)
    with pytest.raises(ModelError, match="number of designs"):
        operating_point(curve, lambda q: q, -1)
    flow, pressure, ok = operating_point(curve, lambda q: q, 0)
    assert flow.shape == pressure.shape == ok.shape == (0,)


# --- Entropy generation ----------------------------------------------------------------------


def test_entropy_generation_check_value_row_15():
    """Published check value: physics.md check table row 15 (Culham & Muzychka 2001 form
    [from memory]; the number is [calc]): Q = 30 W, T = 300 K, R = 0.506415 K/W,
    Δp = 25.1067 Pa, V_f = 2 m/s on a 50 mm x 25 mm front -> 5.27338e-3 W/K, rel 1e-5.

    By hand: Q² R / T² = 900 * 0.506415 / 90000 = 5.06415e-3 W/K; the flow is
    2 * 0.05 * 0.025 = 2.5e-3 m³/s, so Δp V / T = 25.1067 * 2.5e-3 / 300 = 2.092225e-4 W/K;
    the sum is 5.2733725e-3 W/K (the table's 5.27338e-3 used the unrounded R; it is within
    2e-6 relative)."""
    flow = 2.0 * 0.050 * 0.025
    s = entropy_generation_rate(30.0, 0.506415, 300.0, 25.1067, flow)
    assert s == pytest.approx(5.27338e-3, rel=1e-5)
    assert s == pytest.approx(5.06415e-3 + 2.092225e-4, rel=1e-12)


def test_entropy_generation_drag_form_and_bejan_heat_term():
    """Cross-method: (1) Culham & Muzychka's friction term F_d V_f / T with the drag
    F_d = Δp W H on the frontal area equals Δp V / T; (2) the heat term is the leading order
    of the exact entropy generated by heat Q falling from T_b = T + Q R to T,
    Q (1/T - 1/T_b) = Q² R / (T T_b), so the ratio of the two is exactly T_b / T."""
    dp, w, h, v_f, t = 25.1067, 0.05, 0.025, 2.0, 300.0
    drag = dp * w * h
    s_friction = entropy_generation_rate(0.0, 0.0, t, dp, v_f * w * h)
    assert s_friction == pytest.approx(drag * v_f / t, rel=1e-14)
    q, r = np.array([5.0, 30.0, 100.0]), 0.5
    t_b = t + q * r
    s_heat = entropy_generation_rate(q, r, t, 0.0, 0.0)
    np.testing.assert_allclose(s_heat / (q * (1 / t - 1 / t_b)), t_b / t, rtol=1e-12)


def test_entropy_generation_broadcasts_and_validates():
    """Invariant: broadcasts over a population; T <= 0 and R < 0 raise."""
    s = entropy_generation_rate(np.full((2, 3), 10.0), 0.4, 300.0, np.arange(3.0), 1e-3)
    assert s.shape == (2, 3) and np.all(np.diff(s, axis=1) > 0)
    with pytest.raises(ModelError):
        entropy_generation_rate(10.0, 0.4, 0.0, 1.0, 1e-3)
    with pytest.raises(ModelError):
        entropy_generation_rate(10.0, -0.4, 300.0, 1.0, 1e-3)


def test_entropy_generation_registered_with_reference():
    """Invariant: the registry lists the definition with its source, for run.json."""
    entry = registry.get("entropy_generation_rate")
    assert "Culham & Muzychka" in entry.reference and "Bejan" in entry.reference
    assert entry.function is entropy_generation_rate
    assert math.isclose(entry.function(1.0, 1.0, 1.0, 0.0, 0.0), 1.0)
