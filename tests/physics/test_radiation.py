"""Tests of optifin.physics.radiation.

Each test is labelled in its name and docstring as a published check value, an invariant
(a limit or property that must hold) or a cross-method check (an independent calculation:
scipy integration, a discretised radiosity network written here, or a reference library).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import integrate
from scipy.constants import Stefan_Boltzmann as SIGMA

from optifin.errors import ModelError
from optifin.physics import radiation as rad

B = 6e-3  # channel width of the physics.md section 4.1 example [m]
H = 30e-3  # fin height of the same example [m]


# --- independent 2-D view factors by numerical integration ---------------------------------
# 2-D diffuse kernel: dF(d1 -> 2) = cos(theta1) cos(theta2) / (2 r) ds2 (infinitely long
# surfaces); F(1 -> 2) = (1/L1) double integral. Channel: left fin x = 0, 0 <= y <= H; base
# y = 0, 0 <= x <= b; right fin x = b; opening y = H.


def _quad_fin_to_opening(b, h):
    value, _ = integrate.dblquad(
        lambda x2, y1: x2 * (h - y1) / (2 * (x2**2 + (h - y1) ** 2) ** 1.5),
        0,
        h,
        0,
        b,
        epsabs=1e-12,
        epsrel=1e-10,
    )
    return value / h


def _quad_base_to_opening(b, h):
    value, _ = integrate.dblquad(
        lambda x2, x1: h * h / (2 * ((x2 - x1) ** 2 + h * h) ** 1.5),
        0,
        b,
        0,
        b,
        epsabs=1e-12,
        epsrel=1e-10,
    )
    return value / b


def _quad_fin_to_fin(b, h):
    value, _ = integrate.dblquad(
        lambda y2, y1: b * b / (2 * (b * b + (y2 - y1) ** 2) ** 1.5),
        0,
        h,
        0,
        h,
        epsabs=1e-12,
        epsrel=1e-10,
    )
    return value / h


def _quad_fin_to_base(b, h):
    value, _ = integrate.dblquad(
        lambda x2, y1: x2 * y1 / (2 * (x2**2 + y1**2) ** 1.5),
        0,
        h,
        0,
        b,
        epsabs=1e-12,
        epsrel=1e-10,
    )
    return value / h


# --- independent discretised radiosity network of a grey isothermal U channel -------------


def _network_apparent_emissivity(eps, b, h, n=60):
    """Apparent emissivity of the opening of a 2-D grey isothermal U channel, from the
    net-radiation method on n strips per wall (strip view factors by crossed strings between
    segments; the channel interior is convex, so no strip is shadowed)."""
    t = np.linspace(0.0, 1.0, n + 1)
    zeros = np.zeros(n)
    # segment end points (x0, y0, x1, y1): left fin, base, right fin
    left = np.column_stack([zeros, h * t[:-1], zeros, h * t[1:]])
    base = np.column_stack([b * t[:-1], zeros, b * t[1:], zeros])
    right = np.column_stack([zeros + b, h * t[:-1], zeros + b, h * t[1:]])
    seg = np.vstack([left, base, right])
    wall = np.repeat([0, 1, 2], n)
    a0, a1 = seg[:, None, :2], seg[:, None, 2:]
    c0, c1 = seg[None, :, :2], seg[None, :, 2:]

    def dist(p, q):
        return np.linalg.norm(p - q, axis=-1)

    length = dist(seg[:, :2], seg[:, 2:])
    crossed = dist(a0, c1) + dist(a1, c0)
    uncrossed = dist(a0, c0) + dist(a1, c1)
    f = np.abs(crossed - uncrossed) / (2 * length[:, None])
    f[wall[:, None] == wall[None, :]] = 0.0
    f_open = 1.0 - f.sum(axis=1)
    # J = eps Eb + (1 - eps) F J with Eb = 1 (surfaces) and a black opening at Eb = 0
    radiosity = np.linalg.solve(np.eye(3 * n) - (1 - eps) * f, np.full(3 * n, eps))
    return float(np.sum(length * f_open * radiosity) / b)


# --- linearised coefficient ----------------------------------------------------------------


def test_linearised_coefficient_check_value_cross_method():
    """Cross-method: h_r/eps at 350/300 K = 7.83220 W/m^2K (physics.md 4.1 and check value
    21 [calc]) and = ht.radiation.q_rad(1, T, T2)/(T - T2) (ht uses the CODATA-2014 sigma
    5.670367e-8, hence rtol 1e-5)."""
    ht_radiation = pytest.importorskip("ht.radiation")
    assert rad.linearised_radiative_coefficient(350.0, 300.0) == pytest.approx(7.83220, rel=1e-5)
    ts = np.array([300.5, 320.0, 350.0, 400.0, 500.0])
    tinf = np.array([[280.0], [300.0]])
    h_r = rad.linearised_radiative_coefficient(ts, tinf)
    assert h_r.shape == (2, 5)
    expected = np.array(
        [[ht_radiation.q_rad(1.0, t, t2) / (t - t2) for t in ts] for t2 in tinf.ravel()]
    )
    np.testing.assert_allclose(h_r, expected, rtol=1e-5)


def test_linearised_coefficient_equal_temperatures_invariant():
    """Invariant: at T_s = T_inf the coefficient is the derivative 4 sigma T^3 (finite, no
    0/0), and it rises with either temperature."""
    assert rad.linearised_radiative_coefficient(300.0, 300.0) == pytest.approx(
        4 * SIGMA * 300.0**3, rel=1e-15
    )
    h = rad.linearised_radiative_coefficient(np.linspace(300, 400, 11), 300.0)
    assert np.all(np.diff(h) > 0)
    with pytest.raises(ModelError):
        rad.linearised_radiative_coefficient(-1.0, 300.0)


# --- U-channel view factors ----------------------------------------------------------------


def test_u_channel_view_factors_check_values_cross_method():
    """Cross-method: crossed-strings view factors for b = 6 mm, H = 30 mm vs scipy dblquad of
    the 2-D diffuse kernel, and the physics.md 4.1 / check value 22 [calc] values
    F_fin->open = 0.090098, F_base->open = 0.099020 (abs 1e-6)."""
    f_fin, f_base = rad.u_channel_view_factors(B, H)
    assert f_fin == pytest.approx(_quad_fin_to_opening(B, H), abs=1e-9)
    assert f_base == pytest.approx(_quad_base_to_opening(B, H), abs=1e-9)
    assert f_fin == pytest.approx(0.090098, abs=1e-6)
    assert f_base == pytest.approx(0.099020, abs=1e-6)


@pytest.mark.parametrize(("b", "h"), [(2e-3, 50e-3), (10e-3, 10e-3), (20e-3, 3e-3)])
def test_u_channel_view_factors_other_shapes_cross_method(b, h):
    """Cross-method: crossed strings vs numerical integration for deep, square and shallow
    channels."""
    f_fin, f_base = rad.u_channel_view_factors(b, h)
    assert f_fin == pytest.approx(_quad_fin_to_opening(b, h), abs=1e-9)
    assert f_base == pytest.approx(_quad_base_to_opening(b, h), abs=1e-9)


def test_u_channel_summation_and_reciprocity_invariant():
    """Invariant: summation rule from a fin (to opening + other fin + base = 1, the last two
    integrated numerically) and from the opening (reciprocity H F_fin->open = b F_open->fin,
    symmetry F_open->base = F_base->open: 2 (H/b) F_fin->open + F_base->open = 1)."""
    f_fin, f_base = rad.u_channel_view_factors(B, H)
    assert f_fin + _quad_fin_to_fin(B, H) + _quad_fin_to_base(B, H) == pytest.approx(1.0, abs=1e-8)
    b = np.array([1e-3, 6e-3, 50e-3])
    h = np.array([[1e-3], [30e-3], [100e-3]])
    f_fin, f_base = rad.u_channel_view_factors(b, h)
    np.testing.assert_allclose(2 * (h / b) * f_fin + f_base, 1.0, rtol=1e-12)


def test_u_channel_limits_invariant():
    """Invariant: H -> 0 (flat) gives F_fin->open = 1/2 and F_base->open = 1; a very deep,
    narrow channel sends nothing from the base to the opening; b <= 0 raises."""
    f_fin, f_base = rad.u_channel_view_factors(6e-3, np.array([0.0, 1e-9]))
    np.testing.assert_allclose(f_fin, 0.5, atol=1e-6)
    np.testing.assert_allclose(f_base, 1.0, atol=1e-6)
    f_fin, f_base = rad.u_channel_view_factors(1e-6, 1.0)
    assert f_fin < 1e-6 and f_base < 1e-6
    with pytest.raises(ModelError):
        rad.u_channel_view_factors(0.0, H)


# --- cavity apparent emissivity ------------------------------------------------------------


def test_cavity_apparent_emissivity_check_values():
    """Cross-method: eps = 0.85, A_open/A_cav = 6/66 gives 0.98421 and eps = 0.05 gives
    0.36667 (physics.md 4.1 and check value 23 [calc]); the coarse 3-surface network (two
    fins and base, one node each, crossed-strings factors) agrees within 1e-4 for this deep
    channel."""
    eps_a = rad.cavity_apparent_emissivity(np.array([0.85, 0.05]), B, 2 * H + B)
    np.testing.assert_allclose(eps_a, [0.98421, 0.36667], atol=1e-5)
    three_node = [_network_apparent_emissivity(e, B, H, n=1) for e in (0.85, 0.05)]
    np.testing.assert_allclose(eps_a, three_node, rtol=1e-4)


def test_cavity_apparent_emissivity_limits_invariant():
    """Invariant: a black surface gives 1; opening = cavity area (flat) gives eps; eps = 0
    gives 0; eps_a rises with eps and with cavity area; cavity < opening raises."""
    eps = np.linspace(0.0, 1.0, 21)
    np.testing.assert_allclose(rad.cavity_apparent_emissivity(1.0, [1.0, 0.1, 1e-6], 1.0), 1.0)
    np.testing.assert_allclose(rad.cavity_apparent_emissivity(eps, 2.0, 2.0), eps, atol=1e-15)
    assert rad.cavity_apparent_emissivity(0.0, 1.0, 5.0) == 0.0
    assert np.all(np.diff(rad.cavity_apparent_emissivity(eps, 1.0, 5.0)) > 0)
    assert np.all(np.diff(rad.cavity_apparent_emissivity(0.3, 1.0, [1.0, 2.0, 10.0])) > 0)
    with pytest.raises(ModelError):
        rad.cavity_apparent_emissivity(0.5, 2.0, 1.0)
    with pytest.raises(ModelError):
        rad.cavity_apparent_emissivity(1.2, 1.0, 2.0)


@pytest.mark.parametrize(("eps", "low", "high"), [(0.85, 0.015, 0.03), (0.05, 0.08, 0.15)])
def test_cavity_one_node_optimistic_cross_method(eps, low, high):
    """Cross-method: against a discretised 2-D radiosity network (60 strips per wall, written
    here) the one-node model is optimistic for b = 6 mm, H = 30 mm: about 2 % at eps = 0.85
    and 11 % at eps = 0.05 (the network itself is exact for a black channel)."""
    assert _network_apparent_emissivity(1.0, B, H) == pytest.approx(1.0, abs=1e-12)
    network = _network_apparent_emissivity(eps, B, H)
    assert _network_apparent_emissivity(eps, B, H, n=120) == pytest.approx(network, rel=1e-3)
    one_node = rad.cavity_apparent_emissivity(eps, B, 2 * H + B)
    assert low < one_node / network - 1 < high


# --- array conductance ---------------------------------------------------------------------

ARRAY = {
    "emissivity": 0.85,
    "fin_count": 14,
    "spacing": 6.077e-3,
    "fin_thickness": 1.5e-3,
    "fin_height": 30e-3,
    "length": 0.10,
    "t_surface": 350.0,
    "t_surroundings": 300.0,
}


def test_array_zero_height_is_flat_plate_cross_method():
    """Cross-method: H = 0 reduces to a flat plate of width N t + (N - 1) b:
    G (T_s - T_inf) = ht.radiation.q_rad(eps, T_s, T_inf) x area (rtol 1e-5, sigma
    CODATA-2014 in ht)."""
    ht_radiation = pytest.importorskip("ht.radiation")
    args = dict(ARRAY, fin_height=0.0)
    g = rad.array_radiation_conductance(**args)
    width = args["fin_count"] * args["fin_thickness"] + (args["fin_count"] - 1) * args["spacing"]
    q = ht_radiation.q_rad(args["emissivity"], args["t_surface"], args["t_surroundings"])
    assert g * (args["t_surface"] - args["t_surroundings"]) == pytest.approx(
        q * width * args["length"], rel=1e-5
    )


def test_array_black_is_black_envelope_invariant():
    """Invariant: for eps = 1 an isothermal cavity radiates as a black opening, so the array
    is exactly a black envelope of width N t + (N - 1) b plus the two outer faces."""
    args = dict(ARRAY, emissivity=1.0)
    g = rad.array_radiation_conductance(**args)
    n, b, t, h, length = (
        args[k] for k in ("fin_count", "spacing", "fin_thickness", "fin_height", "length")
    )
    envelope = ((n - 1) * b + n * t + 2 * h) * length
    q_black = SIGMA * (args["t_surface"] ** 4 - args["t_surroundings"] ** 4)
    assert g * (args["t_surface"] - args["t_surroundings"]) == pytest.approx(
        q_black * envelope, rel=1e-12
    )


def test_array_bounds_invariant():
    """Invariant: G lies between the grey footprint-plus-outer-faces (eps_a >= eps) and both
    the black envelope (eps_a <= 1) and all surfaces fully exposed (eps_a b <= eps (2H + b))."""
    g = rad.array_radiation_conductance(**ARRAY)
    n, b, t, h, length, eps = (
        ARRAY[k]
        for k in ("fin_count", "spacing", "fin_thickness", "fin_height", "length", "emissivity")
    )
    h_r = rad.linearised_radiative_coefficient(ARRAY["t_surface"], ARRAY["t_surroundings"])
    grey_envelope = eps * h_r * length * ((n - 1) * b + n * t + 2 * h)
    black_envelope = grey_envelope / eps
    all_exposed = eps * h_r * length * ((n - 1) * (b + 2 * h) + n * t + 2 * h)
    assert grey_envelope < g < min(black_envelope, all_exposed)


def test_array_monotone_invariant():
    """Invariant: G grows with emissivity, with surface temperature and with fin count at
    fixed spacing (a population evaluated in one broadcast call)."""
    eps = np.linspace(0.05, 1.0, 20)
    assert np.all(np.diff(rad.array_radiation_conductance(**dict(ARRAY, emissivity=eps))) > 0)
    ts = np.linspace(301.0, 450.0, 20)
    assert np.all(np.diff(rad.array_radiation_conductance(**dict(ARRAY, t_surface=ts))) > 0)
    n = np.arange(1, 30)
    g = rad.array_radiation_conductance(**dict(ARRAY, fin_count=n))
    assert g.shape == n.shape
    assert np.all(np.diff(g) > 0)


def test_array_options_invariant():
    """Invariant: the outer faces add exactly 2 eps h_r H L; the channel efficiency scales
    only the channel-opening term (linear in eta); a single fin has no channel."""
    h_r = rad.linearised_radiative_coefficient(ARRAY["t_surface"], ARRAY["t_surroundings"])
    with_faces = rad.array_radiation_conductance(**ARRAY)
    without = rad.array_radiation_conductance(**ARRAY, include_outer_faces=False)
    assert with_faces - without == pytest.approx(
        2 * ARRAY["emissivity"] * h_r * ARRAY["fin_height"] * ARRAY["length"], rel=1e-12
    )
    g = rad.array_radiation_conductance(**ARRAY, channel_efficiency=np.array([0.0, 0.5, 1.0]))
    assert g[1] - g[0] == pytest.approx(0.5 * (g[2] - g[0]), rel=1e-12)
    assert g[0] == pytest.approx(
        h_r
        * ARRAY["length"]
        * ARRAY["emissivity"]
        * (ARRAY["fin_count"] * ARRAY["fin_thickness"] + 2 * ARRAY["fin_height"]),
        rel=1e-12,
    )
    single = rad.array_radiation_conductance(**dict(ARRAY, fin_count=1), channel_efficiency=0.3)
    assert single == pytest.approx(
        rad.array_radiation_conductance(**dict(ARRAY, fin_count=1)), rel=1e-15
    )


def test_array_rejects_bad_input_invariant():
    """Invariant: unphysical arguments raise ModelError rather than returning NaN."""
    for key, value in (
        ("emissivity", 1.5),
        ("fin_count", 0),
        ("spacing", 0.0),
        ("fin_height", -1e-3),
        ("t_surface", -5.0),
    ):
        with pytest.raises(ModelError):
            rad.array_radiation_conductance(**dict(ARRAY, **{key: value}))
    with pytest.raises(ModelError):
        rad.array_radiation_conductance(**ARRAY, channel_efficiency=1.1)


def test_array_registered_invariant():
    """Invariant: the array model is registered with its reference and flags emissivity
    outside 0..1."""
    entry = rad.array_radiation_conductance.correlation
    assert "Rea" in entry.reference
    np.testing.assert_array_equal(
        entry.out_of_range(emissivity=np.array([0.5, 1.2])), [False, True]
    )
