"""Tests of optifin.physics.natural_convection.

Each test is labelled in its name and docstring as a published check value, an invariant
(a limit or property that must hold) or a cross-method check (an independent calculation:
scipy, a reference library, or a separate evaluation of the published form).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import optimize

from optifin.errors import ModelError
from optifin.physics import natural_convection as nc

# Worked case of reference/physics.md section 4: air at T_film = 325 K, 1 atm,
# L = 0.10 m, dT = 50 K, beta = 1/T_film, b = 6 mm.
T_FILM = 325.0
P_ATM = 101325.0
LENGTH = 0.10
DELTA_T = 50.0
SPACING = 6e-3


@pytest.fixture(scope="module")
def air_325():
    """Air properties at 325 K, 1 atm, from CoolProp (Lemmon et al. 2000/2004)."""
    coolprop = pytest.importorskip("CoolProp.CoolProp")
    props = {
        name: coolprop.PropsSI(key, "T", T_FILM, "P", P_ATM, "Air")
        for name, key in (("rho", "D"), ("cp", "C"), ("mu", "V"), ("k", "L"))
    }
    props["beta"] = 1.0 / T_FILM
    return props


def _bcr_published(el: float, c_fd: float) -> float:
    """The published composite form, [C/El^2 + 2.873/El^(1/2)]^(-1/2), in plain math."""
    return (c_fd / el**2 + 2.873 / math.sqrt(el)) ** -0.5


# --- Bar-Cohen & Rohsenow 1984, isothermal ------------------------------------------------


@pytest.mark.parametrize(
    ("el", "expected"),
    [
        # physics.md section 4 table and check value 16 [calc] from the form in Kutz (ed.),
        # Mechanical Engineers' Handbook vol. 4, Table 1 [seen]
        (10.0, 0.38724),
        (54.26, 1.30669),
        (1000.0, 3.30720),
        (1.0, 0.041563),
        (100.0, 1.70276),
    ],
)
def test_bar_cohen_rohsenow_symmetric_values_cross_method(el, expected):
    """Cross-method: tabulated [calc] values vs the rearranged implementation and a plain
    evaluation of the published form (formula checks: the form itself is [seen])."""
    nu = nc.nusselt_bar_cohen_rohsenow_1984(el)
    assert nu == pytest.approx(_bcr_published(el, 576.0), rel=1e-12)
    assert nu == pytest.approx(expected, rel=1e-4)


@pytest.mark.parametrize(
    ("el", "expected"),
    # physics.md section 4 table [calc], asymmetric isothermal
    [(1.0, 0.082514), (10.0, 0.65253), (54.26, 1.50938), (100.0, 1.82059), (1000.0, 3.31504)],
)
def test_bar_cohen_rohsenow_asymmetric_values_cross_method(el, expected):
    """Cross-method: asymmetric isothermal values vs a plain evaluation of the published form."""
    nu = nc.nusselt_bar_cohen_rohsenow_1984(el, case="asymmetric_isothermal")
    assert nu == pytest.approx(_bcr_published(el, 144.0), rel=1e-12)
    assert nu == pytest.approx(expected, rel=1e-4)


@pytest.mark.parametrize(
    ("case", "divisor"), [("symmetric_isothermal", 24.0), ("asymmetric_isothermal", 12.0)]
)
def test_bar_cohen_rohsenow_fully_developed_limit_invariant(case, divisor):
    """Invariant: El -> 0 tends to the fully developed limit El/24 (El/12 asymmetric)
    (Bar-Cohen & Rohsenow 1984, Kutz Table 1 'fully developed limit' column [seen])."""
    el = np.array([1e-3, 1e-2])
    ratio = nc.nusselt_bar_cohen_rohsenow_1984(el, case=case) / (el / divisor)
    np.testing.assert_allclose(ratio, 1.0, rtol=1e-2)


@pytest.mark.parametrize("case", ["symmetric_isothermal", "asymmetric_isothermal"])
def test_bar_cohen_rohsenow_isolated_plate_limit_invariant(case):
    """Invariant: El -> inf tends to the isolated-plate branch El^(1/4)/sqrt(2.873)."""
    el = np.array([1e6, 1e9, 1e200, 1e300])
    ratio = nc.nusselt_bar_cohen_rohsenow_1984(el, case=case) / (el**0.25 / math.sqrt(2.873))
    np.testing.assert_allclose(ratio, 1.0, rtol=1e-2)


def test_bar_cohen_rohsenow_zero_and_monotone_invariant():
    """Invariant: Nu(0) = 0 with no warning or NaN, Nu finite and strictly increasing in El."""
    el = np.concatenate([[0.0], np.logspace(-8, 12, 400)])
    for case in ("symmetric_isothermal", "asymmetric_isothermal"):
        with np.errstate(all="raise"):
            nu = nc.nusselt_bar_cohen_rohsenow_1984(el, case=case)
        assert nu[0] == 0.0
        assert np.all(np.isfinite(nu))
        assert np.all(np.diff(nu) > 0)


def test_bar_cohen_rohsenow_asymmetric_above_symmetric_invariant():
    """Invariant: one adiabatic wall halves the heated area per channel flow, so the
    asymmetric Nu (per heated wall) is higher and the two meet in the isolated-plate limit."""
    el = np.logspace(-2, 6, 50)
    sym = nc.nusselt_bar_cohen_rohsenow_1984(el)
    asym = nc.nusselt_bar_cohen_rohsenow_1984(el, case="asymmetric_isothermal")
    assert np.all(asym > sym)
    assert asym[-1] / sym[-1] == pytest.approx(1.0, rel=1e-3)


def test_bar_cohen_rohsenow_broadcasts_invariant():
    """Invariant: a (population x case-grid) array broadcasts and keeps its shape."""
    el = np.logspace(-1, 3, 12).reshape(3, 4)
    nu = nc.nusselt_bar_cohen_rohsenow_1984(el)
    assert nu.shape == (3, 4)
    np.testing.assert_allclose(
        nu.ravel(), [_bcr_published(x, 576.0) for x in el.ravel()], rtol=1e-12
    )


def test_bar_cohen_rohsenow_rejects_bad_input_invariant():
    """Invariant: a negative El or an unknown case raises ModelError instead of NaN."""
    with pytest.raises(ModelError):
        nc.nusselt_bar_cohen_rohsenow_1984(np.array([1.0, -1.0]))
    with pytest.raises(ModelError, match="unknown case"):
        nc.nusselt_bar_cohen_rohsenow_1984(1.0, case="symmetric")


# --- Bar-Cohen & Rohsenow 1984, isoflux ----------------------------------------------------


@pytest.mark.parametrize(
    ("case", "c_fd", "c_ip", "values"),
    [
        # physics.md section 4 table [calc], forms from Kutz Table 1 [seen]
        ("symmetric", 48.0, 2.51, (0.14071, 0.41525, 1.06733, 2.20129)),
        ("asymmetric", 24.0, 2.51, (0.19422, 0.54239, 1.25215, 2.34166)),
        ("symmetric_mid_height", 12.0, 1.88, None),
    ],
)
def test_isoflux_values_cross_method(case, c_fd, c_ip, values):
    """Cross-method: isoflux values vs a plain evaluation of the published form
    [C/El' + C2/El'^(2/5)]^(-1/2), and the physics.md [calc] table."""
    el_prime = np.array([1.0, 10.0, 100.0, 1000.0])
    nu = nc.nusselt_bar_cohen_rohsenow_1984_isoflux(el_prime, case=case)
    published = [(c_fd / x + c_ip / x**0.4) ** -0.5 for x in el_prime]
    np.testing.assert_allclose(nu, published, rtol=1e-12)
    if values is not None:
        np.testing.assert_allclose(nu, values, rtol=1e-4)


@pytest.mark.parametrize(
    ("case", "divisor"), [("symmetric", 48.0), ("asymmetric", 24.0), ("symmetric_mid_height", 12.0)]
)
def test_isoflux_limits_invariant(case, divisor):
    """Invariant: El' -> 0 gives sqrt(El'/C) (Kutz Table 1 fully developed column [seen]);
    El' = 0 gives 0; monotone increasing."""
    small = np.array([1e-6, 1e-5])
    ratio = nc.nusselt_bar_cohen_rohsenow_1984_isoflux(small, case=case) / np.sqrt(small / divisor)
    np.testing.assert_allclose(ratio, 1.0, rtol=1e-2)
    el_prime = np.concatenate([[0.0], np.logspace(-8, 12, 200)])
    with np.errstate(all="raise"):
        nu = nc.nusselt_bar_cohen_rohsenow_1984_isoflux(el_prime, case=case)
    assert nu[0] == 0.0
    assert np.all(np.diff(nu) > 0)


# --- Elenbaas 1942 --------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("el", "expected"),
    # physics.md section 4 table and check value 17 [calc] from the form [from memory]
    [(10.0, 0.40719), (100.0, 1.66917), (1.0, 0.041667), (1000.0, 3.32779)],
)
def test_elenbaas_values_cross_method(el, expected):
    """Cross-method: Elenbaas Nu vs plain evaluation of (El/24)(1 - exp(-35/El))^(3/4)
    (form [from memory]) and the physics.md [calc] values."""
    nu = nc.nusselt_elenbaas_1942(el)
    assert nu == pytest.approx(el / 24.0 * (1.0 - math.exp(-35.0 / el)) ** 0.75, rel=1e-12)
    assert nu == pytest.approx(expected, rel=1e-4)


def test_elenbaas_limits_and_monotone_invariant():
    """Invariant: El/24 as El -> 0, (35^(3/4)/24) El^(1/4) as El -> inf, Nu(0) = 0,
    increasing; within 6 % of Bar-Cohen & Rohsenow over 1..1e4 (two correlations of the
    same data; the largest gap, 5.4 %, is near El = 10)."""
    assert nc.nusselt_elenbaas_1942(1e-3) / (1e-3 / 24) == pytest.approx(1.0, rel=1e-6)
    big = np.array([1e8, 1e12])
    np.testing.assert_allclose(
        nc.nusselt_elenbaas_1942(big) / (35**0.75 / 24 * big**0.25), 1.0, rtol=1e-4
    )
    el = np.concatenate([[0.0], np.logspace(-6, 12, 300)])
    with np.errstate(all="raise"):
        nu = nc.nusselt_elenbaas_1942(el)
    assert nu[0] == 0.0
    assert np.all(np.diff(nu) > 0)
    mid = np.logspace(0, 4, 40)
    np.testing.assert_allclose(
        nc.nusselt_elenbaas_1942(mid), nc.nusselt_bar_cohen_rohsenow_1984(mid), rtol=0.06
    )


# --- optimum spacing ------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("case", "c_fd", "published", "calc"),
    # published constants 2.714 / 2.154: Bar-Cohen & Rohsenow 1984 [from memory];
    # physics.md [calc] optimum 2.71552 / 2.15531
    [
        ("symmetric_isothermal", 576.0, 2.714, 2.71552),
        ("asymmetric_isothermal", 144.0, 2.154, 2.15531),
    ],
)
def test_optimum_spacing_constant_cross_method(case, c_fd, published, calc):
    """Cross-method: maximise heat per unit base width, Nu(P b^4)/b^2 at fixed P, with
    scipy.optimize and compare with the published constant [from memory] (rel 1e-3), the
    physics.md [calc] value and the closed form (2 C / 2.873)^(1/6) from dNu/db = 0."""
    p = 2.0e9  # any P > 0: the optimum of x = b P^(1/4) is independent of P

    def negative_heat(b):
        return -nc.nusselt_bar_cohen_rohsenow_1984(p * b**4, case=case) / b**2

    res = optimize.minimize_scalar(
        negative_heat, bounds=(1e-4, 5e-2), method="bounded", options={"xatol": 1e-12}
    )
    x_opt = res.x * p**0.25
    assert x_opt == pytest.approx(calc, rel=1e-5)
    assert x_opt == pytest.approx((2 * c_fd / 2.873) ** (1 / 6), rel=1e-6)
    assert x_opt == pytest.approx(published, rel=1e-3)
    b_opt = nc.optimum_spacing_bar_cohen_rohsenow_1984(p, case=case)
    assert b_opt == pytest.approx(published * p**-0.25, rel=1e-12)
    assert b_opt == pytest.approx(res.x, rel=1e-3)


def test_optimum_spacing_symmetric_el_and_nu_cross_method():
    """Cross-method: at the scipy optimum El_opt = 54.3765 and Nu_opt = 1.30810
    (physics.md section 4 [calc])."""
    res = optimize.minimize_scalar(
        lambda x: -nc.nusselt_bar_cohen_rohsenow_1984(x**4) / x**2,
        bounds=(0.5, 10.0),
        method="bounded",
        options={"xatol": 1e-12},
    )
    el_opt = res.x**4
    assert el_opt == pytest.approx(54.3765, rel=1e-4)
    assert nc.nusselt_bar_cohen_rohsenow_1984(el_opt) == pytest.approx(1.30810, rel=1e-4)


def test_optimum_spacing_edges_invariant():
    """Invariant: P = 0 (no buoyancy) gives an infinite optimum, no warning; b_opt falls as
    P^(-1/4); unknown case raises."""
    with np.errstate(all="raise"):
        b = nc.optimum_spacing_bar_cohen_rohsenow_1984(np.array([0.0, 1e8, 1.6e9]))
    assert b[0] == np.inf
    assert b[1] / b[2] == pytest.approx(16**0.25, rel=1e-12)
    with pytest.raises(ModelError):
        nc.optimum_spacing_bar_cohen_rohsenow_1984(1e9, case="symmetric")


# --- worked case, CoolProp air -------------------------------------------------------------


def test_worked_case_air_properties_cross_method(air_325):
    """Cross-method: CoolProp air at 325 K vs the property set listed in physics.md section 4
    (CoolProp [calc] there): rho 1.086252, cp 1007.534, mu 1.972151e-5, k 0.02821684."""
    assert air_325["rho"] == pytest.approx(1.086252, rel=1e-5)
    assert air_325["cp"] == pytest.approx(1007.534, rel=1e-5)
    assert air_325["mu"] == pytest.approx(1.972151e-5, rel=1e-5)
    assert air_325["k"] == pytest.approx(0.02821684, rel=1e-5)


def test_worked_case_elenbaas_number_cross_method(air_325):
    """Cross-method: El = Ra_b b/L with Ra_b from fluids.core.Grashof and Prandtl (reference
    library), and the physics.md worked value El = 41.7720 [calc]."""
    fluids_core = pytest.importorskip("fluids.core")
    el = nc.elenbaas_number(SPACING, LENGTH, DELTA_T, **air_325)
    gr = fluids_core.Grashof(
        SPACING,
        air_325["beta"],
        T_FILM + DELTA_T / 2,
        T_FILM - DELTA_T / 2,
        rho=air_325["rho"],
        mu=air_325["mu"],
    )
    pr = fluids_core.Prandtl(Cp=air_325["cp"], k=air_325["k"], mu=air_325["mu"])
    assert el == pytest.approx(gr * pr * SPACING / LENGTH, rel=1e-10)
    assert el == pytest.approx(41.7720, rel=1e-4)
    # a colder-than-ambient array: same magnitude of buoyancy
    assert nc.elenbaas_number(SPACING, LENGTH, -DELTA_T, **air_325) == pytest.approx(el)


def test_worked_case_nusselt_and_optimum_cross_method(air_325):
    """Cross-method: physics.md worked case [calc]: Nu_b = 1.136197, h = 5.3433 W/m^2K
    (Bar-Cohen & Rohsenow), Elenbaas Nu = 1.137826, b_opt = 6.40531 mm (2.714 P^(-1/4)),
    with the properties computed independently here with CoolProp."""
    el = nc.elenbaas_number(SPACING, LENGTH, DELTA_T, **air_325)
    nu = nc.nusselt_bar_cohen_rohsenow_1984(el)
    assert nu == pytest.approx(1.136197, rel=1e-4)
    assert nu * air_325["k"] / SPACING == pytest.approx(5.3433, rel=1e-4)
    assert nc.nusselt_elenbaas_1942(el) == pytest.approx(1.137826, rel=1e-4)
    p = nc.spacing_parameter(LENGTH, DELTA_T, **air_325)
    assert p * SPACING**4 == pytest.approx(el, rel=1e-12)
    b_opt = nc.optimum_spacing_bar_cohen_rohsenow_1984(p)
    assert b_opt == pytest.approx(6.40531e-3, rel=1e-4)
    assert nc.nusselt_bar_cohen_rohsenow_1984(p * b_opt**4) == pytest.approx(1.30663, rel=1e-4)


def test_worked_case_isoflux_cross_method(air_325):
    """Cross-method: physics.md isoflux worked case [calc]: q'' = 200 W/m^2, b = 6 mm:
    El' = 35.5294, Nu_L = 0.715606, dT_L = 59.43 K; El' = El(dT) q'' b / (k dT) checks the
    definition against the isothermal one."""
    q = 200.0
    el_prime = nc.modified_elenbaas_number(SPACING, LENGTH, q, **air_325)
    el = nc.elenbaas_number(SPACING, LENGTH, DELTA_T, **air_325)
    assert el_prime == pytest.approx(el * q * SPACING / (air_325["k"] * DELTA_T), rel=1e-12)
    assert el_prime == pytest.approx(35.5294, rel=1e-4)
    nu = nc.nusselt_bar_cohen_rohsenow_1984_isoflux(el_prime)
    assert nu == pytest.approx(0.715606, rel=1e-4)
    assert q * SPACING / (air_325["k"] * nu) == pytest.approx(59.43, abs=5e-3)


# --- Churchill & Chu 1975 -------------------------------------------------------------------


def test_churchill_chu_against_ht_cross_method():
    """Cross-method: ht.Nu_vertical_plate_Churchill (reference library, ht 1.2.0) to 1e-9
    over Ra 1e-1..1e13 and Pr 0.01..1000."""
    ht = pytest.importorskip("ht")
    ra = np.logspace(-1, 13, 29)
    pr = np.array([0.01, 0.1, 0.7, 7.0, 1000.0])
    nu = nc.nusselt_churchill_chu_1975(ra[:, None], pr[None, :])
    expected = np.array([[ht.Nu_vertical_plate_Churchill(p, r / p) for p in pr] for r in ra])
    np.testing.assert_allclose(nu, expected, rtol=1e-9)


def test_churchill_chu_published_check_value():
    """Published check value: Pr = 0.69, Gr = 2.63e9 -> Nu = 147.16 (Incropera et al.,
    Example 9.2, via ht's docstring)."""
    assert nc.nusselt_churchill_chu_1975(0.69 * 2.63e9, 0.69) == pytest.approx(147.16, rel=1e-4)


def test_churchill_chu_edges_invariant():
    """Invariant: Ra = 0 gives the intercept 0.825^2 without warnings; Nu rises with Ra and
    with Pr; Pr <= 0 raises."""
    with np.errstate(all="raise"):
        nu = nc.nusselt_churchill_chu_1975(np.concatenate([[0.0], np.logspace(-3, 14, 60)]), 0.71)
    assert nu[0] == pytest.approx(0.825**2, rel=1e-15)
    assert np.all(np.diff(nu) > 0)
    assert np.all(np.diff(nc.nusselt_churchill_chu_1975(1e6, np.logspace(-2, 3, 20))) > 0)
    with pytest.raises(ModelError):
        nc.nusselt_churchill_chu_1975(1e6, 0.0)


def test_rayleigh_number_cross_method(air_325):
    """Cross-method: Ra_L vs fluids.core.Grashof x Prandtl, and Ra_L = El (L/b)^4."""
    fluids_core = pytest.importorskip("fluids.core")
    ra = nc.rayleigh_number(LENGTH, DELTA_T, **air_325)
    gr = fluids_core.Grashof(
        LENGTH, air_325["beta"], DELTA_T, 0.0, rho=air_325["rho"], mu=air_325["mu"]
    )
    pr = fluids_core.Prandtl(Cp=air_325["cp"], k=air_325["k"], mu=air_325["mu"])
    assert ra == pytest.approx(gr * pr, rel=1e-10)
    el = nc.elenbaas_number(SPACING, LENGTH, DELTA_T, **air_325)
    assert ra == pytest.approx(el * (LENGTH / SPACING) ** 4, rel=1e-12)


def test_churchill_chu_outer_face_example_cross_method(air_325):
    """Cross-method: oracles.md section 5 example (H = 0.1 m, 350/300 K, film 325 K, CoolProp
    properties): Ra = 3.223e6, Nu = 22.710, h = 6.41 W/m^2K [calc there with ht]."""
    ra = nc.rayleigh_number(LENGTH, DELTA_T, **air_325)
    pr = air_325["cp"] * air_325["mu"] / air_325["k"]
    assert ra == pytest.approx(3.223e6, rel=1e-3)
    nu = nc.nusselt_churchill_chu_1975(ra, pr)
    assert nu == pytest.approx(22.710, rel=1e-4)
    assert nu * air_325["k"] / LENGTH == pytest.approx(6.41, rel=1e-3)


# --- registry -------------------------------------------------------------------------------


def test_correlations_registered_with_ranges_invariant():
    """Invariant: each correlation is registered with its reference, and the El range flags
    designs outside it (the range itself is a conservative choice, common practice, no
    source)."""
    entry = nc.nusselt_bar_cohen_rohsenow_1984.correlation
    assert "Bar-Cohen" in entry.reference and entry.doi == "10.1115/1.3246622"
    flags = entry.out_of_range(el=np.array([0.01, 1.0, 54.0, 1e5]))
    np.testing.assert_array_equal(flags, [True, False, False, True])
    for function in (
        nc.nusselt_bar_cohen_rohsenow_1984_isoflux,
        nc.nusselt_elenbaas_1942,
        nc.optimum_spacing_bar_cohen_rohsenow_1984,
        nc.nusselt_churchill_chu_1975,
    ):
        assert function.correlation.function is function
        assert function.correlation.reference
    cc = nc.nusselt_churchill_chu_1975.correlation
    np.testing.assert_array_equal(
        cc.out_of_range(ra=np.array([1e-2, 1e6, 1e13])), [True, False, True]
    )
