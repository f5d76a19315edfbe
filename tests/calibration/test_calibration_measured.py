"""The logger file: the demo file read back independently, the clock rules, and one-line errors naming the file and
the column for bad files (no time column, unsorted, gaps, another clock than the weather's, impossible readings)."""

import csv
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from atticsim.calibration import CalibrationError
from atticsim.calibration.measured import read_measured

ROOT = Path(__file__).resolve().parents[2]
DEMO_LOG = ROOT / "weather_demo" / "heron_lane_logger_2025.csv"


def write(tmp_path, body, header="time,attic_air_c", comments=("# invented: yes",), name="log.csv"):
    """A small logger file of our own (invented readings)."""
    p = tmp_path / name
    p.write_text("\n".join([*comments, header, *body]) + "\n")
    return p


def five_minutes(n, start="2025-07-01T00:00:00", offset="-06:00", value=lambda i: 25.0 + 0.01 * i):
    t0 = pd.Timestamp(start)
    return [f"{(t0 + pd.Timedelta(minutes=5 * i)).isoformat()}{offset},{value(i):.2f}" for i in range(n)]


def test_demo_log_read_back_independently():
    log = read_measured(DEMO_LOG, weather_utc_offset=-6)
    # the same file read with the csv module, skipping the '#' lines
    rows = [r for r in csv.reader(line for line in DEMO_LOG.read_text().splitlines() if not line.startswith("#"))]
    head, body = rows[0], rows[1:]
    assert len(log.frame) == len(body) == 2881
    for col in ("attic_air_c", "sensor_c", "outdoor_c"):
        values = np.array([float(r[head.index(col)]) for r in body])
        assert np.allclose(log.frame[col].to_numpy(), values, atol=0, rtol=0)
    fan = np.array([int(r[head.index("fan_on")]) for r in body])
    assert (log.fan.to_numpy().astype(int) == fan).all()
    assert log.step_s == 300.0 and log.temperature_columns == ["attic_air_c", "sensor_c"]
    assert log.start.isoformat() == "2025-07-10T00:00:00-06:00" and abs(log.days - 10.0) < 1e-12
    assert log.header["invented"] == "yes" and any("INVENTED" in n for n in log.header["note"])


def test_fan_switches_sit_midway_between_the_stamps_that_bracket_them(tmp_path):
    body = [f"2025-07-01T00:{m:02d}:00-06:00,30.0,{s}" for m, s in ((0, 0), (5, 0), (10, 1), (15, 1), (20, 0))]
    log = read_measured(write(tmp_path, body, "time,attic_air_c,fan_on"), weather_utc_offset=-6)
    instants, states = log.fan_switches()
    assert [t.strftime("%H:%M:%S") for t in instants] == ["00:00:00", "00:07:30", "00:17:30"]
    assert states == [False, True, False]
    assert log.fan_run_seconds() == 600.0  # 00:07:30 to 00:17:30


def test_fahrenheit_columns_are_read_in_celsius(tmp_path):
    # 100.4 degF = 38 degC, 77 degF = 25 degC (the Fahrenheit scale's definition)
    body = ["2025-07-01T00:00:00-06:00,100.4,77", "2025-07-01T00:05:00-06:00,100.4,77"]
    log = read_measured(write(tmp_path, body, "time,attic_air_f,outdoor_f"), weather_utc_offset=-6)
    assert np.allclose(log.frame["attic_air_c"], 38.0) and np.allclose(log.frame["outdoor_c"], 25.0)
    assert log.labels["attic_air_c"] == "attic_air_f" and any("°F" in n for n in log.notes)


def test_another_clock_needs_confirming_and_is_then_moved_onto_the_weathers(tmp_path):
    p = write(tmp_path, five_minutes(30, start="2025-07-01T01:00:00", offset="-05:00"))
    with pytest.raises(CalibrationError) as err:
        read_measured(p, weather_utc_offset=-6)
    assert str(err.value).startswith(f"{p}: time: the log's clock is on UTC-5 h, the weather's on UTC-6 h")
    assert "--utc-offset -5" in str(err.value)
    log = read_measured(p, utc_offset=-5, weather_utc_offset=-6)
    # 01:00 on a UTC-5 clock is 00:00 of the site's standard time
    assert log.start.isoformat() == "2025-07-01T00:00:00-06:00"
    assert any("moved onto the weather's" in n for n in log.notes)
    # a --utc-offset that contradicts the stamps' own offset
    with pytest.raises(CalibrationError, match=r"--utc-offset: time: -6 h, but the stamps carry UTC offset -05:00"):
        read_measured(p, utc_offset=-6, weather_utc_offset=-6)


def test_stamps_without_offset_take_the_option_or_the_header(tmp_path):
    p = write(tmp_path, five_minutes(30, offset=""))
    with pytest.raises(CalibrationError, match="has no UTC offset: give the stamps one"):
        read_measured(p, weather_utc_offset=-6)
    assert read_measured(p, utc_offset=-6, weather_utc_offset=-6).start.isoformat() == "2025-07-01T00:00:00-06:00"
    q = write(tmp_path, five_minutes(30, offset=""), comments=("# utc_offset_h: -6",), name="h.csv")
    assert read_measured(q, weather_utc_offset=-6).start.isoformat() == "2025-07-01T00:00:00-06:00"


@pytest.mark.parametrize("body, header, column, reason", [
    (five_minutes(5), "stamp,attic_air_c", "time", "no time column"),
    (five_minutes(5)[:2][::-1] + five_minutes(5)[2:], "time,attic_air_c", "time", "stamps not sorted"),
    (five_minutes(3) + five_minutes(3)[2:], "time,attic_air_c", "time", "duplicated stamp"),
    (five_minutes(3) + five_minutes(3, start="2025-07-01T03:00:00"), "time,attic_air_c", "time",
     "gap of 2.83 h without readings from 2025-07-01T00:10:00-06:00"),
    ([r + "," for r in five_minutes(15)] + [r + ",26" for r in five_minutes(40)[15:]], "time,attic_air_c,deck_c",
     "deck_c", "no readings for the first or last 1.25 h of the log"),
    (five_minutes(3, value=lambda i: 125.0), "time,attic_air_c", "attic_air_c", "125 °C at 2025-07-01T00:00:00-06:00"
     " is above 95 °C, outside any attic's range"),
    (five_minutes(3, value=lambda i: 250.0), "time,deck_f", "deck_f", "250 °F at 2025-07-01T00:00:00-06:00 is above"
     " 230 °F"),
    (five_minutes(3), "time,attic_temp", "attic_temp", "unknown column"),
    ([r.replace("25.00", "n/a") for r in five_minutes(3)], "time,attic_air_c", "attic_air_c", "'n/a' at"),
    (five_minutes(3), "time,outdoor_c", "columns", "no measured temperature column"),
    ([r + ",maybe" for r in five_minutes(3)], "time,attic_air_c,fan_on", "fan_on", "is not a fan state"),
    (["2025-07-01T00:00:00-06:00,25", "2025-07-01T00:05:00-05:00,25"], "time,attic_air_c", "time",
     "changes the UTC offset"),
    (["2025-07-01T00:00:00-06:00,25", "2025-07-01T00:05:00,25"], "time,attic_air_c", "time",
     "has no UTC offset while other stamps have one"),
])
def test_bad_files_give_one_line_naming_file_and_column(tmp_path, body, header, column, reason):
    p = write(tmp_path, body, header)
    with pytest.raises(CalibrationError) as err:
        read_measured(p, weather_utc_offset=-6)
    text = str(err.value)
    assert "\n" not in text and text.startswith(f"{p}: {column}: "), text
    assert reason in text, text


def test_a_long_missing_stretch_in_one_column_is_a_gap(tmp_path):
    body = [r + ("," if 10 <= i < 30 else ",25") for i, r in enumerate(five_minutes(40))]
    p = write(tmp_path, body, "time,attic_air_c,sensor_c")
    with pytest.raises(CalibrationError, match=r"sensor_c: no readings for 1.75 h from 2025-07-01T00:45:00-06:00"):
        read_measured(p, weather_utc_offset=-6)
    # allowed with a longer --max-gap; the missing readings stay missing
    log = read_measured(p, weather_utc_offset=-6, max_gap_s=3 * 3600)
    assert int(log.frame["sensor_c"].isna().sum()) == 20


def test_the_demo_log_is_what_its_script_makes(tmp_path):
    import importlib.util

    spec = importlib.util.spec_from_file_location("make_demo_logger", ROOT / "weather_demo" / "make_demo_logger.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    path = module.make(tmp_path)
    assert path.read_bytes() == DEMO_LOG.read_bytes()


def test_fan_run_time_from_a_later_instant(tmp_path):
    body = [f"2025-07-01T00:{m:02d}:00-06:00,30.0,{s}" for m, s in ((0, 0), (5, 0), (10, 1), (15, 1), (20, 0))]
    log = read_measured(write(tmp_path, body, "time,attic_air_c,fan_on"), weather_utc_offset=-6)
    assert log.fan_run_seconds(log.start + pd.Timedelta(minutes=10)) == 450.0  # 00:10:00 to 00:17:30
