"""Sky temperature and sun position against their published formulas and test cases."""

import numpy as np
import pandas as pd
import pytest

from atticsim.forcing.sky import (sky_emissivity_berdahl_martin, sky_temperature_berdahl_martin,
                                  sky_temperature_from_ir, sky_temperature_swinbank)
from atticsim.forcing.solar import plane_irradiance, solar_position
from atticsim.network.heat_transfer import sol_air_temperature


def test_berdahl_martin_check_value():
    # Berdahl & Martin (1984), Solar Energy 32(5): eps = 0.711 + 0.56 x + 0.73 x^2, x = Tdp/100.
    # Worked by hand (Berdahl & Martin 1984): Ta = 30 C, Tdp = 20 C -> eps = 0.8522, T_sky = 291.27 K.
    assert sky_emissivity_berdahl_martin(20.0) == pytest.approx(0.711 + 0.112 + 0.0292, abs=1e-12)
    assert sky_temperature_berdahl_martin(30.0, 20.0) == pytest.approx(291.27, abs=0.01)


def test_swinbank_check_value():
    # Swinbank (1963): T_sky = 0.0552 Ta^1.5 -> 291.36 K at 30 C (worked by hand).
    assert sky_temperature_swinbank(30.0) == pytest.approx(291.36, abs=0.01)


def test_sky_temperature_from_ir_is_black_body_inverse():
    # sigma T^4 at 290 K = 400.9 W/m2 (Stefan-Boltzmann law)
    assert sky_temperature_from_ir(5.670374419e-8 * 290.0**4) == pytest.approx(290.0)


def test_spa_reference_case():
    # Reda & Andreas (2003), NREL/TP-560-34302, table A4.1 test case: topocentric zenith 50.11162 deg,
    # azimuth 194.34024 deg (SPA's stated uncertainty +/-0.0003 deg).
    t = pd.DatetimeIndex([pd.Timestamp("2003-10-17 12:30:30-07:00")])
    sp = solar_position(t, 39.742476, -105.1786, 1830.14, pressure=82000.0, temperature=11.0, delta_t=67.0)
    assert sp["apparent_zenith"].iloc[0] == pytest.approx(50.11162, abs=3e-4)
    assert sp["azimuth"].iloc[0] == pytest.approx(194.34024, abs=3e-4)


def test_beam_on_tilted_plane_matches_incidence_angle():
    # Duffie & Beckman, Solar Engineering of Thermal Processes, Ex. 1.6.1: phi = 43 N, 13 Feb,
    # 10:30 solar time, beta = 45, gamma = 15 (west of south) -> theta = 35.0 deg. With only beam
    # (no diffuse, black ground) the plane receives DNI cos(theta).
    # At longitude 0 in UTC, 10:30 solar time is clock 10:44 (equation of time about -14 min in mid
    # February, Duffie & Beckman Fig. 1.5.1). pvlib places the sun (2025's declination differs from the
    # example's -14 deg by under 1 deg), hence the 0.5 deg tolerance.
    t = pd.DatetimeIndex([pd.Timestamp("2025-02-13 10:44:00+00:00")])
    sp = solar_position(t, 43.0, 0.0)
    poa = plane_irradiance(t, [0.0], [1000.0], [0.0], 43.0, 0.0, [(45.0, 195.0)], albedo=0.0, solpos=sp)
    theta = np.degrees(np.arccos(poa[0, 0] / 1000.0))
    assert theta == pytest.approx(35.0, abs=0.5)


def test_sol_air_worked_example():
    # ASHRAE Handbook Fundamentals, sol-air temperature: t_e = t_o + alpha I / h_o - eps dR / h_o.
    # Worked by hand (ASHRAE Handbook Fundamentals, sol-air temperature): 35 C, alpha 0.9, 1000 W/m2, h_o 17, horizontal (eps dR = 63) -> 84.2 C.
    assert sol_air_temperature(35.0, 1000.0, 0.9, 17.0, 63.0) == pytest.approx(84.2, abs=0.05)
