"""Tests of atticsim.sensor.air against a handbook air table and the standard atmosphere."""

import numpy as np
import pytest

from atticsim.sensor import air

# Incropera & DeWitt, Fundamentals of Heat and Mass Transfer, Table A.4 (air at 1 atm), from memory:
# T [K]: mu [1e-7 Pa s], k [1e-3 W/mK], nu [1e-6 m^2/s], alpha [1e-6 m^2/s], Pr
TABLE_A4 = {
    250.0: (159.6, 22.3, 11.44, 15.9, 0.720),
    300.0: (184.6, 26.3, 15.89, 22.5, 0.707),
    350.0: (208.2, 30.0, 20.92, 29.9, 0.700),
    400.0: (230.1, 33.8, 26.41, 38.3, 0.690),
}


@pytest.mark.parametrize("temp_k", sorted(TABLE_A4))
def test_viscosity_conductivity_prandtl_against_incropera_table_a4(temp_k):
    mu, k, _, _, pr = TABLE_A4[temp_k]
    temp_c = temp_k - 273.15
    assert air.dynamic_viscosity(temp_c) == pytest.approx(mu * 1e-7, rel=0.01)
    assert air.thermal_conductivity(temp_c) == pytest.approx(k * 1e-3, rel=0.01)
    # c_p is held at 1006 J/kgK (the table has 1006-1014 over 250-400 K): 1.5 % on Pr.
    assert air.prandtl_number(temp_c) == pytest.approx(pr, rel=0.015)


@pytest.mark.parametrize("temp_k", [300.0, 350.0])
def test_kinematic_viscosity_and_diffusivity_against_incropera_table_a4(temp_k):
    # Same table. Its densities (1.1614 kg/m^3 at 300 K) sit 1.3 % below the ideal gas at 101325 Pa
    # (1.1766 kg/m^3, p / (287.055 T)), so nu and alpha from the table run 1-2 % above ours.
    _, _, nu, alpha, _ = TABLE_A4[temp_k]
    p = air.properties(temp_k - 273.15)
    assert p.kinematic_viscosity == pytest.approx(nu * 1e-6, rel=0.02)
    assert air.kinematic_viscosity(temp_k - 273.15) == p.kinematic_viscosity
    assert p.diffusivity == pytest.approx(alpha * 1e-6, rel=0.02)


def test_sea_level_standard_atmosphere_values():
    # U.S. Standard Atmosphere 1976 / ISO 2533 sea-level table (from memory): 15 degC, 101325 Pa:
    # mu = 1.7894e-5 Pa s, nu = 1.4607e-5 m^2/s, k = 2.5326e-2 W/mK.
    p = air.properties(15.0, 101325.0)
    assert p.viscosity == pytest.approx(1.7894e-5, rel=2e-4)
    assert p.kinematic_viscosity == pytest.approx(1.4607e-5, rel=2e-4)
    assert p.conductivity == pytest.approx(2.5326e-2, rel=2e-4)


def test_kinematic_viscosity_scales_inversely_with_pressure():
    # nu = mu / rho with rho = p / (R T) (ideal gas): at 80 % of the pressure nu is 1/0.8 times larger.
    assert air.kinematic_viscosity(30.0, 0.8 * 101325.0) == pytest.approx(
        air.kinematic_viscosity(30.0, 101325.0) / 0.8, rel=1e-12)


def test_arrays_match_scalars():
    temps = np.array([-10.0, 20.0, 60.0])
    k = air.thermal_conductivity(temps)
    assert isinstance(k, np.ndarray) and k.shape == (3,)
    assert k[1] == pytest.approx(air.thermal_conductivity(20.0), rel=1e-15)


@pytest.mark.parametrize("bad", [-100.0, 300.0, float("nan")])
def test_temperature_outside_the_fits_is_refused(bad):
    with pytest.raises(ValueError, match="air temperature must lie between"):
        air.thermal_conductivity(bad)
    with pytest.raises(ValueError, match="air temperature"):
        air.properties(np.array([20.0, bad]))


def test_bad_pressure_is_refused():
    with pytest.raises(ValueError, match="air pressure"):
        air.properties(20.0, -5.0)
