"""Tests of optifin.physics.pressure_drop.

Each test says in its docstring which kind it is: published check value, invariant or
cross-method. Numbers tagged [calc] in the reference notes (physics.md) were computed from
the formula; where a test uses one it is recomputed here by an independent route.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.sparse
import scipy.sparse.linalg

from optifin.errors import ModelError
from optifin.physics import registry
from optifin.physics.forced_convection import fanning_petukhov_1970
from optifin.physics.pressure_drop import (
    LOSS_METHODS,
    channel_pressure_drop,
    fanning_apparent_muzychka_yovanovich,
    fanning_channel,
    fre_shah_london_1978,
    hydraulic_diameter_rectangle,
    loss_coefficients,
)

# Air at 300 K, 101325 Pa: CoolProp values quoted in physics.md §2.3 (oracles.md §2).
RHO, MU = 1.17700, 1.85373e-5
NU = 1.574962e-5  # physics.md §2.3

# The invented sink of physics.md §2.3 (inputs, not results).
W, L, H, N_FINS, T_FIN, V_FRONT = 0.05, 0.05, 0.025, 20, 1.0e-3, 2.0


def fre_exact_series(aspect: float, terms: int = 100) -> float:
    """Exact f Re_Dh (Fanning) of fully developed laminar flow in a rectangle.

    Classical Fourier-series solution of u_yy + u_zz = -G/mu on a 2a x 2b rectangle (b <= a,
    alpha = b/a): the mean velocity is u_m = (G b²/(3 mu)) [1 - (192 alpha / pi^5)
    sum_odd tanh(i pi / (2 alpha)) / i^5], and with D_h = 4 b/(1 + alpha) and
    f Re = G D_h² / (2 mu u_m) this gives
    f Re = 24 / ((1 + alpha)² [1 - (192 alpha/pi^5) sum_odd tanh(i pi/(2 alpha))/i^5]).
    Checked below against a finite-difference solution.
    """
    if aspect == 0.0:
        return 24.0
    i = 2 * np.arange(terms) + 1
    series = np.sum(np.tanh(i * np.pi / (2 * aspect)) / i**5)
    return 24.0 / ((1 + aspect) ** 2 * (1 - 192 * aspect / np.pi**5 * series))


def fre_finite_difference(aspect: float, n: int) -> float:
    """f Re from a 5-point finite-difference solve of laplace(u) = -1 on [0, 1] x [0, aspect]."""
    nx, ny = n, round(n * aspect)
    hx, hy = 1 / (nx + 1), aspect / (ny + 1)
    dx = scipy.sparse.diags([1.0, -2.0, 1.0], [-1, 0, 1], shape=(nx, nx)) / hx**2
    dy = scipy.sparse.diags([1.0, -2.0, 1.0], [-1, 0, 1], shape=(ny, ny)) / hy**2
    lap = scipy.sparse.kron(scipy.sparse.eye(ny), dx) + scipy.sparse.kron(dy, scipy.sparse.eye(nx))
    u = scipy.sparse.linalg.spsolve(lap.tocsc(), -np.ones(nx * ny))
    u_mean = u.sum() * hx * hy / aspect
    d_h = 2 * aspect / (1 + aspect)
    return d_h**2 / (2 * u_mean)


# --- Fully developed fRe ---------------------------------------------------------------------


@pytest.mark.parametrize("aspect", [1.0, 0.5])
def test_exact_series_against_finite_differences(aspect):
    """Cross-method: the test's own series oracle against a Richardson-extrapolated
    finite-difference solution (80 and 160 nodes), to 1e-4."""
    coarse, fine = fre_finite_difference(aspect, 80), fre_finite_difference(aspect, 160)
    assert fre_exact_series(aspect) == pytest.approx((4 * fine - coarse) / 3, rel=1e-4)


def test_exact_series_published_values():
    """Published check value: series 14.2271 (a = 1), 15.5481 (0.5), 20.5846 (0.125)
    (oracles.md §4 [calc]), Shah & London's tables 14.227 (a = 1) and 15.548 (0.5)
    [from memory]; 24 for parallel plates (plane Poiseuille flow, classical)."""
    assert fre_exact_series(1.0) == pytest.approx(14.2271, abs=1e-4)
    assert fre_exact_series(0.5) == pytest.approx(15.5481, abs=1e-4)
    assert fre_exact_series(0.125) == pytest.approx(20.5846, abs=1e-4)
    assert fre_exact_series(1.0) == pytest.approx(14.227, abs=5e-4)
    assert fre_exact_series(0.5) == pytest.approx(15.548, abs=5e-4)
    assert fre_exact_series(1e-6) == pytest.approx(24.0, rel=1e-5)


def test_fre_polynomial_against_exact_series():
    """Cross-method: the Shah & London polynomial [coefficients from memory] within 0.1 % of
    the exact series over 201 aspect ratios in [0, 1]."""
    aspect = np.linspace(0.0, 1.0, 201)
    exact = np.array([fre_exact_series(a) for a in aspect])
    np.testing.assert_allclose(fre_shah_london_1978(aspect), exact, rtol=1e-3)


def test_fre_end_values():
    """Published check value: 24 at a = 0 (parallel plates) and 14.2296 at a = 1 (the
    polynomial, physics.md §3 [calc]; exact 14.2271, oracles.md), within 0.1 % of exact."""
    assert fre_shah_london_1978(0.0) == pytest.approx(24.0, rel=1e-14)
    assert fre_shah_london_1978(1.0) == pytest.approx(
        24 * (1 - 1.3553 + 1.9467 - 1.7012 + 0.9564 - 0.2537)
    )
    assert fre_shah_london_1978(1.0) == pytest.approx(14.2296, abs=1e-4)
    assert fre_shah_london_1978(1.0) == pytest.approx(14.2271, rel=1e-3)


def test_fre_folds_aspect_above_one():
    """Invariant: a duct b x H is the duct H x b; infinite aspect is parallel plates."""
    aspect = np.array([0.05, 0.3, 0.77, 1.0])
    np.testing.assert_allclose(
        fre_shah_london_1978(1 / aspect), fre_shah_london_1978(aspect), rtol=1e-14
    )
    assert fre_shah_london_1978(np.inf) == 24.0
    with pytest.raises(ModelError):
        fre_shah_london_1978(-0.1)


def test_hydraulic_diameter():
    """Invariant: D_h = 4A/P written out; a square channel has D_h = side; H -> inf gives 2b."""
    b, h = np.array([1e-3, 2e-3, 5e-3]), np.array([25e-3, 2e-3, 1e-3])
    np.testing.assert_allclose(
        hydraulic_diameter_rectangle(b, h), 4 * b * h / (2 * (b + h)), rtol=1e-14
    )
    assert hydraulic_diameter_rectangle(3e-3, 3e-3) == pytest.approx(3e-3, rel=1e-14)
    assert hydraulic_diameter_rectangle(1.5e-3, np.inf) == pytest.approx(3e-3, rel=1e-14)
    with pytest.raises(ModelError):
        hydraulic_diameter_rectangle(0.0, 1e-2)


# --- Apparent friction factor ----------------------------------------------------------------


def test_apparent_friction_limits():
    """Invariant: L* -> inf gives the developed fRe/Re, L* -> 0 Shah's 3.44/sqrt(L*)/Re."""
    re, fre = 800.0, 20.0
    long = fanning_apparent_muzychka_yovanovich(re, 1e8, fre)
    assert long * re == pytest.approx(fre, rel=1e-8)
    short = fanning_apparent_muzychka_yovanovich(re, 1e-10, fre)
    assert short * re == pytest.approx(3.44 / math.sqrt(1e-10), rel=1e-8)


def test_apparent_friction_monotone_and_above_developed():
    """Invariant: f_app Re falls with L* and never drops below the developed fRe."""
    l_star = np.logspace(-6, 4, 300)
    f_re = fanning_apparent_muzychka_yovanovich(500.0, l_star, 18.0) * 500.0
    assert np.all(np.diff(f_re) < 0)
    assert np.all(f_re >= 18.0)


def test_apparent_friction_worked_sink():
    """Cross-method: physics.md §3 [calc] (lambda 0.0631579, fRe 22.12209, D_h 2.970297 mm,
    Re_Dh 616.0766, L* 0.0273234 -> f_app 0.0492996, f_app Re 30.3724), recomputed from the §2.3
    inputs through the module and by the formula written out with the math module
    (the formula itself is [from memory])."""
    b = (W - N_FINS * T_FIN) / (N_FINS - 1)
    v_ch = V_FRONT * (1 + T_FIN / b)
    aspect = b / H
    d_h = hydraulic_diameter_rectangle(b, H)
    re = v_ch * d_h / NU
    l_star = L / (d_h * re)
    assert aspect == pytest.approx(0.0631579, rel=1e-6)
    assert fre_shah_london_1978(aspect) == pytest.approx(22.12209, rel=1e-6)
    assert d_h == pytest.approx(2.970297e-3, rel=1e-6)
    assert re == pytest.approx(616.0766, rel=1e-6)
    assert l_star == pytest.approx(0.0273234, rel=1e-5)
    f_app = fanning_apparent_muzychka_yovanovich(re, l_star, fre_shah_london_1978(aspect))
    assert f_app == pytest.approx(0.0492996, rel=1e-5)
    assert f_app * re == pytest.approx(30.3724, rel=1e-5)
    fre_written_out = 24 * sum(
        c * aspect**k for k, c in enumerate([1, -1.3553, 1.9467, -1.7012, 0.9564, -0.2537])
    )
    by_hand = math.sqrt((3.44 / math.sqrt(l_star)) ** 2 + fre_written_out**2) / re
    assert f_app == pytest.approx(by_hand, rel=1e-13)


def test_apparent_friction_domain_and_range():
    """Invariant: no flow or zero length is refused; the registry flags Re_Dh > 2300."""
    with pytest.raises(ModelError):
        fanning_apparent_muzychka_yovanovich(0.0, 0.1, 24.0)
    with pytest.raises(ModelError):
        fanning_apparent_muzychka_yovanovich(100.0, 0.0, 24.0)
    entry = registry.get("fanning_apparent_muzychka_yovanovich")
    assert entry.out_of_range(re_dh=np.array([1000.0, 3000.0])).tolist() == [False, True]


# --- Channel friction over the whole range ---------------------------------------------------


def test_fanning_channel_laminar_branch():
    """Invariant: below the transition fanning_channel is the apparent laminar factor."""
    re = np.array([10.0, 300.0, 2300.0])
    d_h, length, aspect = 3e-3, 0.05, 0.06
    expected = fanning_apparent_muzychka_yovanovich(
        re, length / (d_h * re), fre_shah_london_1978(aspect)
    )
    np.testing.assert_allclose(fanning_channel(re, length, d_h, aspect), expected, rtol=1e-14)


@pytest.mark.parametrize("length", [0.005, 0.05, 5.0])
def test_fanning_channel_never_jumps_down_at_transition(length):
    """Invariant: across Re = 2300 the factor does not fall (short and long channels), and
    above it is at least the Petukhov turbulent value."""
    d_h, aspect = 3e-3, 0.06
    below = fanning_channel(2300.0, length, d_h, aspect)
    above = fanning_channel(2300.0 * (1 + 1e-9), length, d_h, aspect)
    assert above >= below * (1 - 1e-8)
    re = np.linspace(2301.0, 1e5, 50)
    assert np.all(fanning_channel(re, length, d_h, aspect) >= fanning_petukhov_1970(re))


def test_fanning_channel_turbulent_long_channel_is_petukhov():
    """Invariant: a long channel well above the transition uses Petukhov's factor."""
    re = np.array([1e4, 1e5])
    np.testing.assert_allclose(
        fanning_channel(re, 2.0, 3e-3, 0.1), fanning_petukhov_1970(re), rtol=1e-14
    )


# --- Entrance and exit losses ----------------------------------------------------------------


def test_exit_loss_borda_carnot_against_fluids():
    """Cross-method: K_e = (1 - sigma)² equals fluids.fittings.diffuser_sharp(Di1 = sqrt(sigma),
    Di2 = 1), whose K is on the smaller (channel) velocity; 0.09 at sigma = 0.7 (physics.md
    check value #14, algebra)."""
    fittings = pytest.importorskip("fluids.fittings")
    for sigma in np.linspace(0.05, 0.95, 19):
        _, k_e = loss_coefficients(sigma)
        assert k_e == pytest.approx(
            fittings.diffuser_sharp(Di1=math.sqrt(sigma), Di2=1.0), rel=1e-12
        )
    assert loss_coefficients(0.7)[1] == pytest.approx(0.09, rel=1e-14)


def test_contraction_loss_inside_pipe_band_for_mid_sigma():
    """Cross-method (band): for 0.2 <= sigma <= 0.55, K_c = 0.42(1 - sigma²) lies between the
    lowest and highest of fluids.fittings.contraction_sharp's Rennels and Crane values (K on
    the smaller pipe's velocity, Di1 = 1, Di2 = sqrt(sigma)). Outside this window the fit
    leaves the band: below sigma = 0.2 it is under Crane (0.42 against 0.50 as sigma -> 0),
    above 0.6 it is over both (next test)."""
    fittings = pytest.importorskip("fluids.fittings")
    for sigma in np.linspace(0.2, 0.55, 8):
        k_c, _ = loss_coefficients(sigma)
        pipe = [
            fittings.contraction_sharp(Di1=1.0, Di2=math.sqrt(sigma), method=m)
            for m in ("Rennels", "Crane")
        ]
        assert min(pipe) <= k_c <= max(pipe)


def test_contraction_loss_above_pipe_methods_for_open_arrays():
    """Cross-method (documents a disagreement stated in the docstring): for sigma >= 0.65
    K_c = 0.42(1 - sigma²) exceeds every sharp-contraction value of fluids.fittings (Rennels,
    Crane, Hooper at Re = 1e6), by up to 2.2x at sigma = 0.9."""
    fittings = pytest.importorskip("fluids.fittings")
    for sigma in np.linspace(0.65, 0.95, 7):
        k_c, _ = loss_coefficients(sigma)
        d2 = math.sqrt(sigma)
        pipe = [
            fittings.contraction_sharp(Di1=1.0, Di2=d2, method="Rennels"),
            fittings.contraction_sharp(Di1=1.0, Di2=d2, method="Crane"),
            fittings.contraction_sharp(Di1=1.0, Di2=d2, Re=1e6, method="Hooper"),
        ]
        assert k_c > max(pipe)


def test_culham_exit_form_exceeds_borda_carnot_by_one_plus_sigma_squared():
    """Invariant (algebra): (1 - sigma²)² = (1 + sigma)² (1 - sigma)²; the contraction term is
    the same in both methods; physics.md §3 table at sigma = 0.6: K_c 0.2688, K_e 0.4096."""
    sigma = np.linspace(0.0, 1.0, 41)
    kc_bc, ke_bc = loss_coefficients(sigma, "borda_carnot")
    kc_cm, ke_cm = loss_coefficients(sigma, "culham_muzychka_2001")
    np.testing.assert_allclose(ke_cm, (1 + sigma) ** 2 * ke_bc, rtol=1e-12, atol=1e-15)
    np.testing.assert_array_equal(kc_cm, kc_bc)
    kc, ke = loss_coefficients(0.6, "culham_muzychka_2001")
    assert (kc, ke) == (pytest.approx(0.2688, abs=1e-12), pytest.approx(0.4096, abs=1e-12))


def test_loss_coefficients_bad_arguments():
    """Invariant: an unknown method lists the valid ones; sigma outside [0, 1] is refused."""
    with pytest.raises(ModelError) as info:
        loss_coefficients(0.5, "kays_london_chart")
    for name in LOSS_METHODS:
        assert name in str(info.value)
    with pytest.raises(ModelError):
        loss_coefficients(1.2)


# --- Assembly --------------------------------------------------------------------------------


def test_pressure_drop_worked_sink():
    """Cross-method: physics.md §3 worked check [calc] with the Culham & Muzychka K forms
    [from memory]: friction term 20.84635 Pa, dp = 25.10667 Pa; rho V²/2 = 6.279949 Pa.
    Recomputed from the §2.3 inputs through the module, and the assembly written out."""
    b = (W - N_FINS * T_FIN) / (N_FINS - 1)
    v_ch = V_FRONT * (1 + T_FIN / b)
    d_h = hydraulic_diameter_rectangle(b, H)
    re = v_ch * d_h / NU
    f = fanning_channel(re, L, d_h, b / H)
    sigma = 1 - N_FINS * T_FIN / W
    k_c, k_e = loss_coefficients(sigma, "culham_muzychka_2001")
    assert 0.5 * RHO * v_ch**2 == pytest.approx(6.279949, rel=1e-6)
    friction = channel_pressure_drop(0.0, 0.0, f, L, d_h, RHO, v_ch)
    assert friction == pytest.approx(20.84635, rel=1e-5)
    dp = channel_pressure_drop(k_c, k_e, f, L, d_h, RHO, v_ch)
    assert dp == pytest.approx(25.10667, rel=1e-5)
    by_hand = (
        (0.42 * (1 - 0.6**2) + 4 * float(f) * L / float(d_h) + (1 - 0.6**2) ** 2)
        * RHO
        * v_ch**2
        / 2
    )
    assert dp == pytest.approx(by_hand, rel=1e-12)


def test_pressure_drop_long_plates_is_hagen_poiseuille():
    """Cross-method: a long parallel-plate channel (H -> inf, no end losses) gives the plane
    Poiseuille result dp = 12 mu V L / b² (exact Navier-Stokes solution, classical)."""
    b, length = 1.0e-3, np.array([0.5, 1.0, 2.0])
    velocity = 0.01
    d_h = hydraulic_diameter_rectangle(b, np.inf)
    re = velocity * d_h / (MU / RHO)
    f = fanning_channel(re, length, d_h, b / np.inf)
    dp = channel_pressure_drop(0.0, 0.0, f, length, d_h, RHO, velocity)
    l_star = length / (d_h * re)
    assert np.all(l_star > 190)
    np.testing.assert_allclose(dp, 12 * MU * velocity * length / b**2, rtol=1e-4)


def test_pressure_drop_broadcasts_over_population():
    """Invariant: a population of velocities times a column of lengths broadcasts, and dp
    grows with both."""
    velocity = np.linspace(0.5, 8.0, 16)[None, :]
    length = np.array([0.03, 0.06, 0.12])[:, None]
    b, h = 2e-3, 0.03
    d_h = hydraulic_diameter_rectangle(b, h)
    re = velocity * d_h / NU
    f = fanning_channel(re, length, d_h, b / h)
    k_c, k_e = loss_coefficients(0.7)
    dp = channel_pressure_drop(k_c, k_e, f, length, d_h, RHO, velocity)
    assert dp.shape == (3, 16)
    assert np.all(np.diff(dp, axis=1) > 0)
    assert np.all(np.diff(dp, axis=0) > 0)
