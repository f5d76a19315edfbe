"""A whole typical year runs, on every typical-year file pvlib ships and on an EPW year of our own.

Hourly typical-year records are stamped at mid-hour (the hour's mean irradiance belongs to its middle;
TMY3 user's manual, Wilcox & Marion 2008, NREL/TP-581-43156; TMY2 user's manual, Marion & Urban 1995),
so the first row of a year is Jan 1 00:30 and the last Dec 31 23:30.  The data still cover Jan 1 00:00 to
Dec 31 24:00: the first and last half hours are held at the first and last rows, and the run says so.
"""

import os

import numpy as np
import pandas as pd
import pytest

from atticsim.forcing.build import build_forcing, months_period, period_bounds
from atticsim.forcing.weather import load_weather
from atticsim.io import read_weather
from atticsim.io.weather_frame import data_span
from atticsim.pipeline import simulate
from atticsim.scenario import demo_scenario

pvlib = pytest.importorskip("pvlib")
PVLIB_FILES = ["12839.tm2", "723170TYA.CSV", "703165TY.csv"]
# Hourly outputs and one spin-up day keep a year quick; the physics is the default's.
QUICK = ["simulation.output_step=3600", "simulation.spinup_days=1"]


@pytest.mark.parametrize("name", PVLIB_FILES)
def test_a_whole_year_runs_and_holds_the_first_and_last_half_hours(name):
    weather = load_weather(f"pvlib:{name}", year=2025)
    frame = weather[0]
    result = simulate(demo_scenario(QUICK), weather=weather, months="year")
    tz = frame.index.tz
    assert pd.Timestamp(result.summary["period_start"]) == pd.Timestamp("2025-01-01 00:00").tz_localize(tz)
    assert pd.Timestamp(result.summary["period_end"]) == pd.Timestamp("2026-01-01 00:00").tz_localize(tz)
    assert list(result.monthly["month"]) == [f"2025-{m:02d}" for m in range(1, 13)]
    # 8760 hours, every output row from Jan 1 00:00 to Jan 1 00:00 of the next year.
    ts = result.timeseries
    assert len(ts) == 8761 and ts.index[0].hour == 0 and ts.index[-1] == pd.Timestamp("2026-01-01", tz=tz)
    # Held: the first half hour has the first row's outdoor air, the last half hour the last row's.
    assert ts["outdoor_air_c"].iloc[0] == pytest.approx(frame["temp_air"].iloc[0], abs=1e-9)
    assert ts["outdoor_air_c"].iloc[-1] == pytest.approx(frame["temp_air"].iloc[-1], abs=1e-9)
    held = [n for n in result.notes if n.startswith("weather held")]
    assert len(held) == 2
    assert "from 2025-01-01 00:00 to 2025-01-01 00:30" in held[0]
    assert "from 2025-12-31 23:30 to 2026-01-01 00:00" in held[1]
    assert abs(result.summary["energy_balance_error_pct"]) < 0.5


@pytest.mark.parametrize("months", ["jan", "dec"])
@pytest.mark.parametrize("name", PVLIB_FILES)
def test_first_and_last_months_run(name, months):
    weather = load_weather(f"pvlib:{name}", year=2025)
    start, end = months_period(months, 2025)
    t0, t1 = period_bounds(weather[0], start, end, name, weather[1])
    assert (t0.strftime("%m-%d %H:%M"), t1.strftime("%m-%d %H:%M")) == \
        {"jan": ("01-01 00:00", "02-01 00:00"), "dec": ("12-01 00:00", "01-01 00:00")}[months]
    forcing = build_forcing(weather[0], weather[1], demo_scenario(QUICK), t0, t1)
    assert forcing.times[0] <= t0 and forcing.times[-1] >= t1
    assert sum(n.startswith("weather held") for n in forcing.notes) == 1  # only the year's own end


def test_same_dates_on_the_command_line_run(tmp_path):
    from click.testing import CliRunner

    from atticsim.cli.main import cli

    out = tmp_path / "year"
    r = CliRunner().invoke(cli, ["run", "--weather", "pvlib:723170TYA.CSV", "--start", "2025-01-01",
                                 "--end", "2025-12-31", "--out", str(out), *sum((["--set", s] for s in QUICK), [])])
    assert r.exit_code == 0, r.output
    assert "weather held at the first record's values from 2025-01-01 00:00" in r.output


def test_instantaneous_weather_spans_only_its_stamps():
    # The project's own CSV and the demo weather hold values AT their stamps: nothing beyond them.
    frame, meta = load_weather("demo:saltmarsh-point")
    assert data_span(frame, meta) == (frame.index[0], frame.index[-1])
    with pytest.raises(ValueError, match="outside the weather data"):
        period_bounds(frame, "2024-12-31T23:30", "2025-01-02", "demo", meta)


def write_epw_year(path):
    """An INVENTED whole year of hourly EPW records (made up for this test; not a climate)."""
    head = [
        "LOCATION,Invented Bayou,LA,USA,invented for atticsim tests,999999,30.000,-91.000,-6.0,10.0",
        "DESIGN CONDITIONS,0", "TYPICAL/EXTREME PERIODS,0", "GROUND TEMPERATURES,0",
        "HOLIDAYS/DAYLIGHT SAVINGS,No,0,0,0", "COMMENTS 1,Invented year written by the atticsim tests",
        "COMMENTS 2,All values made up", "DATA PERIODS,1,1,Data,Wednesday, 1/ 1,12/31",
    ]
    lines = list(head)
    for stamp in pd.date_range("2025-01-01 01:00", periods=8760, freq="1h"):
        month, day, hour = stamp.month, stamp.day, stamp.hour
        if hour == 0:  # hour-ending 24 of the day before
            previous = stamp - pd.Timedelta(hours=1)
            month, day, hour = previous.month, previous.day, 24
        doy = stamp.day_of_year
        temp = round(20.0 + 8.0 * np.sin(2 * np.pi * (doy - 110) / 365) + 5.0 * np.sin(np.pi * (hour - 9) / 12), 1)
        ghi = max(0, round(800 * np.sin(np.pi * (hour - 6.5) / 13.0))) if 7 <= hour <= 19 else 0
        lines.append(
            f"2025,{month},{day},{hour},60,?9?9?9?9E0?9?9?9?9?9?9?9?9?9?9?9?9?9?9?9*9*9?9?9?9,"
            f"{temp},{min(temp, 15.0)},60,101000,9999,9999,{350 + hour},{ghi},{round(0.7 * ghi)},"
            f"{round(0.3 * ghi)},999999,999999,999999,9999,180,3.0,{hour % 11},{(hour % 11) // 2},"
            f"9999,77777,9,999999999,20,0.1,0,88,0.2,0,1")
    path.write_text("\n".join(lines) + "\n", encoding="latin-1")
    return path


def test_a_whole_epw_year_runs(tmp_path):
    path = write_epw_year(tmp_path / "bayou.epw")
    frame, meta, _ = read_weather(path)
    assert len(frame) == 8760
    assert data_span(frame, meta) == (pd.Timestamp("2025-01-01 00:00", tz=frame.index.tz),
                                      pd.Timestamp("2026-01-01 00:00", tz=frame.index.tz))
    result = simulate(demo_scenario(QUICK), weather=(frame, meta), months="year")
    assert result.summary["period_start"].startswith("2025-01-01T00:00:00")
    assert result.summary["period_end"].startswith("2026-01-01T00:00:00")
    assert sum(n.startswith("weather held") for n in result.notes) == 2
    assert any("long-wave column" in n for n in result.notes)  # the EPW's own infrared, not a sky model
