"""Tests of optifin.physics.fins: single fins of uniform cross-section.

Every test names its kind: published check value, invariant or cross-method. Numbers marked
[calc] come from the reference notes (physics.md) §1 or oracles.md §3, where they were
computed from the closed forms; each of them is cross-checked here by an independent
numerical solution of the fin equation (scipy.integrate.solve_bvp).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import solve_bvp
from scipy.optimize import brentq, minimize_scalar

from optifin.physics import fins
from optifin.physics.registry import get

# the invented pin of physics.md §1: Al 6063-T5 (k = 209), D = 3 mm, L = 30 mm, h = 50,
# θ_b = 50 K [calc]
PIN = {"h": 50.0, "k": 209.0, "d": 3e-3, "length": 30e-3, "theta_b": 50.0}


def _pin_geometry(d):
    return np.pi * d, np.pi * d**2 / 4.0


def _bvp_fin(h, k, perimeter, cross_section, length, theta_b, tip):
    """Solve θ'' = m² θ, θ(0) = θ_b, with -kθ'(L) = hθ(L) or θ'(L) = 0, by solve_bvp.

    Returns (heat rate -k A_c θ'(0) [W], solution in the dimensional x).
    """
    m = np.sqrt(h * perimeter / (k * cross_section))
    ml = m * length
    biot_tip = h * length / k if tip == "convective" else 0.0

    def rhs(xi, y):  # ξ = x/L, y = θ/θ_b
        return np.vstack([y[1], ml**2 * y[0]])

    def bc(y0, y1):
        return np.array([y0[0] - 1.0, y1[1] + biot_tip * y1[0]])

    xi = np.linspace(0.0, 1.0, 401)
    guess = np.vstack([np.exp(-ml * xi), -ml * np.exp(-ml * xi)])
    sol = solve_bvp(rhs, bc, xi, guess, tol=1e-11, max_nodes=200000)
    assert sol.success, sol.message
    q = -k * cross_section * theta_b * sol.sol(0.0)[1] / length

    def theta(x):
        return theta_b * sol.sol(np.asarray(x) / length)[0]

    return q, theta


# fins for the closed-form-against-ODE tests: (h, k, P, A_c, L, θ_b)
_FINS = {
    "invented pin": (50.0, 209.0, *_pin_geometry(3e-3), 30e-3, 50.0),
    "stubby pin": (200.0, 15.0, *_pin_geometry(6e-3), 8e-3, 30.0),
    "plate per unit width": (50.0, 167.0, 2.0, 1.5e-3, 50e-3, 40.0),
    "long thin plate": (100.0, 390.0, 2.0, 0.5e-3, 0.2, 25.0),
}


@pytest.mark.parametrize("name", list(_FINS))
def test_closed_forms_against_solve_bvp(name):
    """Cross-method: adiabatic- and convective-tip heat rates and θ(x) against solve_bvp."""
    h, k, p, a_c, length, theta_b = _FINS[name]
    for tip, closed in (
        ("adiabatic", fins.heat_rate_adiabatic_tip),
        ("convective", fins.heat_rate_convective_tip),
    ):
        q_ode, theta_ode = _bvp_fin(h, k, p, a_c, length, theta_b, tip)
        q = closed(h, k, p, a_c, length, theta_b)
        assert q == pytest.approx(q_ode, rel=1e-6)
        x = np.linspace(0.0, length, 7)
        np.testing.assert_allclose(
            fins.excess_temperature(h, k, p, a_c, length, theta_b, x, tip=tip),
            theta_ode(x),
            rtol=1e-6,
        )


def test_infinite_fin_against_long_fin():
    """Cross-method: M = √(hPkA_c) θ_b against solve_bvp for a fin with mL = 20."""
    h, k, p, a_c, _, theta_b = _FINS["invented pin"]
    m = fins.fin_parameter(h, k, p, a_c)
    length = 20.0 / m
    q_ode, theta_ode = _bvp_fin(h, k, p, a_c, length, theta_b, "convective")
    assert fins.heat_rate_infinite(h, k, p, a_c, theta_b) == pytest.approx(q_ode, rel=1e-6)
    x = np.linspace(0.0, 5.0 / m, 6)
    np.testing.assert_allclose(
        fins.excess_temperature(h, k, p, a_c, length, theta_b, x, tip="infinite"),
        theta_ode(x),
        rtol=1e-6,
    )
    # and the finite-fin closed forms reach M without overflow for very long fins
    for closed in (fins.heat_rate_adiabatic_tip, fins.heat_rate_convective_tip):
        q = closed(h, k, p, a_c, 1e4 / m, theta_b)
        assert q == pytest.approx(fins.heat_rate_infinite(h, k, p, a_c, theta_b), rel=1e-12)


def test_corrected_length_against_solve_bvp():
    """Cross-method: M tanh(m L_c) approximates the convective tip (small h t/k)."""
    for name in ("invented pin", "plate per unit width", "long thin plate"):
        h, k, p, a_c, length, theta_b = _FINS[name]
        q_ode, _ = _bvp_fin(h, k, p, a_c, length, theta_b, "convective")
        q_lc = fins.heat_rate_corrected_length(h, k, p, a_c, length, theta_b)
        # these fins have h t/k (or h D/2k) <= 4.5e-4, far inside Incropera's 0.0625
        # [from memory]; the approximation is then within 1e-5
        assert q_lc == pytest.approx(q_ode, rel=1e-5)


def test_ordering_of_tip_models_for_a_short_fin():
    """Invariant: infinite > convective tip ≈ corrected length > adiabatic tip (short fin)."""
    h, k, p, a_c, _, theta_b = _FINS["stubby pin"]
    length = 8e-3  # mL = 0.75, h D/(2k) = 0.04: the tip carries a sizeable share
    q_inf = fins.heat_rate_infinite(h, k, p, a_c, theta_b)
    q_conv = fins.heat_rate_convective_tip(h, k, p, a_c, length, theta_b)
    q_lc = fins.heat_rate_corrected_length(h, k, p, a_c, length, theta_b)
    q_ad = fins.heat_rate_adiabatic_tip(h, k, p, a_c, length, theta_b)
    assert q_inf > q_conv > q_ad
    assert q_inf > q_lc > q_ad
    assert abs(q_lc / q_conv - 1) < 0.01 < abs(q_ad / q_conv - 1)


def test_invented_pin_check_values():
    """Cross-method: physics.md §1 invented pin [calc], checked against solve_bvp here.

    Percent differences against the exact convective tip: infinite +100.03 %, adiabatic
    -2.02 %, corrected length -0.0001 %.
    """
    h, k, d, length, theta_b = PIN.values()
    p, a_c = _pin_geometry(d)
    m = fins.pin_fin_parameter(h, k, d)
    q_inf = fins.heat_rate_infinite(h, k, p, a_c, theta_b)
    q_ad = fins.heat_rate_adiabatic_tip(h, k, p, a_c, length, theta_b)
    q_conv = fins.heat_rate_convective_tip(h, k, p, a_c, length, theta_b)
    q_lc = fins.heat_rate_corrected_length(h, k, p, a_c, length, theta_b)
    # physics.md §1 [calc]
    assert m == pytest.approx(17.85999, rel=1e-6)
    assert fins.fin_parameter(h, k, p, a_c) == pytest.approx(m, rel=1e-14)
    assert q_inf == pytest.approx(1.319259, rel=1e-6)
    assert q_ad == pytest.approx(0.646175, rel=1e-6)
    assert q_conv == pytest.approx(0.659520, rel=1e-6)
    assert q_lc == pytest.approx(0.659519, rel=1e-6)
    assert fins.pin_fin_efficiency(h, k, d, length) == pytest.approx(0.910272, rel=1e-6)
    assert fins.fin_effectiveness(q_conv, h, a_c, theta_b) == pytest.approx(37.321, rel=1e-4)
    tip = fins.excess_temperature(h, k, p, a_c, length, theta_b, length)
    assert tip == pytest.approx(43.30755, rel=1e-6)
    # the independent check: solve_bvp
    q_ode, theta_ode = _bvp_fin(h, k, p, a_c, length, theta_b, "convective")
    assert q_conv == pytest.approx(q_ode, rel=1e-8)
    assert tip == pytest.approx(theta_ode(length), rel=1e-8)
    percent = {
        name: 100.0 * (q / q_conv - 1.0)
        for name, q in (("infinite", q_inf), ("adiabatic", q_ad), ("corrected", q_lc))
    }
    assert percent["infinite"] == pytest.approx(100.03, abs=0.01)
    assert percent["adiabatic"] == pytest.approx(-2.02, abs=0.01)
    assert abs(percent["corrected"]) < 2e-4


def test_incropera_example_3_9_infinite_rods():
    """Published check value: Incropera et al. 6th ed. Example 3.9 [from memory].

    Very long rods, D = 5 mm, h = 100 W/m²K, T_b = 100 °C, T∞ = 25 °C: q_f = 8.3 W
    (Cu, k = 398), 5.6 W (2024 Al, k = 180), 1.6 W (AISI 304, k = 14), published rounded;
    the infinite-fin result holds for L > 2.65/m = 0.19, 0.13, 0.04 m.
    """
    d, h, theta_b = 5e-3, 100.0, 75.0
    p, a_c = _pin_geometry(d)
    k = np.array([398.0, 180.0, 14.0])
    q = fins.heat_rate_infinite(h, k, p, a_c, theta_b)
    np.testing.assert_allclose(q, [8.3, 5.6, 1.6], atol=0.05)
    np.testing.assert_allclose(q, [8.3096, 5.5882, 1.5585], rtol=1e-4)  # physics.md [calc]
    m = fins.pin_fin_parameter(h, k, d)
    np.testing.assert_allclose(2.65 / m, [0.19, 0.13, 0.04], atol=0.005)
    # the 2.65 is where tanh(mL) = 0.99: an adiabatic-tip rod that long is within 1 %
    q_long = fins.heat_rate_adiabatic_tip(h, k, p, a_c, 2.65 / m, theta_b)
    np.testing.assert_allclose(q_long / q, 0.99, atol=1e-3)


def test_efficiency_limits():
    """Invariant: η = tanh(x)/x is exactly 1 at x = 0, smooth through the series switch."""
    assert fins.efficiency_from_ml(0.0) == 1.0
    x = np.array([0.0, 1e-8, 9.9e-5, 1.01e-4, 1e-3, 0.1, 1.0, 10.0, 1e3])
    eta = fins.efficiency_from_ml(x)
    assert np.all(np.isfinite(eta))
    assert np.all(np.diff(eta) <= 0)
    np.testing.assert_allclose(eta[1:4], 1.0 - x[1:4] ** 2 / 3.0, rtol=1e-15)
    np.testing.assert_allclose(eta[2:], np.tanh(x[2:]) / x[2:], rtol=2e-16)  # both branches
    assert eta[-1] == pytest.approx(1e-3, rel=1e-12)  # → 1/x
    # a fin with h → 0 is isothermal: efficiency → 1, both tips
    for tip in ("corrected", "adiabatic"):
        assert fins.plate_fin_efficiency(0.0, 200.0, 1e-3, 0.03, tip=tip) == 1.0
        assert fins.pin_fin_efficiency(1e-9, 200.0, 2e-3, 0.02, tip=tip) == pytest.approx(1.0)
    assert fins.heat_rate_convective_tip(0.0, 200.0, 2.0, 1e-3, 0.03, 40.0) == 0.0


# oracles.md §3 [calc]: (kind, L, t or D, k, h) -> (adiabatic η, corrected η, exact η)
_ORACLE_TABLE_3 = [
    ("plate", 30e-3, 1.0e-3, 200.0, 10.0, 0.971042, 0.970104, 0.970104),
    ("plate", 50e-3, 1.5e-3, 167.0, 50.0, 0.761935, 0.756821, 0.756821),
    ("plate", 20e-3, 0.5e-3, 390.0, 100.0, 0.882494, 0.879962, 0.879962),
    ("pin", 20e-3, 2.0e-3, 200.0, 50.0, None, 0.935384, 0.935385),
    ("pin", 40e-3, 3.0e-3, 167.0, 30.0, None, 0.885589, 0.885589),
]


@pytest.mark.parametrize("case", _ORACLE_TABLE_3)
def test_oracles_table_3_efficiencies(case):
    """Cross-method: oracles.md §3 efficiencies [calc], re-checked against solve_bvp.

    Plate efficiencies per unit width (P = 2, A_c = t), the corrected and exact ones on the
    area 2L + t, the adiabatic one on 2L; pins on π D L + π D²/4 (corrected, exact).
    """
    kind, length, size, k, h, eta_ad, eta_lc, eta_exact = case
    theta_b = 1.0
    if kind == "plate":
        p, a_c = 2.0, size
        eta = fins.plate_fin_efficiency(h, k, size, length)
        assert fins.plate_fin_efficiency(h, k, size, length, "adiabatic") == pytest.approx(
            eta_ad, abs=6e-7
        )
    else:
        p, a_c = _pin_geometry(size)
        eta = fins.pin_fin_efficiency(h, k, size, length)
    assert eta == pytest.approx(eta_lc, abs=6e-7)
    area_with_tip = p * length + a_c
    q_exact = fins.heat_rate_convective_tip(h, k, p, a_c, length, theta_b)
    assert q_exact / (h * area_with_tip * theta_b) == pytest.approx(eta_exact, abs=6e-7)
    q_ode, _ = _bvp_fin(h, k, p, a_c, length, theta_b, "convective")
    assert q_ode / (h * area_with_tip * theta_b) == pytest.approx(eta_exact, abs=6e-7)


def test_efficiency_area_conventions():
    """Invariant: each efficiency times h, its own area and θ_b gives its heat rate."""
    h, k, t, height, w, theta_b = 40.0, 209.0, 1.5e-3, 25e-3, 50e-3, 40.0
    p, a_c = 2.0 * w, w * t  # edges neglected
    eta_c = fins.plate_fin_efficiency(h, k, t, height, tip="corrected")
    eta_a = fins.plate_fin_efficiency(h, k, t, height, tip="adiabatic")
    assert eta_c * h * (2 * height + t) * w * theta_b == pytest.approx(
        fins.heat_rate_corrected_length(h, k, p, a_c, height, theta_b), rel=1e-13
    )
    assert eta_a * h * (2 * height) * w * theta_b == pytest.approx(
        fins.heat_rate_adiabatic_tip(h, k, p, a_c, height, theta_b), rel=1e-13
    )
    d, length = 2e-3, 20e-3
    pp, pa = _pin_geometry(d)
    eta_pin = fins.pin_fin_efficiency(h, k, d, length, tip="adiabatic")
    assert eta_pin * h * np.pi * d * length * theta_b == pytest.approx(
        fins.heat_rate_adiabatic_tip(h, k, pp, pa, length, theta_b), rel=1e-13
    )
    with pytest.raises(ValueError):
        fins.plate_fin_efficiency(h, k, t, height, tip="insulated")
    with pytest.raises(ValueError):
        fins.excess_temperature(h, k, p, a_c, height, theta_b, 0.0, tip="fixed")


def test_invented_plate_fin_perimeter_choice():
    """Cross-method: physics.md §1 invented plate fin [calc], both perimeters, vs solve_bvp.

    k = 209, t = 1.5 mm, height 25 mm, flow length w = 50 mm, h = 40, θ_b = 40 K.
    """
    k, t, height, w, h, theta_b = 209.0, 1.5e-3, 25e-3, 50e-3, 40.0, 40.0
    p_exact, a_c = 2 * (w + t), w * t
    assert fins.fin_parameter(h, k, p_exact, a_c) == pytest.approx(16.21231, rel=1e-6)
    q_exact = fins.heat_rate_convective_tip(h, k, p_exact, a_c, height, theta_b)
    assert q_exact == pytest.approx(4.010096, rel=1e-6)
    assert fins.fin_effectiveness(q_exact, h, a_c, theta_b) == pytest.approx(33.417, rel=1e-4)
    q_ode, _ = _bvp_fin(h, k, p_exact, a_c, height, theta_b, "convective")
    assert q_exact == pytest.approx(q_ode, rel=1e-7)
    # edges neglected (P = 2w): m = √(2h/kt)
    assert fins.plate_fin_parameter(h, k, t) == pytest.approx(15.97446, rel=1e-6)
    q_lc = fins.heat_rate_corrected_length(h, k, 2 * w, a_c, height, theta_b)
    assert q_lc == pytest.approx(3.902348, rel=1e-6)
    assert fins.plate_fin_efficiency(h, k, t, height) == pytest.approx(0.947172, rel=1e-6)
    assert fins.plate_fin_efficiency(h, k, t, height, "adiabatic") == pytest.approx(
        0.950023, rel=1e-6
    )
    assert q_exact / q_lc - 1 == pytest.approx(0.0276, abs=5e-4)  # the "2.7 %" of physics.md


def test_geometry_special_cases_and_broadcasting():
    """Invariant: plate and pin forms of m and L_c equal the general ones; arrays broadcast."""
    h = np.array([[10.0], [100.0]])  # (2, 1)
    t = np.array([0.5e-3, 1e-3, 2e-3])  # (3,)
    w = 0.07
    np.testing.assert_allclose(
        fins.plate_fin_parameter(h, 200.0, t), fins.fin_parameter(h, 200.0, 2 * w, w * t)
    )
    np.testing.assert_allclose(fins.corrected_length(0.03, 2 * w, w * t), 0.03 + t / 2)
    d = t
    p, a_c = _pin_geometry(d)
    np.testing.assert_allclose(
        fins.pin_fin_parameter(h, 200.0, d), fins.fin_parameter(h, 200, p, a_c)
    )
    np.testing.assert_allclose(fins.corrected_length(0.03, p, a_c), 0.03 + d / 4)
    assert fins.plate_fin_efficiency(h, 200.0, t, 0.03).shape == (2, 3)
    assert fins.transverse_biot(h, 200.0, t).shape == (2, 3)
    assert fins.transverse_biot(100.0, 200.0, 1e-3) == pytest.approx(2.5e-4, rel=1e-15)


def test_schmidt_least_material_fin():
    """Cross-method: Schmidt's optimum against a scipy root and a numerical maximisation.

    Schmidt (1926) [from memory]: at fixed profile area t H the adiabatic-tip plate fin
    carries the most heat where sinh(2mH) = 6mH; mH = 1.419223, η = 0.626707 (physics.md
    [calc]).
    """
    root = brentq(lambda x: np.sinh(2 * x) - 6 * x, 0.5, 3.0, xtol=1e-15, rtol=1e-15)
    assert fins.SCHMIDT_ML == pytest.approx(root, rel=1e-13)
    assert fins.SCHMIDT_ML == pytest.approx(1.419223, abs=1e-6)
    assert fins.efficiency_from_ml(fins.SCHMIDT_ML) == pytest.approx(0.626707, abs=1e-6)
    h, k, profile = 60.0, 180.0, 30e-6  # profile area t H [m²] per unit width

    def negative_q(height):
        t = profile / height
        return -fins.heat_rate_adiabatic_tip(h, k, 2.0, t, height, 1.0)

    best = minimize_scalar(
        negative_q, bounds=(1e-3, 0.5), method="bounded", options={"xatol": 1e-12}
    )
    height = best.x
    t_best = profile / height
    ml = fins.plate_fin_parameter(h, k, t_best) * height
    assert ml == pytest.approx(fins.SCHMIDT_ML, rel=1e-5)
    assert fins.least_material_plate_thickness(h, k, height) == pytest.approx(t_best, rel=1e-5)
    assert fins.least_material_plate_thickness(1.0, 1.0, 1.0) == pytest.approx(0.99295, rel=1e-5)


def test_conductance_with_root_resistance_limits():
    """Invariant: G/(1 + G R) -> G for R -> 0, -> 1/R for G -> inf; series of resistances."""
    g = np.array([0.0, 0.5, 2.0, 1e12, np.inf])
    r = np.array([1.0, 0.0, 0.25, 0.5, 0.5])
    out = fins.conductance_with_root_resistance(g, r)
    assert out[0] == 0.0
    assert out[1] == 0.5
    assert out[2] == pytest.approx(1.0 / (1.0 / 2.0 + 0.25), rel=1e-15)
    assert out[3] == pytest.approx(2.0, rel=1e-11)
    assert out[4] == 2.0
    assert fins.conductance_with_root_resistance(np.inf, 0.0) == np.inf
    assert np.all(np.diff(fins.conductance_with_root_resistance(1.0, [0.0, 0.1, 1.0])) < 0)


def test_registry_entry_flags_thick_fins():
    """Invariant: the 1-D fin model is registered and flags a transverse Biot number > 0.1."""
    entry = get("fin_1d_uniform")
    assert entry.function is fins.plate_fin_efficiency
    assert "Incropera" in entry.reference and "Kraus" in entry.reference
    bi = fins.transverse_biot(np.array([50.0, 5000.0]), 20.0, np.array([1e-3, 1e-3]))
    np.testing.assert_array_equal(entry.out_of_range(biot=bi), [False, True])
