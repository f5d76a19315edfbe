"""Sky temperature and sun position against their published formulas and test cases."""

import numpy as np
import pandas as pd
import pytest

from atticsim.forcing.sky import (cloud_factor_clark_allen, cloud_fraction_crawford_duchon,
                                  cloud_fraction_from_clearness, cloudy_emissivity_clark_allen,
                                  cloudy_emissivity_crawford_duchon, fill_unreliable, sky_emissivity_berdahl_martin,
                                  sky_emissivity_swinbank, sky_temperature, sky_temperature_berdahl_martin,
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


# --------------------------------------------------------------------------- clouds


def test_clark_allen_cloud_factor_worked_values():
    # Clark & Allen (1978), Proc. 2nd National Passive Solar Conference: eps = eps_clear (1 + 0.0224 N
    # - 0.0035 N^2 + 0.00028 N^3), N the opaque cover in tenths. Worked by hand:
    #   N = 0:  1
    #   N = 3:  1 + 0.0672 - 0.0315 + 0.00756 = 1.04326
    #   N = 5:  1 + 0.112 - 0.0875 + 0.035 = 1.0595
    #   N = 10: 1 + 0.224 - 0.35 + 0.28 = 1.154
    assert cloud_factor_clark_allen([0.0, 0.3, 0.5, 1.0]) == pytest.approx([1.0, 1.04326, 1.0595, 1.154], abs=1e-12)
    # With Berdahl & Martin's clear sky at Tdp = 20 C (eps 0.8522, above) and N = 5:
    # eps = 0.8522 x 1.0595 = 0.90291; T_sky at Ta = 30 C = 303.15 x 0.90291^0.25 = 303.15 x 0.97478 = 295.51 K.
    eps = cloudy_emissivity_clark_allen(sky_emissivity_berdahl_martin(20.0), 0.5)
    assert eps == pytest.approx(0.90291, abs=1e-5)
    t_sky, _ = sky_temperature(_rows(30.0, 20.0, opaque=0.5), "berdahl-martin", 25.8, -80.27, 2.0)
    assert t_sky[0] == pytest.approx(295.51, abs=0.01)


def test_cloud_corrections_leave_the_clear_sky_unchanged_and_rise_with_cover():
    clear = sky_emissivity_berdahl_martin(np.array([-5.0, 10.0, 24.0]))
    assert cloudy_emissivity_clark_allen(clear, 0.0) == pytest.approx(clear, abs=0.0)
    assert cloudy_emissivity_crawford_duchon(clear, 0.0) == pytest.approx(clear, abs=0.0)
    cover = np.linspace(0.0, 1.0, 101)
    # Monotonic: the factor's slope 0.0224 - 0.007 N + 0.00084 N^2 has no real root (discriminant < 0).
    assert np.all(np.diff(cloud_factor_clark_allen(cover)) > 0.0)
    assert np.all(np.diff(cloudy_emissivity_clark_allen(0.75, cover)) > 0.0)
    assert np.all(np.diff(cloudy_emissivity_crawford_duchon(0.75, cover)) > 0.0)
    # A humid overcast sky would exceed a black body at the air temperature: held at 1 (0.9 x 1.154 = 1.039).
    assert cloudy_emissivity_clark_allen(0.9, 1.0) == 1.0
    # Crawford & Duchon (1999), J. Appl. Meteor. 38: eps = clf + (1 - clf) eps_clear; by hand
    # clf = 0.4, eps_clear = 0.85 -> 0.4 + 0.6 x 0.85 = 0.91; overcast (clf = 1) -> 1.
    assert cloudy_emissivity_crawford_duchon(0.85, 0.4) == pytest.approx(0.91, abs=1e-12)
    assert cloudy_emissivity_crawford_duchon(0.85, 1.0) == pytest.approx(1.0, abs=1e-12)


def test_swinbank_gets_the_same_cloud_correction():
    # Swinbank's clear sky as an emissivity: (0.0552 T^1.5 / T)^4 = 0.0552^4 T^2; at 30 C by hand
    # 9.2845e-6 x 303.15^2 = 0.85324. Overcast (N = 10): 0.85324 x 1.154 = 0.98464,
    # T_sky = 303.15 x 0.98464^0.25 = 303.15 x 0.99614 = 301.98 K (Swinbank clear: 291.36 K).
    assert sky_emissivity_swinbank(30.0) == pytest.approx(0.85324, abs=1e-5)
    clear, notes = sky_temperature(_rows(30.0, 20.0, opaque=0.0), "swinbank", 25.8, -80.27, 2.0)
    assert clear[0] == pytest.approx(sky_temperature_swinbank(30.0), abs=1e-9)
    cloudy, notes = sky_temperature(_rows(30.0, 20.0, opaque=1.0), "swinbank", 25.8, -80.27, 2.0)
    assert cloudy[0] == pytest.approx(301.98, abs=0.01)
    assert "Swinbank (1963)" in notes[0] and "Clark & Allen (1978)" in notes[0]


def _rows(temp_air, temp_dew, opaque=np.nan, total=np.nan, sky_ir=np.nan, ghi=0.0, start="2025-07-01 12:00",
          periods=1, freq="1h"):
    """Weather rows for the sky functions (hand-made, not a climate)."""
    index = pd.date_range(start, periods=periods, freq=freq, tz="UTC-05:00", name="time")
    return pd.DataFrame({"temp_air": temp_air, "temp_dew": temp_dew, "ghi": ghi, "sky_ir": sky_ir,
                         "opaque_sky_cover": opaque, "total_sky_cover": total}, index=index)


def test_sky_source_order_and_notes():
    # The file's long-wave wins: sigma T^4 at 290 K.
    t, notes = sky_temperature(_rows(30.0, 20.0, opaque=1.0, sky_ir=5.670374419e-8 * 290.0**4),
                               "berdahl-martin", 25.8, -80.27, 2.0)
    assert t[0] == pytest.approx(290.0) and "long-wave column" in notes[0]
    # Opaque cover missing, total given: the total is used and the note says so.
    t_total, notes = sky_temperature(_rows(30.0, 20.0, total=0.5), "berdahl-martin", 25.8, -80.27, 2.0)
    assert t_total[0] == pytest.approx(295.51, abs=0.01) and "total sky cover" in notes[0]
    # A design day is clear by definition, whatever it carries.
    t_dd, notes = sky_temperature(_rows(30.0, 20.0, opaque=1.0), "berdahl-martin", 25.8, -80.27, 2.0,
                                  source_format="design-day")
    assert t_dd[0] == pytest.approx(291.27, abs=0.01) and "clear by definition" in notes[0]


# --------------------------------------------------------------------------- clearness index

SITE = (25.8, -80.27, 2.0)  # the latitude, longitude and altitude of pvlib's Miami TMY2 file


def _clear_ghi(times):
    """Ineichen clear-sky GHI and apparent solar elevation straight from pvlib (independent of atticsim)."""
    import pvlib

    loc = pvlib.location.Location(*SITE[:2], tz="UTC", altitude=SITE[2])
    sp = loc.get_solarposition(times)
    return loc.get_clearsky(times, model="ineichen", solar_position=sp)["ghi"].to_numpy(), \
        sp["apparent_elevation"].to_numpy()


def test_clearness_index_clear_and_overcast_days():
    times = pd.date_range("2025-07-01", periods=48 * 4, freq="15min", tz="UTC-05:00")
    ghi_clear, _ = _clear_ghi(times)
    # A clear day: GHI equal to the clear-sky model's -> cloud fraction 0 (Crawford & Duchon 1999: clf = 1 - s).
    clf, reliable = cloud_fraction_from_clearness(times, ghi_clear, *SITE)
    assert reliable.sum() > 40 and np.max(np.abs(clf)) < 1e-9
    # An overcast day with GHI at 30 % of clear: s = 0.3 -> clf = 0.7 everywhere (nights filled from the days).
    clf, _ = cloud_fraction_from_clearness(times, 0.3 * ghi_clear, *SITE)
    assert clf == pytest.approx(np.full(len(times), 0.7), abs=1e-9)
    # Cloud enhancement (GHI above clear) is no cloud, not a negative one.
    assert cloud_fraction_crawford_duchon([1200.0], [1000.0]) == pytest.approx([0.0])


def test_clearness_index_nights_and_low_sun_filled_as_documented():
    times = pd.date_range("2025-07-01", periods=72, freq="1h", tz="UTC-05:00")
    ghi_clear, elevation = _clear_ghi(times)
    share = np.where(times.day == 1, 0.8, 0.4)  # day 1: s = 0.8 (clf 0.2); day 2: s = 0.4 (clf 0.6)
    share = np.where(times.day == 3, 0.5, share)  # day 3: clf 0.5
    ghi = share * ghi_clear
    low = elevation < 10.0
    ghi[low & (ghi_clear > 0)] *= 3.0  # low sun is not trusted: nonsense there must not matter
    clf, reliable = cloud_fraction_from_clearness(times, ghi, *SITE)
    assert np.array_equal(reliable, (elevation >= 10.0) & (ghi_clear > 0.0))
    hours = np.arange(len(times), dtype=float)
    evening, morning = np.flatnonzero(reliable & (times.day == 1))[-1], np.flatnonzero(reliable & (times.day == 2))[0]
    # The night between: linear in time from the evening's last reliable value to the morning's first.
    night = np.arange(evening + 1, morning)
    expected = 0.2 + (0.6 - 0.2) * (hours[night] - hours[evening]) / (hours[morning] - hours[evening])
    assert clf[night] == pytest.approx(expected, abs=1e-9)
    # Before the first reliable hour and after the last: held.
    first, last = np.flatnonzero(reliable)[[0, -1]]
    assert clf[:first] == pytest.approx(np.full(first, 0.2), abs=1e-9)
    assert clf[last:] == pytest.approx(np.full(len(times) - last, 0.5), abs=1e-9)
    assert fill_unreliable([0.0, 1.0, 2.0, 3.0], [np.nan, 1.0, np.nan, 3.0], [False, True, False, True]) == \
        pytest.approx([1.0, 1.0, 2.0, 3.0])


def test_sky_from_clearness_when_the_file_has_no_cover():
    # Two overcast days (GHI 25 % of clear): clf 0.75 in every row, eps = 0.75 + 0.25 eps_clear.
    times = pd.date_range("2025-07-01", periods=48, freq="1h", tz="UTC-05:00")
    ghi_clear, _ = _clear_ghi(times)
    rows = _rows(30.0, 20.0, start="2025-07-01", periods=48)
    rows["ghi"] = 0.25 * ghi_clear
    t_sky, notes = sky_temperature(rows, "berdahl-martin", *SITE)
    # By hand: 0.75 + 0.25 x 0.8522 = 0.96305; 303.15 x 0.96305^0.25 = 303.15 x 0.99063 = 300.31 K.
    assert t_sky == pytest.approx(np.full(48, 300.31), abs=0.01)
    assert "clearness index" in notes[0] and "Crawford & Duchon (1999)" in notes[0]
