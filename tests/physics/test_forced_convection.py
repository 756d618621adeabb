"""Tests of optifin.physics.forced_convection.

Each test says in its docstring which kind it is: published check value, invariant or
cross-method. Numbers tagged [calc] in the reference notes (physics.md) were computed from
the formula; where a test uses one it is recomputed here by an independent route.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
import scipy.linalg

from optifin.errors import ModelError
from optifin.physics import registry
from optifin.physics.forced_convection import (
    NUSSELT_PARALLEL_PLATES_H,
    NUSSELT_PARALLEL_PLATES_T,
    bulk_referenced_conductance,
    channel_reynolds_star,
    effectiveness_single_stream,
    fanning_petukhov_1970,
    nusselt_gnielinski_1976,
    nusselt_parallel_plates_shah_london_1978,
    nusselt_teertstra_1999,
)

# Air at 300 K, 101325 Pa: CoolProp values quoted in physics.md §2.3 (oracles.md §2).
RHO, CP, MU, K_AIR = 1.17700, 1006.37, 1.85373e-5, 0.0263845
NU = MU / RHO
PR = 0.707058  # physics.md §2.1, the Pr of its Nu_b table (mu cp / k = 0.707058)


def _teertstra_literal(re_star: float, pr: float) -> float:
    """The published composite written out term by term with the math module."""
    a = re_star * pr / 2.0
    b = 0.664 * math.sqrt(re_star) * pr ** (1.0 / 3.0) * math.sqrt(1.0 + 3.65 / math.sqrt(re_star))
    return (a**-3 + b**-3) ** (-1.0 / 3.0)


# --- Teertstra et al. 1999 ------------------------------------------------------------------


@pytest.mark.parametrize(
    ("re_star", "expected"),
    # physics.md §2.1 table [calc] at Pr = 0.707058; the form itself is [seen] in public notes
    # crediting Culham & Muzychka 2001; 10.34189 -> 2.461817 is the §2.3 worked sink [calc]
    [
        (0.1, 0.035351),
        (0.3, 0.10600),
        (1.0, 0.35106),
        (3.0, 0.99736),
        (10.0, 2.41556),
        (30.0, 4.10034),
        (100.0, 6.89406),
        (10.34189, 2.461817),
    ],
)
def test_teertstra_table_values(re_star, expected):
    """Cross-method: physics.md [calc] table, recomputed with the literal published form."""
    literal = _teertstra_literal(re_star, PR)
    assert literal == pytest.approx(expected, rel=2e-5)  # table printed to 5-6 digits
    assert nusselt_teertstra_1999(re_star, PR) == pytest.approx(literal, rel=1e-12)


def test_teertstra_vectorised_matches_literal():
    """Cross-method: a 2-D broadcast over Re* and Pr equals the scalar literal form."""
    re_star = np.logspace(-3, 4, 15)[:, None]
    pr = np.array([0.7, 1.0, 7.0])[None, :]
    nu = nusselt_teertstra_1999(re_star, pr)
    assert nu.shape == (15, 3)
    expected = np.array([[_teertstra_literal(r, p) for p in pr[0]] for r in re_star[:, 0]])
    np.testing.assert_allclose(nu, expected, rtol=1e-12)


def test_teertstra_asymptotes():
    """Invariant: ratio to Re*Pr/2 at Re* = 1e-3 and to 0.664 sqrt(Re*) Pr^(1/3) at 1e5
    within 1 % (physics.md check value #7, algebra)."""
    small, large = 1e-3, 1e5
    assert nusselt_teertstra_1999(small, PR) / (small * PR / 2) == pytest.approx(1.0, rel=1e-2)
    flat_plate = 0.664 * math.sqrt(large) * PR ** (1 / 3)
    assert nusselt_teertstra_1999(large, PR) / flat_plate == pytest.approx(1.0, rel=1e-2)


def test_teertstra_zero_and_extreme_re_star():
    """Invariant: Nu -> 0 (not NaN) at Re* = 0, finite for huge Re*, no division, invalid or
    overflow warnings (a harmless underflow of (A/B)³ to 0 is allowed)."""
    re_star = np.array([0.0, 1e-300, 1e-12, 1.0, 1e200])
    with warnings.catch_warnings(), np.errstate(divide="raise", invalid="raise", over="raise"):
        warnings.simplefilter("error")
        nu = nusselt_teertstra_1999(re_star, PR)
    assert nu[0] == 0.0
    assert np.all(np.isfinite(nu))
    assert nu[1] == pytest.approx(1e-300 * PR / 2, rel=1e-12)
    assert nu[-1] == pytest.approx(0.664 * 1e100 * PR ** (1 / 3), rel=1e-12)


def test_teertstra_monotone_in_re_star():
    """Invariant: Nu_b rises strictly with Re* over 12 decades."""
    nu = nusselt_teertstra_1999(np.logspace(-6, 6, 400), PR)
    assert np.all(np.diff(nu) > 0)


def test_teertstra_heat_capacity_identity():
    """Invariant: at small Re*, h (2 H L) = rho cp V b H, the m-dot cp of one channel
    (physics.md §2.1, algebra): h is referenced to the inlet temperature."""
    b, height, length, velocity = 1.0e-3, 0.03, 0.2, 0.01
    re_star = channel_reynolds_star(velocity, b, length, NU)
    assert re_star < 1e-2
    h = nusselt_teertstra_1999(re_star, MU * CP / K_AIR) * K_AIR / b
    assert h * 2 * height * length == pytest.approx(RHO * CP * velocity * b * height, rel=1e-6)


def test_teertstra_never_exceeds_capacity_rate():
    """Invariant: h (2 H L) <= m-dot cp of the channel at every Re* (an isothermal wall
    cannot heat the air above its own temperature), with equality approached as Re* -> 0."""
    b, height, length = 2.0e-3, 0.03, 0.1
    velocity = np.logspace(-3, 1.5, 200)
    pr = MU * CP / K_AIR
    h = nusselt_teertstra_1999(channel_reynolds_star(velocity, b, length, NU), pr) * K_AIR / b
    capacity = RHO * CP * velocity * b * height
    assert np.all(h * 2 * height * length <= capacity * (1 + 1e-12))


def test_reynolds_star_worked_sink():
    """Cross-method: physics.md §2.3 [calc] Re_b = 327.4933 and Re_b* = 10.34189, recomputed
    here from W, N, t, V_f and nu by hand."""
    w, n, t, v_f = 0.05, 20, 1.0e-3, 2.0
    b = (w - n * t) / (n - 1)
    v_ch = v_f * (1 + t / b)
    nu = 1.574962e-5  # physics.md §2.3 (CoolProp)
    re_b = v_ch * b / nu
    assert re_b == pytest.approx(327.4933, rel=1e-6)
    assert channel_reynolds_star(v_ch, b, 0.05, nu) == pytest.approx(10.34189, rel=1e-6)
    assert channel_reynolds_star(v_ch, b, 0.05, nu) == pytest.approx(re_b * b / 0.05, rel=1e-14)


def test_teertstra_validity_range_registered():
    """Invariant: the registry flags Re* outside 0.1-100 (range [from memory], uncertain)."""
    entry = registry.get("nusselt_teertstra_1999")
    flags = entry.out_of_range(re_b_star=np.array([0.05, 0.1, 10.0, 100.0, 200.0]))
    assert flags.tolist() == [True, False, False, False, True]
    assert "memory" in entry.validity_note


def test_teertstra_rejects_negative_input():
    """Invariant: a negative Re* or non-positive Pr cannot describe a flow."""
    with pytest.raises(ModelError):
        nusselt_teertstra_1999(-1.0, PR)
    with pytest.raises(ModelError):
        nusselt_teertstra_1999(1.0, 0.0)
    with pytest.raises(ModelError):
        channel_reynolds_star(1.0, 1e-3, 0.0, NU)


# --- Fully developed laminar flow between plates --------------------------------------------


def _nusselt_t_plates_fd(n: int) -> float:
    """Nu_T between isothermal plates by finite differences (Graetz eigenproblem).

    Half channel 0 <= y <= 1 (symmetry at 0, wall at 1), u = 1.5(1 - y²) with u_m = 1:
    -phi'' = lambda u phi, phi(1) = 0; D_h = 4 and Nu = lambda D_h² / 4 = 4 lambda.
    """
    h = 1.0 / n
    y = np.arange(n) * h
    a = (2 * np.eye(n) - np.eye(n, k=1) - np.eye(n, k=-1)) / h**2
    a[0, 1] = -2 / h**2  # mirror node for the symmetry plane
    weight = np.ones(n)
    weight[0] = 0.5  # makes the matrix pair symmetric
    lam = scipy.linalg.eigh(
        a * weight[:, None],
        np.diag(1.5 * (1 - y**2) * weight),
        eigvals_only=True,
        subset_by_index=[0, 0],
    )[0]
    return 4 * lam


def test_parallel_plates_isothermal_against_finite_differences():
    """Cross-method: 7.541 (Shah & London 1978 [from memory]) against our own Richardson-
    extrapolated finite-difference solution of the Graetz eigenproblem (7.5407)."""
    coarse, fine = _nusselt_t_plates_fd(200), _nusselt_t_plates_fd(400)
    extrapolated = (4 * fine - coarse) / 3
    assert NUSSELT_PARALLEL_PLATES_T == pytest.approx(extrapolated, abs=1e-3)
    assert nusselt_parallel_plates_shah_london_1978("T") == NUSSELT_PARALLEL_PLATES_T


def test_parallel_plates_isoflux_against_ht():
    """Cross-method: 8.235 against ht.Nu_laminar_rectangular_Shan_London at aspect 0 and the
    closed form 140/17 (classical, [from memory])."""
    ht = pytest.importorskip("ht")
    assert NUSSELT_PARALLEL_PLATES_H == pytest.approx(
        ht.Nu_laminar_rectangular_Shan_London(0.0), abs=1e-3
    )
    assert NUSSELT_PARALLEL_PLATES_H == pytest.approx(140 / 17, abs=1e-3)
    assert nusselt_parallel_plates_shah_london_1978("H") == NUSSELT_PARALLEL_PLATES_H


def test_parallel_plates_unknown_boundary():
    """Invariant: an unknown boundary condition names the valid ones."""
    with pytest.raises(ModelError, match="T, H"):
        nusselt_parallel_plates_shah_london_1978("Q")


# --- Turbulent flow --------------------------------------------------------------------------


def test_petukhov_against_smooth_pipe_law():
    """Cross-method: Petukhov against the Prandtl-von Karman-Nikuradse smooth-pipe law of
    fluids.friction (Darcy = 4 Fanning). Tolerance 2 % above Re = 1e4 and 5 % from 3000
    (band, common practice, no source)."""
    friction = pytest.importorskip("fluids.friction")
    for re, tol in [(3e3, 0.05), (5e3, 0.05), (1e4, 0.02), (1e5, 0.02), (1e6, 0.02), (5e6, 0.02)]:
        smooth = friction.Prandtl_von_Karman_Nikuradse(re) / 4
        assert fanning_petukhov_1970(re) == pytest.approx(smooth, rel=tol)


def test_petukhov_against_blasius_in_its_band():
    """Cross-method: Petukhov against fluids.friction.Blasius (Darcy 0.3164 Re^-0.25, stated
    for 3000 < Re < 2e5) within 3 % over 5e3-1e5 (band, common practice, no source)."""
    friction = pytest.importorskip("fluids.friction")
    for re in np.logspace(np.log10(5e3), 5, 9):
        assert fanning_petukhov_1970(re) == pytest.approx(friction.Blasius(re) / 4, rel=0.03)


def test_petukhov_formula_and_pole():
    """Invariant: Fanning = Darcy/4 of Petukhov's (0.790 ln Re - 1.64)^-2 at Re = 1e4 (written
    out), monotone falling over its range, and the pole Re <= 7.97 is refused."""
    assert fanning_petukhov_1970(1e4) == pytest.approx(
        0.25 / (0.790 * math.log(1e4) - 1.64) ** 2, rel=1e-14
    )
    f = fanning_petukhov_1970(np.logspace(np.log10(3000), np.log10(5e6), 50))
    assert np.all(np.diff(f) < 0)
    with pytest.raises(ModelError):
        fanning_petukhov_1970(np.array([1e4, 5.0]))


def test_gnielinski_against_ht():
    """Cross-method: against ht.conv_internal.turbulent_Gnielinski(Re, Pr, fd) with the Darcy
    factor fd = 4 f (independent implementation of Gnielinski 1976)."""
    conv_internal = pytest.importorskip("ht.conv_internal")
    for re in [2300.0, 1e4, 1e5, 1e6, 5e6]:
        for pr in [0.7, 1.2, 10.0, 100.0]:
            f = fanning_petukhov_1970(re)
            expected = conv_internal.turbulent_Gnielinski(Re=re, Pr=pr, fd=4 * f)
            assert nusselt_gnielinski_1976(re, pr) == pytest.approx(expected, rel=1e-12)
            assert nusselt_gnielinski_1976(re, pr, fanning=f) == pytest.approx(expected, rel=1e-12)


def test_gnielinski_against_petukhov_kirillov_popov():
    """Cross-method: against a different correlation, Petukhov-Kirillov-Popov in
    ht.conv_internal (range Re >= 4000), within 3 % for air (band, common practice, no
    source)."""
    conv_internal = pytest.importorskip("ht.conv_internal")
    for re in [1e4, 3e4, 1e5, 1e6]:
        fd = 4 * fanning_petukhov_1970(re)
        other = conv_internal.turbulent_Petukhov_Kirillov_Popov(Re=re, Pr=0.7, fd=fd)
        assert nusselt_gnielinski_1976(re, 0.7) == pytest.approx(other, rel=0.03)


def test_gnielinski_domain_and_range():
    """Invariant: Re <= 1000 (Nu <= 0) is refused; the registry flags Re outside 2300-5e6 and
    Pr outside 0.5-2000, and Petukhov's own entry flags Re < 3000."""
    with pytest.raises(ModelError):
        nusselt_gnielinski_1976(np.array([5e3, 900.0]), 0.7)
    entry = registry.get("nusselt_gnielinski_1976")
    flags = entry.out_of_range(re_dh=np.array([2000.0, 2500.0, 1e5, 6e6]), pr=0.7)
    assert flags.tolist() == [True, False, False, True]
    assert entry.out_of_range(re_dh=1e5, pr=0.3)
    assert registry.get("fanning_petukhov_1970").out_of_range(re_dh=2500.0)


# --- epsilon-NTU -----------------------------------------------------------------------------


def test_effectiveness_against_ht():
    """Cross-method: 1 - exp(-NTU) against ht.hx.effectiveness_from_NTU with Cr = 0 (rtol
    1e-9: ht evaluates 1 - exp(-NTU) directly and loses digits at small NTU, we use expm1)."""
    hx = pytest.importorskip("ht.hx")
    ntu = np.array([0.0, 1e-6, 0.1, 1.0, 3.0, 20.0])
    expected = [hx.effectiveness_from_NTU(float(x), 0.0) for x in ntu]
    np.testing.assert_allclose(effectiveness_single_stream(ntu), expected, rtol=1e-9, atol=0)
    assert effectiveness_single_stream(np.inf) == 1.0


def test_conductance_bounds():
    """Invariant: G never exceeds C nor UA, over 12 decades of each and the edge values."""
    rng = np.random.default_rng(1)
    ua = np.concatenate([10 ** rng.uniform(-6, 6, 2000), [0.0, 0.0, np.inf, 1.0, np.inf]])
    c = np.concatenate([10 ** rng.uniform(-6, 6, 2000), [0.0, 1.0, 1.0, 0.0, 0.0]])
    with np.errstate(all="raise"):
        g = bulk_referenced_conductance(ua, c)
    assert np.all(np.isfinite(g))
    assert np.all(g <= c)
    assert np.all(g <= ua)
    assert np.all(g >= 0)
    assert g[-5:].tolist() == [0.0, 0.0, 1.0, 0.0, 0.0]


def test_conductance_limits():
    """Invariant: G -> UA as UA/C -> 0 and G -> C as UA/C -> inf."""
    c = 2.0
    assert bulk_referenced_conductance(2e-9, c) == pytest.approx(2e-9, rel=1e-8)
    assert bulk_referenced_conductance(100.0, c) == pytest.approx(c, rel=1e-15)
    ratio = np.logspace(-8, -4, 5)
    np.testing.assert_allclose(
        bulk_referenced_conductance(ratio * c, c) / (ratio * c), 1 - ratio / 2, rtol=1e-7
    )


def test_conductance_worked_sink():
    """Cross-method: physics.md §2.3 developed-flow route [calc]: hA = 2.94471 W/K and
    1/(m-dot cp) = 0.344588 K/W give R = 0.540536 K/W; m-dot recomputed here by hand."""
    b = (0.05 - 20 * 1.0e-3) / 19
    v_ch = 2.0 * (1 + 1.0e-3 / b)
    m_dot = RHO * v_ch * 19 * b * 0.025
    assert m_dot == pytest.approx(2.88365e-3, rel=1e-5)
    assert 1 / (m_dot * CP) == pytest.approx(0.344588, rel=1e-5)
    g = bulk_referenced_conductance(2.94471, m_dot * CP)
    assert 1 / g == pytest.approx(0.540536, rel=1e-5)
    assert g == pytest.approx(m_dot * CP * (1 - math.exp(-2.94471 / (m_dot * CP))), rel=1e-14)
