"""Tests for atticsim.io.weather_frame: psychrometrics, standard atmosphere, validation and repair."""

import numpy as np
import pandas as pd
import pytest

from atticsim.io.weather_frame import (
    WEATHER_COLUMNS,
    WeatherMeta,
    dew_point_from_relative_humidity,
    relative_humidity_from_dew_point,
    saturation_vapour_pressure,
    standard_atmosphere_pressure,
    validate_weather,
)

META = WeatherMeta(
    name="Invented Flats", latitude=35.0, longitude=-97.0, altitude=350.0, utc_offset=-6.0,
    source_format="atticsim-csv", invented=True, path="invented.csv",
)


def raw_frame(hours=12, step="1h", **overrides):
    """An invented, physically plausible day fragment in SI (no source needed: it is input)."""
    index = pd.date_range("2025-07-01 00:00", periods=hours, freq=step, tz="UTC-06:00")
    n = len(index)
    data = {
        "temp_air": np.linspace(22.0, 33.0, n),
        "temp_dew": np.full(n, 17.0),
        "wind_speed": np.full(n, 3.0),
        "wind_direction": np.full(n, 180.0),
        "ghi": np.linspace(0.0, 800.0, n),
        "dni": np.linspace(0.0, 700.0, n),
        "dhi": np.linspace(0.0, 100.0, n),
        "pressure": np.full(n, 97_000.0),
    }
    data.update(overrides)
    return pd.DataFrame(data, index=index)


def one_line_error(excinfo, column):
    message = str(excinfo.value)
    assert "\n" not in message
    assert message.startswith(f"invented.csv: {column}: "), message
    return message


# ------------------------------------------------------------------ psychrometrics


@pytest.mark.parametrize(
    "temp, p_sat",
    [
        # IAPWS-IF97 saturation pressure, region 4 equation (values computed with the
        # iapws package, _PSat_T, during development): 611.657, 1228.18, 2339.21, 4246.69, 7384.43 Pa.
        (0.01, 611.657),
        (10.0, 1228.18),
        (20.0, 2339.21),
        (30.0, 4246.69),
        (40.0, 7384.43),
    ],
)
def test_saturation_vapour_pressure_against_iapws_if97(temp, p_sat):
    # Alduchov & Eskridge (1996) state a relative error below 0.4 % over -40..50 degC.
    assert saturation_vapour_pressure(temp) == pytest.approx(p_sat, rel=0.004)


@pytest.mark.parametrize(
    "temp, rh, dew",
    [
        # Dew point where p_sat(t_dew) = RH * p_sat(t), both from IAPWS-IF97 (iapws package, during development).
        (30.0, 50.0, 18.446),
        (20.0, 80.0, 16.447),
        (35.0, 40.0, 19.384),
        (5.0, 90.0, 3.499),
    ],
)
def test_dew_point_and_relative_humidity_against_iapws_if97(temp, rh, dew):
    assert dew_point_from_relative_humidity(temp, rh) == pytest.approx(dew, abs=0.05)
    assert relative_humidity_from_dew_point(temp, dew) == pytest.approx(rh, abs=0.3)


def test_magnus_matches_pvlib_with_the_same_coefficients():
    # Reference tool: pvlib.atmosphere.tdew_from_rh takes the Magnus coefficients (hPa, -, degC).
    from pvlib.atmosphere import tdew_from_rh

    temp = np.array([-10.0, 5.0, 25.0, 40.0])
    rh = np.array([70.0, 95.0, 60.0, 20.0])
    expected = tdew_from_rh(temp, rh, coeff=(6.1094, 17.625, 243.04))
    np.testing.assert_allclose(dew_point_from_relative_humidity(temp, rh), expected, atol=1e-9)


@pytest.mark.parametrize(
    "altitude, pressure",
    # ISO 2533 standard atmosphere table (from memory; pvlib.atmosphere.alt2pres gives
    # 89874.75 and 79495.54 Pa at 1000 and 2000 m, agreeing to 0.4 Pa).
    [(0.0, 101325.0), (1000.0, 89874.6), (2000.0, 79495.2), (3000.0, 70108.5)],
)
def test_standard_atmosphere_against_iso_2533_table(altitude, pressure):
    assert standard_atmosphere_pressure(altitude) == pytest.approx(pressure, abs=2.0)


def test_standard_atmosphere_refuses_altitude_outside_troposphere():
    with pytest.raises(ValueError, match="altitude"):
        standard_atmosphere_pressure(12_000.0)


# ------------------------------------------------------------------ metadata


def test_weather_meta_rejects_latitude_out_of_range():
    with pytest.raises(ValueError, match="latitude: 95"):
        WeatherMeta("x", 95.0, 0.0, 0.0, 0.0, "tmy3")


def test_weather_meta_rejects_unknown_format():
    with pytest.raises(ValueError, match="source_format"):
        WeatherMeta("x", 10.0, 0.0, 0.0, 0.0, "tmy4")


# ------------------------------------------------------------------ validation: layout


def test_validated_frame_has_the_normalised_layout():
    frame, report = validate_weather(raw_frame(), META)
    assert list(frame.columns) == list(WEATHER_COLUMNS)
    assert all(str(t) == "float64" for t in frame.dtypes)
    assert frame.index.name == "time"
    assert str(frame.index.tz) == "UTC-06:00"
    assert frame.index.freq == pd.Timedelta("1h")
    assert frame["sky_ir"].isna().all()  # absent in the source -> NaN
    assert any("sky_ir left NaN" in n for n in report.notes)
    assert report.repairs == []


def test_missing_pressure_uses_iso_2533_at_site_altitude():
    raw = raw_frame().drop(columns="pressure")
    frame, report = validate_weather(raw, META)
    # ISO 2533 at 350 m; outside reference: pvlib.atmosphere.alt2pres (97 190.5 Pa).
    from pvlib.atmosphere import alt2pres

    assert frame["pressure"].iloc[0] == pytest.approx(float(alt2pres(350.0)), rel=2e-4)
    assert any("ISO 2533" in n for n in report.notes)


def test_relative_humidity_only_gives_dew_point():
    raw = raw_frame(hours=2).drop(columns="temp_dew")
    raw["temp_air"] = [30.0, 20.0]
    raw["relative_humidity"] = [50.0, 80.0]
    frame, report = validate_weather(raw, META)
    # IAPWS-IF97 dew points for (30 degC, 50 %) and (20 degC, 80 %), as above.
    np.testing.assert_allclose(frame["temp_dew"], [18.446, 16.447], atol=0.05)
    assert any("temp_dew computed" in n for n in report.notes)


# ------------------------------------------------------------------ validation: time base


def test_duplicated_time_is_an_error():
    raw = raw_frame()
    raw.index = raw.index.delete(3).insert(3, raw.index[2])
    with pytest.raises(ValueError) as exc:
        validate_weather(raw, META)
    assert "duplicated time 2025-07-01T02:00:00-06:00" in one_line_error(exc, "time")


def test_unsorted_times_are_an_error():
    raw = raw_frame().iloc[[0, 1, 3, 2, 4, 5]]
    with pytest.raises(ValueError) as exc:
        validate_weather(raw, META)
    assert "not sorted" in one_line_error(exc, "time")


def test_irregular_step_is_an_error():
    raw = raw_frame().drop(index=raw_frame().index[4])
    with pytest.raises(ValueError) as exc:
        validate_weather(raw, META)
    assert "irregular step at 2025-07-01T05:00:00-06:00: 2 h after steps of 1 h" in one_line_error(exc, "time")


def test_naive_times_are_an_error():
    raw = raw_frame()
    raw.index = raw.index.tz_localize(None)
    with pytest.raises(ValueError) as exc:
        validate_weather(raw, META)
    assert "UTC offset" in one_line_error(exc, "time")


def test_missing_required_column_is_an_error():
    with pytest.raises(ValueError) as exc:
        validate_weather(raw_frame().drop(columns="dni"), META)
    assert "required column missing" in one_line_error(exc, "dni")


# ------------------------------------------------------------------ validation: gaps


def test_short_gaps_are_interpolated_and_counted():
    temp = np.linspace(22.0, 33.0, 12)
    temp[[3, 7, 8]] = np.nan  # one 1 h gap, one 2 h gap
    frame, report = validate_weather(raw_frame(temp_air=temp), META)
    # Linear interpolation between the neighbours of an evenly spaced ramp gives the ramp back.
    np.testing.assert_allclose(frame["temp_air"], np.linspace(22.0, 33.0, 12))
    assert report.repairs == [
        "interpolated 2 gaps of 1-2 h in temp_air (first at 2025-07-01T03:00:00-06:00)"
    ]


def test_wind_direction_gap_is_interpolated_on_the_circle():
    direction = np.array([350.0, np.nan, 10.0] + [10.0] * 9)
    frame, report = validate_weather(raw_frame(wind_direction=direction), META)
    # Halfway between 350 and 10 deg the short way round is north (0 deg), not 180 deg.
    assert frame["wind_direction"].iloc[1] == pytest.approx(0.0, abs=1e-6)
    assert len(report.repairs) == 1


def test_gap_longer_than_limit_is_an_error_naming_first_bad_time():
    ghi = np.linspace(0.0, 800.0, 12)
    ghi[2:6] = np.nan  # 4 h
    with pytest.raises(ValueError) as exc:
        validate_weather(raw_frame(ghi=ghi), META)
    message = one_line_error(exc, "ghi")
    assert "gap of 4 h from 2025-07-01T02:00:00-06:00 is longer than 3 h" in message


def test_gap_limit_is_configurable():
    ghi = np.linspace(0.0, 800.0, 12)
    ghi[2:6] = np.nan
    frame, report = validate_weather(raw_frame(ghi=ghi), META, max_gap_h=4.0)
    assert not frame["ghi"].isna().any()
    assert "interpolated 1 gap of 4 h in ghi" in report.repairs[0]


def test_gap_at_the_end_holds_the_last_value_and_is_counted():
    wind = np.full(12, 3.0)
    wind[-2:] = [5.0, np.nan]
    frame, report = validate_weather(raw_frame(wind_speed=wind), META)
    assert frame["wind_speed"].iloc[-1] == 5.0
    assert "held the nearest value over 1 gap of 1 h in wind_speed at the start/end" in report.repairs[0]


def test_ten_minute_gap_reported_in_minutes():
    temp = np.linspace(22.0, 33.0, 12)
    temp[5] = np.nan
    frame, report = validate_weather(raw_frame(step="10min", temp_air=temp), META)
    assert report.repairs[0].startswith("interpolated 1 gap of 10 min in temp_air")


# ------------------------------------------------------------------ validation: physical limits


def test_small_negative_irradiance_is_clipped_and_counted():
    ghi = np.linspace(0.0, 800.0, 12)
    ghi[:2] = [-3.0, -0.5]
    frame, report = validate_weather(raw_frame(ghi=ghi), META)
    assert frame["ghi"].iloc[0] == 0.0 and frame["ghi"].iloc[1] == 0.0
    assert report.repairs[0].startswith("set 2 value(s) of ghi between -5 and 0 W/m^2 to 0")


def test_large_negative_irradiance_is_an_error():
    dhi = np.linspace(0.0, 100.0, 12)
    dhi[0] = -12.0
    with pytest.raises(ValueError) as exc:
        validate_weather(raw_frame(dhi=dhi), META)
    assert "-12 W/m^2 at 2025-07-01T00:00:00-06:00 is below -5" in one_line_error(exc, "dhi")


def test_humidity_slightly_above_100_is_clipped_and_counted():
    raw = raw_frame(relative_humidity=np.full(12, 60.0))
    raw.iloc[4, raw.columns.get_loc("relative_humidity")] = 102.0
    frame, report = validate_weather(raw, META)
    assert frame["relative_humidity"].iloc[4] == 100.0
    assert any(r.startswith("set 1 value(s) of relative_humidity between 100 and 103 %") for r in report.repairs)


def test_dew_point_slightly_above_dry_bulb_is_clipped_and_counted():
    dew = np.full(12, 17.0)
    dew[0] = 22.3  # 0.3 K above the 22 degC dry-bulb
    frame, report = validate_weather(raw_frame(temp_dew=dew), META)
    assert frame["temp_dew"].iloc[0] == 22.0
    assert report.repairs[0].startswith("set 1 value(s) of temp_dew that exceeded temp_air by less than 0.5 K")


@pytest.mark.parametrize(
    "column, value, words",
    [
        ("temp_air", 71.0, "above 70 degC"),
        ("temp_air", -91.0, "below -90 degC"),
        ("wind_speed", -0.1, "below 0 m/s"),
        ("wind_speed", 81.0, "above 80 m/s"),
        ("dni", 1401.0, "above 1400 W/m^2"),
        ("ghi", 1501.0, "above 1500 W/m^2"),
    ],
)
def test_values_outside_physical_limits_are_errors(column, value, words):
    raw = raw_frame()
    raw.iloc[5, raw.columns.get_loc(column)] = value
    with pytest.raises(ValueError) as exc:
        validate_weather(raw, META)
    assert words in one_line_error(exc, column)


def test_input_frame_is_not_modified():
    raw = raw_frame(ghi=np.r_[-2.0, np.linspace(0.0, 800.0, 11)])
    before = raw.copy()
    validate_weather(raw, META)
    pd.testing.assert_frame_equal(raw, before)


def test_dew_point_checked_again_after_gap_filling():
    temp = np.full(12, 20.0)
    temp[1:4] = [np.nan, np.nan, 16.0]  # interpolated 18.67 at index 1 and 17.33 at index 2
    dew = np.full(12, 15.0)
    dew[1] = 18.9  # 0.23 K above the interpolated dry-bulb: lowered and counted
    frame, report = validate_weather(raw_frame(temp_air=temp, temp_dew=dew), META)
    # Linear interpolation between 20 (index 0) and 16 (index 3): 20 - 4/3.
    assert frame["temp_air"].iloc[1] == pytest.approx(20.0 - 4.0 / 3.0)
    assert frame["temp_dew"].iloc[1] == frame["temp_air"].iloc[1]
    assert report.repairs[-1].startswith(
        "set 1 value(s) of temp_dew that exceeded temp_air by less than 0.5 K to temp_air after gap filling"
    )
