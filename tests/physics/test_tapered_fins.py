"""Tests of the trapezoidal-profile fin in optifin.physics.fins.

Every test names its kind: published check value, invariant or cross-method. The
independent oracle is scipy.integrate.solve_bvp on the variable-thickness fin equation
d/dx(t(x) dθ/dx) = (2h/k) θ, written here from the energy balance, not from the Bessel
solution; the triangular-profile closed form is evaluated with the unscaled scipy.special
i0 and i1 (the module uses the exponentially scaled ones).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import quad, solve_bvp
from scipy.optimize import minimize_scalar
from scipy.special import i0, i1

from optifin.errors import ModelError
from optifin.physics import fins
from optifin.physics.registry import get

trapezoidal = fins.trapezoidal_fin_efficiency


def _bvp_tapered(h, k, t_root, t_tip, height, tip="adiabatic"):
    """Heat rate per unit length, θ_b = 1, from solve_bvp; s = x/H, y = (θ, (t/t_r) dθ/ds).

    Tip: θ'(H) = 0, or -k t θ'(H) = h t_tip θ(H) (convective, the tip face of area t_tip).
    """
    taper = 1.0 - t_tip / t_root
    x2 = 2.0 * h * height**2 / (k * t_root)  # (m_r H)²
    biot_tip = h * height * t_tip / (k * t_root) if tip == "convective" else 0.0

    def rhs(s, y):
        return np.vstack([y[1] / (1.0 - taper * s), x2 * y[0]])

    def bc(y0, y1):
        return np.array([y0[0] - 1.0, y1[1] + biot_tip * y1[0]])

    s = np.linspace(0.0, 1.0, 201)
    guess = np.vstack([np.ones_like(s), -x2 * (1.0 - s)])
    sol = solve_bvp(rhs, bc, s, guess, tol=1e-10, max_nodes=200000)
    assert sol.success, sol.message
    return -k * t_root * sol.sol(0.0)[1] / height


# (h, k, t_root, t_tip, H): extruded-fin proportions, tapers from 5 % to 95 %
_TAPERS = [
    (50.0, 200.0, 2.0e-3, 1.0e-3, 30e-3),
    (100.0, 167.0, 3.0e-3, 0.5e-3, 40e-3),
    (20.0, 200.0, 2.0e-3, 1.9e-3, 50e-3),
    (500.0, 200.0, 4.0e-3, 0.2e-3, 60e-3),
    (10.0, 390.0, 1.2e-3, 0.6e-3, 80e-3),
]


@pytest.mark.parametrize("case", _TAPERS)
def test_adiabatic_tip_against_solve_bvp(case):
    """Cross-method: the Bessel form against solve_bvp of the variable-thickness ODE."""
    h, height = case[0], case[4]
    q_ode = _bvp_tapered(*case)
    eta_ode = q_ode / (2.0 * h * height)  # efficiency on the faces 2H per unit length
    assert trapezoidal(*case) == pytest.approx(eta_ode, rel=1e-6)


@pytest.mark.parametrize("case", [*_TAPERS[:3], (300.0, 200.0, 4e-3, 2e-3, 20e-3)])
def test_corrected_tip_against_convective_solve_bvp(case):
    """Cross-method: corrected height H + t_tip/2 against the exact convective tip.

    Measured 5e-7 to 1.8e-5 for h t_tip/k = 2e-4 ... 3e-3, the accuracy of the uniform
    fin's corrected length (Incropera et al. call it negligible below h t/k = 0.0625
    [from memory]); tolerance 5e-5.
    """
    h, t_tip, height = case[0], case[3], case[4]
    q_ode = _bvp_tapered(*case, tip="convective")
    eta_ode = q_ode / (h * (2.0 * height + t_tip))  # on the faces and the tip face
    assert trapezoidal(*case, tip="corrected") == pytest.approx(eta_ode, rel=5e-5)


def test_triangular_profile_closed_form():
    """Published check value: triangular fin η = I1(2mL)/(mL I0(2mL)), m on t_root.

    Gardner (1945); Kraus, Aziz & Welty (2001), ch. 2 [from memory]; evaluated with the
    unscaled scipy.special.i0/i1. At mL = 1: I1(2)/I0(2) = 0.697775 (scipy).
    """
    k, t_root = 200.0, 2e-3
    ml = np.array([0.01, 0.3, 1.0, 2.0, 5.0, 20.0])
    height = 0.03
    h = ml**2 * k * t_root / (2.0 * height**2)
    eta = trapezoidal(h, k, t_root, 0.0, height)
    np.testing.assert_allclose(eta, i1(2 * ml) / (ml * i0(2 * ml)), rtol=1e-12)
    assert eta[2] == pytest.approx(0.697775, abs=1e-6)
    # and the tip correction is nothing for a sharp tip
    np.testing.assert_array_equal(trapezoidal(h, k, t_root, 0.0, height, tip="corrected"), eta)


def test_optimum_triangular_fin():
    """Published check value: the triangular fin of least material has 2 m_r H = 2.6188.

    Schmidt (1926) for the triangular profile, as quoted by Kraus, Aziz & Welty (2001)
    [from memory]: at fixed profile area t_root H/2 the heat rate is largest at
    m_r H = 1.3094, η = 0.5936 there. Found here by maximising the heat rate numerically.
    """
    h, k, profile = 60.0, 180.0, 20e-6

    def negative_q(height):
        t_root = 2.0 * profile / height
        return -trapezoidal(h, k, t_root, 0.0, height) * 2.0 * h * height

    best = minimize_scalar(
        negative_q, bounds=(1e-3, 0.5), method="bounded", options={"xatol": 1e-12}
    )
    t_root = 2.0 * profile / best.x
    x = fins.plate_fin_parameter(h, k, t_root) * best.x
    assert 2.0 * x == pytest.approx(2.6188, abs=2e-4)
    assert trapezoidal(h, k, t_root, 0.0, best.x) == pytest.approx(0.5936, abs=2e-4)
    # the best triangle carries more than the best rectangle of the same profile area; the
    # optimum heat rate goes as (h² k A_p)^(1/3), so for equal heat the triangle needs
    # (q_rect/q_tri)³ of the metal: about 69 % (Schmidt 1926, as quoted by Kraus, Aziz &
    # Welty [from memory]). The rectangle's optimum from Schmidt's condition sinh 2x = 6x.
    rect_height = fins.SCHMIDT_ML ** (2 / 3) * (k * profile / (2 * h)) ** (1 / 3)
    q_rect = fins.heat_rate_adiabatic_tip(h, k, 2.0, profile / rect_height, rect_height, 1.0)
    assert (q_rect / -best.fun) ** 3 == pytest.approx(0.69, abs=0.01)


def test_uniform_limit_equals_plate_fin():
    """Invariant: t_tip = t_root (and within 1e-12 of it) is the plate fin, both tips."""
    h = np.array([5.0, 50.0, 500.0])
    k, t, height = 200.0, 1.5e-3, 0.04
    for tip in ("adiabatic", "corrected"):
        plate = fins.plate_fin_efficiency(h, k, t, height, tip=tip)
        np.testing.assert_allclose(trapezoidal(h, k, t, t, height, tip=tip), plate, rtol=1e-9)
        near = trapezoidal(h, k, t, t * (1 - 1e-12), height, tip=tip)
        np.testing.assert_allclose(near, plate, rtol=1e-9)


def test_continuity_across_the_switches():
    """Invariant: no step where the near-uniform expansion and the short-fin series take over.

    The switches sit at a relative taper of 1e-6 and at m_r H = 1e-4. Across each the
    change is what the derivative gives for the step in the argument (to 2e-13; the steps
    are 2e-10 in the taper and 2e-8 in m_r H).
    """
    k, t_root, height = 200.0, 2e-3, 0.03
    for x in (0.5, 1.3, 5.0, 50.0):
        h = x**2 * k * t_root / (2 * height**2)
        th = np.tanh(x)
        slope = -0.25 * (th**2 / x**2 - 1 / np.cosh(x) ** 2)  # dη/d(taper) at 0
        taper = np.array([0.9999e-6, 1.0001e-6])
        eta = trapezoidal(h, k, t_root, t_root * (1 - taper), height)
        assert abs(eta[1] - eta[0] - slope * (taper[1] - taper[0])) < 2e-13
        # and the expansion agrees with the Bessel form away from the switch, to O(taper²)
        taper = np.array([1e-5, 1e-3])
        eta_far = trapezoidal(h, k, t_root, t_root * (1 - taper), height)
        assert np.all(np.abs(eta_far - th / x - slope * taper) < 0.03 * taper**2)
    x = np.array([0.9999e-4, 1.0001e-4])
    h = x**2 * k * t_root / (2 * height**2)
    for taper in (0.0, 0.02, 0.3, 1.0):
        # short fin: η ≈ 1 - x² g, g = ∫ (1 - s)²/(1 - taper s) ds (scipy quad)
        g = quad(lambda s, a=taper: (1 - s) ** 2 / (1 - a * s), 0.0, 1.0)[0]
        eta = trapezoidal(h, k, t_root, t_root * (1 - taper), height)
        assert abs(eta[1] - eta[0] + 2 * x.mean() * g * (x[1] - x[0])) < 2e-13
        np.testing.assert_allclose(1 - eta, x**2 * g, rtol=1e-5)
        assert np.all(eta <= 1.0)


def test_limits_monotonicity_and_no_nan():
    """Invariant: η = 1 for h = 0; η falls as the tip thins (fixed root) and as h grows."""
    k, t_root, height = 200.0, 2e-3, 0.03
    assert trapezoidal(0.0, k, t_root, 1e-3, height) == 1.0
    assert trapezoidal(0.0, k, t_root, 0.0, height, tip="corrected") == 1.0
    tips = np.linspace(t_root, 0.0, 41)
    for h in (5.0, 50.0, 500.0):
        eta = trapezoidal(h, k, t_root, tips, height)
        assert np.all(np.isfinite(eta))
        assert np.all(np.diff(eta) < 0)
    eta = trapezoidal(np.geomspace(1e-3, 1e5, 30), k, t_root, 1e-3, height)
    assert np.all(np.diff(eta) < 0) and np.all((eta > 0) & (eta <= 1))
    # very long fins: η -> 1/(m_r H) for any taper (all the heat near the root)
    x = 2000.0
    h = x**2 * k * t_root / (2 * height**2)
    for t_tip in (0.0, 1e-3, t_root):
        assert trapezoidal(h, k, t_root, t_tip, height) == pytest.approx(1 / x, rel=1e-3)


def test_profile_area_half_angle_and_shapes():
    """Invariant: profile area and half-angle of the trapezoid; broadcasting; bad input."""
    assert fins.tapered_fin_cross_section(2e-3, 1e-3, 0.03) == pytest.approx(4.5e-5, rel=1e-15)
    assert fins.tapered_fin_cross_section(2e-3, 0.0, 0.03) == pytest.approx(3e-5, rel=1e-15)
    assert fins.tapered_fin_half_angle(2e-3, 1e-3, 0.03) == pytest.approx(1 / 60, rel=1e-14)
    h = np.array([[10.0], [100.0]])
    t_tip = np.array([0.0, 0.5e-3, 1e-3, 2e-3])
    assert trapezoidal(h, 200.0, 2e-3, t_tip, 0.03).shape == (2, 4)
    with pytest.raises(ModelError):
        trapezoidal(50.0, 200.0, 1e-3, 2e-3, 0.03)  # thicker at the tip
    with pytest.raises(ModelError):
        trapezoidal(50.0, 200.0, 1e-3, -1e-4, 0.03)
    with pytest.raises(ValueError):
        trapezoidal(50.0, 200.0, 2e-3, 1e-3, 0.03, tip="insulated")


def test_registry_entry_flags_thick_and_steep_fins():
    """Invariant: registered with the root Biot number and the half-angle as groups."""
    entry = get("fin_1d_trapezoidal")
    assert entry.function is trapezoidal
    assert "Gardner" in entry.reference and "Kraus" in entry.reference
    biot = fins.transverse_biot(np.array([50.0, 5000.0, 50.0]), 20.0, 2e-3)
    half = fins.tapered_fin_half_angle(2e-3, np.array([1e-3, 1e-3, 0.0]), [0.03, 0.03, 0.005])
    np.testing.assert_array_equal(
        entry.out_of_range(biot=biot, half_angle=half), [False, True, True]
    )
