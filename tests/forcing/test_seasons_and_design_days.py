"""Typical-year seasons, monthly figures and clear design days."""

import numpy as np
import pandas as pd
import pytest
from click.testing import CliRunner

from atticsim.cli.main import cli
from atticsim.forcing.build import months_period
from atticsim.forcing.design_day import design_day_weather
from atticsim.forcing.weather import load_weather
from atticsim.pipeline import design_day, run_raw, simulate
from atticsim.scenario import demo_scenario

# ASHRAE Handbook Fundamentals, climatic design information chapter, "fraction of daily temperature
# range" for hours 1..24 (typed here from memory, independently of the code's copy).
ASHRAE_FRACTIONS = [0.88, 0.92, 0.95, 0.98, 1.00, 0.98, 0.91, 0.74, 0.55, 0.38, 0.23, 0.13,
                    0.05, 0.00, 0.00, 0.06, 0.14, 0.24, 0.39, 0.50, 0.59, 0.68, 0.75, 0.82]


def test_month_ranges_and_seasons():
    assert months_period("jun-aug", 2025) == ("2025-06-01", "2025-08-31")
    assert months_period("summer", 2025) == ("2025-06-01", "2025-08-31")
    assert months_period("winter", 2024) == ("2023-12-01", "2024-02-29")  # wraps, leap year
    with pytest.raises(ValueError, match="--months"):
        months_period("junk", 2025)


def test_design_day_profile_is_the_ashrae_fraction_of_range():
    frame, _ = design_day_weather(33.4, -112.1, 340.0, -7, "2025-07-21", t_max=43.0, daily_range=12.0,
                                  step_minutes=60)
    hours = frame.index.hour.to_numpy()[1:25]  # 01:00 .. 24:00 (00:00 of the next day)
    expected = 43.0 - np.array(ASHRAE_FRACTIONS) * 12.0
    assert np.allclose(frame["temp_air"].to_numpy()[1:25], expected, atol=1e-9)
    assert list(hours[:3]) == [1, 2, 3]


def test_design_day_clear_sky_at_noon_is_pvlib_ineichen():
    # Clear-sky irradiance at solar noon against pvlib's own model for the same site and date.
    import pvlib

    frame, _ = design_day_weather(33.4, -112.1, 340.0, -7, "2025-07-21", 43.0, 12.0, step_minutes=1)
    loc = pvlib.location.Location(33.4, -112.1, tz="Etc/GMT+7", altitude=340.0)
    sp = loc.get_solarposition(frame.index)
    noon = sp["apparent_zenith"].idxmin()
    ref = loc.get_clearsky(pd.DatetimeIndex([noon]), model="ineichen")
    assert frame.loc[noon, "ghi"] == pytest.approx(ref["ghi"].iloc[0], rel=1e-9)
    assert 900.0 < frame.loc[noon, "ghi"] < 1100.0  # a clear July noon at 33 N (common practice)


def test_design_day_run_is_periodic():
    r = design_day(demo_scenario(), "2025-07-21", 35.0, 9.0, dew_point=24.0)
    assert r.summary["periodic_residual_k"] < 0.05
    assert r.summary["fan_starts"] >= 1
    assert abs(r.summary["energy_balance_error_pct"]) < 0.5


def test_designday_command(tmp_path):
    out = tmp_path / "dd"
    res = CliRunner().invoke(cli, ["designday", "--date", "2025-07-21", "--tmax", "95degF", "--range", "18degF",
                                   "--out", str(out)])
    assert res.exit_code == 0, res.output
    assert (out / "summary.json").exists() and (out / "monthly.csv").exists()


def test_hot_humid_typical_year_runs_the_fan_more_than_cold_one():
    # Same house, same July week on pvlib's shipped typical years: the hot-humid site (TMY2 12839) must
    # need more fan run hours than the cool maritime one (TMY3 703165) -- a fact any practitioner expects.
    hours = {}
    for name in ("12839.tm2", "703165TY.csv"):
        w = load_weather(f"pvlib:{name}", year=2025)
        sc = demo_scenario(["simulation.spinup_days=1"])
        raw = run_raw(sc, w, start="2025-07-10", end="2025-07-16", include_no_fan=False)
        hours[name] = sum(b - a for a, b in _on_intervals(raw)) / 3600.0
    assert hours["12839.tm2"] > hours["703165TY.csv"] + 10.0


def _on_intervals(raw):
    from atticsim.results.metrics import fan_intervals

    run = raw.with_fan
    return [(a, b) for a, b, _ in fan_intervals(run.events, bool(run.fan[0]), raw.period.t_start, raw.period.t_end)]


def test_monthly_figures_sum_the_days():
    sc = demo_scenario(["simulation.spinup_days=0"])
    r = simulate(sc, start="2025-06-30", end="2025-07-01")
    assert list(r.monthly["month"]) == ["2025-06", "2025-07"]
    assert r.monthly["fan_run_hours"].sum() == pytest.approx(r.summary["fan_run_hours"], rel=1e-9)
    assert r.monthly["ceiling_heat_gain_kwh"].sum() == pytest.approx(r.summary["ceiling_heat_gain_kwh"], rel=1e-6)
