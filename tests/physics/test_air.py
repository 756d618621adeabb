"""Air properties: our tables against CoolProp called directly, altitude against fluids."""

import numpy as np
import pytest

from optifin.errors import ModelError
from optifin.physics.air import air_properties
from optifin.physics.atmosphere import pressure_at_altitude, temperature_at_altitude

CoolProp = pytest.importorskip("CoolProp.CoolProp")
fluids_atmosphere = pytest.importorskip("fluids.atmosphere")

KEYS = {
    "density": "D",
    "specific_heat": "C",
    "viscosity": "V",
    "conductivity": "L",
    "prandtl": "Prandtl",
    "expansion": "isobaric_expansion_coefficient",
}


@pytest.mark.parametrize("pressure", [101325.0, 80000.0, 60000.0])
def test_properties_match_coolprop(pressure):
    """Cross-method: interpolated table vs CoolProp PropsSI (Lemmon et al. 2000/2004), 0.1 %,
    at temperatures between the 1 K table nodes."""
    t = np.array([233.37, 273.15, 298.15, 300.5, 325.25, 351.7, 399.9, 473.15, 612.3])
    air = air_properties(t, pressure)
    for field, key in KEYS.items():
        expected = CoolProp.PropsSI(key, "T", t, "P", np.full_like(t, pressure), "Air")
        np.testing.assert_allclose(getattr(air, field), expected, rtol=1e-3, err_msg=field)


def test_published_coolprop_values_at_300K():
    """Published check values: CoolProp 8.0.0 air at 300 K, 101325 Pa, as recorded in the
    reference notes (oracles.md section 2): rho 1.17700, cp 1006.37, mu 1.85373e-5,
    k 0.0263845."""
    air = air_properties(300.0)
    assert air.density == pytest.approx(1.17700, rel=1e-5)
    assert air.specific_heat == pytest.approx(1006.37, rel=1e-5)
    assert air.viscosity == pytest.approx(1.85373e-5, rel=1e-5)
    assert air.conductivity == pytest.approx(0.0263845, rel=1e-5)


def test_handbook_table_within_two_percent():
    """Published check values, Incropera 6th ed. Table A.4 at 1 atm [from memory]:
    300 K: rho 1.1614, cp 1007, mu 184.6e-7, k 26.3e-3, Pr 0.707. The table's density is
    1.3 % below the reference equation of state, hence 2 %."""
    air = air_properties(300.0)
    assert air.density == pytest.approx(1.1614, rel=0.02)
    assert air.specific_heat == pytest.approx(1007, rel=0.02)
    assert air.viscosity == pytest.approx(184.6e-7, rel=0.02)
    assert air.conductivity == pytest.approx(26.3e-3, rel=0.02)
    assert air.prandtl == pytest.approx(0.707, rel=0.02)


def test_altitude_changes_density_not_viscosity():
    """Invariant: mu and k of a near-ideal gas hardly depend on pressure."""
    low, high = air_properties(300.0, 70000.0), air_properties(300.0, 101325.0)
    assert low.viscosity == pytest.approx(high.viscosity, rel=1e-3)
    assert low.density / high.density == pytest.approx(70000 / 101325, rel=2e-3)


def test_out_of_table_is_an_error():
    with pytest.raises(ModelError, match="outside the property table"):
        air_properties(900.0)
    with pytest.raises(ModelError, match="pressure"):
        air_properties(300.0, 5.0)


@pytest.mark.parametrize(
    "z", [-500.0, 0.0, 500.0, 1000.0, 2000.0, 3000.0, 5500.0, 11000.0, 15000.0, 25000.0]
)
def test_standard_atmosphere_matches_fluids(z):
    """Cross-method: U.S. Standard Atmosphere 1976 against fluids.atmosphere.ATMOSPHERE_1976."""
    ref = fluids_atmosphere.ATMOSPHERE_1976(z)
    assert pressure_at_altitude(z) == pytest.approx(ref.P, rel=1e-9)
    assert temperature_at_altitude(z) == pytest.approx(ref.T, rel=1e-9)


def test_standard_atmosphere_published_values():
    """Published check values: 1976 standard atmosphere 1000 m 89876 Pa, 2000 m 79501 Pa,
    3000 m 70121 Pa (U.S. Standard Atmosphere 1976 tables, as reproduced by fluids)."""
    np.testing.assert_allclose(
        pressure_at_altitude(np.array([1000.0, 2000.0, 3000.0])),
        [89876.3, 79501.4, 70121.2],
        rtol=2e-6,
    )
