"""A run warns when the fan short-cycles: any hour over the motor's starts limit, or 10 % or more of the
complete runs shorter than the short-cycle time; each warning says what helps."""

import pytest

from atticsim.pipeline import simulate
from atticsim.report.text import summary_text
from atticsim.results.metrics import cycling_warnings, max_starts_in_window
from atticsim.scenario import demo_scenario


def summary(**kw):
    return {"max_starts_per_hour": 1, "complete_runs": 10, "short_cycles": 0, "short_cycle_threshold_min": 5.0, **kw}


def test_cycling_warnings_thresholds():
    assert cycling_warnings(summary(), 6) == []
    assert cycling_warnings(summary(max_starts_per_hour=6), 6) == []          # at the limit: allowed
    (w,) = cycling_warnings(summary(max_starts_per_hour=7), 6)
    assert "up to 7 times in one hour" in w and "more than the motor's 6" in w and "hysteresis" in w
    (w,) = cycling_warnings(summary(short_cycles=1), 6)                         # 1 of 10 = 10 %: warns
    assert "1 of the 10 complete fan runs (10 %)" in w and "minimum run time" in w
    assert cycling_warnings(summary(short_cycles=1, complete_runs=11), 6) == []  # 9.1 %: no warning
    assert cycling_warnings(summary(complete_runs=0), 6) == []


@pytest.fixture(scope="module")
def chattering():
    # The demo house on a hot July day (invented weather) with a 0.1 K hysteresis: forced short-cycling.
    sc = demo_scenario(["thermostat.off=39.9", "simulation.spinup_days=0"])
    return simulate(sc, start="2025-07-01", end="2025-07-01")


def test_forced_short_cycling_warns_in_summary_and_terminal(chattering):
    s = chattering.summary
    on = chattering.events[chattering.events.fan == "on"].time
    starts_s = (on - on.iloc[0]).dt.total_seconds().to_numpy()
    assert s["max_starts_per_hour"] == max_starts_in_window(starts_s, 3600.0) > 6
    assert s["short_cycle_share"] >= 0.10
    text = [w for w in s["warnings"] if "times in one hour" in w or "short cycles" in w]
    assert len(text) == 2 and all("widen the hysteresis" in w and "sensor.placement" in w for w in text)
    terminal = summary_text(chattering)
    assert all(f"WARNING: {w}" in terminal for w in text)


def test_a_gentle_setting_does_not_warn():
    s = simulate(demo_scenario(["simulation.spinup_days=0"]), start="2025-07-01", end="2025-07-01").summary
    assert s["max_starts_per_hour"] <= 6
    assert not any("times in one hour" in w or "short cycles" in w for w in s["warnings"])
