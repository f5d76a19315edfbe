"""Tests for the atticsim weather CSV (atticsim.io.csv_format): round trip and documented errors.

All weather here is invented (made up for the tests); the check values are the numbers
written into the files by the tests themselves or the outside references named beside them.
"""

import dataclasses
from types import SimpleNamespace

import numpy as np
import pandas as pd
import pytest

from atticsim.io import read_weather, read_weather_csv, write_weather_csv
from atticsim.io.weather_frame import WEATHER_COLUMNS, WeatherMeta

HEADER = """# atticsim weather CSV
# site: Invented Flats
# latitude: 35.0
# longitude: -97.0
# altitude_m: 350
# utc_offset_h: -6
# invented: yes
# note: invented weather for tests, not a real climate
"""
COLUMNS = "time,temp_air_c,temp_dew_c,wind_speed_m_s,ghi_w_m2,dni_w_m2,dhi_w_m2,pressure_pa"
ROWS = [
    "2025-07-01T10:00:00-06:00,30.0,18.0,3.0,700,600,120,97000",
    "2025-07-01T11:00:00-06:00,31.0,18.0,3.2,800,650,130,97000",
    "2025-07-01T12:00:00-06:00,32.0,18.5,3.4,850,700,135,96950",
    "2025-07-01T13:00:00-06:00,33.0,18.5,3.6,840,690,135,96900",
    "2025-07-01T14:00:00-06:00,33.5,18.0,3.8,780,640,130,96900",
    "2025-07-01T15:00:00-06:00,33.0,17.5,4.0,680,580,120,96900",
]


def write(tmp_path, rows=ROWS, columns=COLUMNS, header=HEADER, name="w.csv"):
    path = tmp_path / name
    path.write_text(header + columns + "\n" + "\n".join(rows) + "\n", encoding="utf-8")
    return path


def replace_cell(row, field, value):
    parts = row.split(",")
    parts[field] = value
    return ",".join(parts)


def error_of(path, column):
    with pytest.raises(ValueError) as exc:
        read_weather(path)
    message = str(exc.value)
    assert "\n" not in message
    assert message.startswith(f"{path}: {column}: "), message
    return message


def invented_frame():
    """A 10-minute invented frame with every column, including sky long-wave, wind direction and sky cover."""
    index = pd.date_range("2025-07-01 00:00", periods=36, freq="10min", tz="UTC-06:00", name="time").as_unit("us")
    n = len(index)
    t = np.linspace(24.0, 29.0, n)
    frame = pd.DataFrame(
        {
            "temp_air": t,
            "temp_dew": np.full(n, 18.25),
            "relative_humidity": np.linspace(70.0, 55.0, n),
            "wind_speed": np.linspace(1.0, 3.5, n),
            "wind_direction": np.linspace(170.0, 215.0, n),
            "ghi": np.linspace(0.0, 350.0, n),
            "dni": np.linspace(0.0, 420.0, n),
            "dhi": np.linspace(0.0, 60.0, n) + 1.0 / 3.0,
            "pressure": np.full(n, 97_123.456789),
            "sky_ir": np.linspace(390.0, 410.0, n),
            "total_sky_cover": np.linspace(0.2, 0.9, n),
            "opaque_sky_cover": np.linspace(0.0, 0.7, n),
        },
        index=index,
    )
    meta = WeatherMeta(
        name="Invented Flats", latitude=35.0, longitude=-97.0, altitude=350.0, utc_offset=-6.0,
        source_format="atticsim-csv", invented=True, file_notes=("invented for a test", "second note"),
    )
    return frame, meta


# ------------------------------------------------------------------ reading


def test_reads_header_and_values(tmp_path):
    path = write(tmp_path)
    frame, meta, report = read_weather(path)
    assert meta == WeatherMeta(
        name="Invented Flats", latitude=35.0, longitude=-97.0, altitude=350.0, utc_offset=-6.0,
        source_format="atticsim-csv", invented=True, path=str(path),
        file_notes=("invented weather for tests, not a real climate",),
    )
    assert list(frame.columns) == list(WEATHER_COLUMNS)
    # Values are instantaneous at their stamps: the 12:00 row holds the file's 12:00 values.
    row = frame.loc["2025-07-01T12:00:00-06:00"]
    assert (row["temp_air"], row["ghi"], row["pressure"]) == (32.0, 850.0, 96950.0)
    assert str(frame.index.tz) == "UTC-06:00"
    assert any("invented weather" in n for n in report.notes)


def test_round_trip_gives_the_same_frame(tmp_path):
    frame, meta = invented_frame()
    path = write_weather_csv(frame, meta, tmp_path / "round.csv")
    back, back_meta, report = read_weather(path)
    pd.testing.assert_frame_equal(back, frame)
    assert back_meta == dataclasses.replace(meta, path=str(path))
    assert report.repairs == []
    lines = path.read_text().splitlines()
    assert lines[0] == "# atticsim weather CSV"
    assert "# invented: yes" in lines and "# note: second note" in lines
    assert lines[9].startswith("time,temp_air_c,temp_dew_c,relative_humidity_pct,wind_speed_m_s,ghi_w_m2")
    assert lines[10].startswith("2025-07-01T00:00:00-06:00,24.0,18.25,70.0,")


def test_round_trip_without_optional_columns(tmp_path):
    frame, meta = invented_frame()
    for col in ("sky_ir", "wind_direction", "total_sky_cover", "opaque_sky_cover"):
        frame[col] = np.nan
    path = write_weather_csv(frame, meta, tmp_path / "lean.csv")
    text = path.read_text()
    assert "sky_ir_w_m2" not in text and "wind_direction_deg" not in text and "sky_cover" not in text
    back, _, _ = read_weather(path)
    pd.testing.assert_frame_equal(back, frame)


def test_writer_refuses_a_frame_the_reader_would_refuse(tmp_path):
    frame, meta = invented_frame()
    frame.iloc[3, frame.columns.get_loc("relative_humidity")] = 150.0
    with pytest.raises(ValueError, match="relative_humidity: 150 %"):
        write_weather_csv(frame, meta, tmp_path / "bad.csv")


def test_writer_refuses_offset_other_than_the_site(tmp_path):
    frame, meta = invented_frame()
    frame.index = frame.index.tz_convert("UTC")
    with pytest.raises(ValueError, match="is not in the site's standard time UTC-6 h"):
        write_weather_csv(frame, meta, tmp_path / "bad.csv")


def test_writer_takes_any_site_object_and_a_named_fixed_offset_zone(tmp_path):
    # A generator may hand a plain namespace and an "Etc/GMT+6" zone (= UTC-06:00, no daylight saving).
    frame, _ = invented_frame()
    frame.index = frame.index.tz_convert("Etc/GMT+6")
    site = SimpleNamespace(name="Invented Flats", latitude=35.0, longitude=-97.0, altitude=350.0,
                           utc_offset=-6.0, source_format="synthetic", invented=True)
    path = write_weather_csv(frame, site, tmp_path / "gen.csv", notes=["invented for a test"])
    back, meta, _ = read_weather(path)
    assert meta.invented and meta.file_notes == ("invented for a test",)
    assert str(back.index.tz) == "UTC-06:00"
    assert (back.index == frame.index).all()
    np.testing.assert_array_equal(back["ghi"].to_numpy(), frame["ghi"].to_numpy())


def test_daylight_saving_zone_is_refused(tmp_path):
    frame, meta = invented_frame()
    frame.index = frame.index.tz_convert("America/Chicago")  # CDT in July: UTC-05:00
    with pytest.raises(ValueError, match="is not in the site's standard time UTC-6 h"):
        write_weather_csv(frame, meta, tmp_path / "dst.csv")


def test_relative_humidity_column_alone_gives_dew_point(tmp_path):
    columns = COLUMNS.replace("temp_dew_c", "relative_humidity_pct")
    rows = [replace_cell(r, 2, "50") for r in ROWS]
    rows[0] = replace_cell(rows[0], 1, "30.0")
    frame, _, _ = read_weather(write(tmp_path, rows=rows, columns=columns))
    # IAPWS-IF97: dew point of 30 degC air at 50 % is 18.446 degC (iapws package, during development).
    assert frame["temp_dew"].iloc[0] == pytest.approx(18.446, abs=0.05)


def test_short_nan_gap_is_repaired_and_counted(tmp_path):
    rows = list(ROWS)
    rows[2] = replace_cell(rows[2], 1, "")  # temp_air at 12:00 missing
    frame, _, report = read_weather(write(tmp_path, rows=rows))
    # Linear interpolation between 31.0 (11:00) and 33.0 (13:00).
    assert frame["temp_air"].iloc[2] == pytest.approx(32.0)
    assert report.repairs == ["interpolated 1 gap of 1 h in temp_air (first at 2025-07-01T12:00:00-06:00)"]


def test_year_other_than_the_data_is_refused(tmp_path):
    with pytest.raises(ValueError, match="year: --year 2030 lays a typical year on a calendar year, but this file "
                                         "holds dated weather starting in 2025"):
        read_weather_csv(write(tmp_path), year=2030)


# ------------------------------------------------------------------ documented errors


def test_missing_column(tmp_path):
    columns = COLUMNS.replace(",dni_w_m2", "")
    rows = [",".join(r.split(",")[:5] + r.split(",")[6:]) for r in ROWS]
    assert "required column missing" in error_of(write(tmp_path, rows=rows, columns=columns), "dni_w_m2")


def test_unknown_column(tmp_path):
    columns = COLUMNS + ",snow_depth_cm"
    rows = [r + ",0" for r in ROWS]
    assert "unknown column" in error_of(write(tmp_path, rows=rows, columns=columns), "snow_depth_cm")


def test_missing_header_key(tmp_path):
    header = HEADER.replace("# altitude_m: 350\n", "")
    assert "required header key missing" in error_of(write(tmp_path, header=header), "altitude_m")


def test_unknown_header_key(tmp_path):
    header = HEADER.replace("# latitude: 35.0", "# latitud: 35.0")
    assert "unknown header key" in error_of(write(tmp_path, header=header), "latitud")


def test_duplicated_time(tmp_path):
    rows = list(ROWS)
    rows[3] = rows[3].replace("T13:00", "T12:00")
    assert "duplicated time 2025-07-01T12:00:00-06:00" in error_of(write(tmp_path, rows=rows), "time")


def test_unsorted_times(tmp_path):
    rows = [ROWS[0], ROWS[2], ROWS[1]] + ROWS[3:]
    assert "not sorted" in error_of(write(tmp_path, rows=rows), "time")


def test_irregular_step(tmp_path):
    rows = ROWS[:2] + ROWS[3:]
    assert "irregular step at 2025-07-01T13:00:00-06:00" in error_of(write(tmp_path, rows=rows), "time")


def test_offset_differs_from_header(tmp_path):
    rows = list(ROWS)
    rows[1] = rows[1].replace("-06:00", "-05:00")
    assert "has UTC offset -05:00, but the header says utc_offset_h: -6" in error_of(
        write(tmp_path, rows=rows), "time"
    )


def test_time_without_offset(tmp_path):
    rows = [r.replace("-06:00", "", 1) for r in ROWS]
    assert "has no UTC offset" in error_of(write(tmp_path, rows=rows), "time")


def test_long_gap(tmp_path):
    rows = [replace_cell(r, 4, "") if 1 <= i <= 4 else r for i, r in enumerate(ROWS)]
    message = error_of(write(tmp_path, rows=rows), "ghi_w_m2")
    assert "gap of 4 h from 2025-07-01T11:00:00-06:00 is longer than 3 h" in message


def test_relative_humidity_150_percent(tmp_path):
    columns = COLUMNS + ",relative_humidity_pct"
    rows = [r + ",50" for r in ROWS]
    rows[2] = rows[2][: -len(",50")] + ",150"
    message = error_of(write(tmp_path, rows=rows, columns=columns), "relative_humidity_pct")
    assert "150 % at 2025-07-01T12:00:00-06:00 is above 103 %" in message


def test_dew_point_5_k_above_dry_bulb(tmp_path):
    rows = list(ROWS)
    rows[1] = replace_cell(rows[1], 2, "36.0")  # dry-bulb 31.0 degC
    message = error_of(write(tmp_path, rows=rows), "temp_dew_c")
    assert "dew point 36 degC at 2025-07-01T11:00:00-06:00 is 5 K above the dry-bulb 31 degC" in message


def test_text_in_a_number_column(tmp_path):
    rows = list(ROWS)
    rows[1] = replace_cell(rows[1], 3, "calm")
    assert "'calm' at 2025-07-01T11:00:00-06:00 is not a number" in error_of(
        write(tmp_path, rows=rows), "wind_speed_m_s"
    )


# ------------------------------------------------------------------ sky cover


def test_sky_cover_columns_read_in_percent(tmp_path):
    rows = [r + f",{40 + 10 * i},{20 + 10 * i}" for i, r in enumerate(ROWS)]
    path = write(tmp_path, rows=rows, columns=COLUMNS + ",total_sky_cover_pct,opaque_sky_cover_pct")
    frame, _, report = read_weather(path)
    # 60 % and 40 % of the sky dome in the 12:00 row (the file's third row) -> fractions 0.6 and 0.4.
    row = frame.loc["2025-07-01T12:00:00-06:00"]
    assert (row["total_sky_cover"], row["opaque_sky_cover"]) == (0.6, 0.4)
    assert not any("no sky cover" in n for n in report.notes)


def test_file_without_sky_cover_says_so(tmp_path):
    frame, _, report = read_weather(write(tmp_path))
    assert frame["opaque_sky_cover"].isna().all() and frame["total_sky_cover"].isna().all()
    assert "no sky cover in the source: total_sky_cover and opaque_sky_cover left NaN" in report.notes


def test_sky_cover_over_100_percent_is_refused(tmp_path):
    rows = [r + ",50" for r in ROWS]
    rows[2] = ROWS[2] + ",120"
    path = write(tmp_path, rows=rows, columns=COLUMNS + ",opaque_sky_cover_pct")
    message = error_of(path, "opaque_sky_cover_pct")
    assert message.endswith("120 at 2025-07-01T12:00:00-06:00 is outside 0..100 % (a share of the sky dome); "
                            "1 value(s) out of range")


def test_writer_takes_a_frame_without_sky_cover_columns(tmp_path):
    frame, meta = invented_frame()
    frame = frame.drop(columns=["total_sky_cover", "opaque_sky_cover"])
    path = write_weather_csv(frame, meta, tmp_path / "old.csv")
    back, _, _ = read_weather(path)
    assert back["opaque_sky_cover"].isna().all()
    pd.testing.assert_frame_equal(back.drop(columns=["total_sky_cover", "opaque_sky_cover"]), frame)
