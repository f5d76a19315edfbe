"""Figures that read at any period length: daily bands over a year, traces over a week, one colour per series,
legends off the data, months with kWh and net benefit."""

import numpy as np
import pandas as pd
import pytest
from matplotlib.colors import to_rgb

import atticsim
from atticsim.report.plots import (LONG_PERIOD_DAYS, daily_bands, monthly_figure, placements_figure,
                                   temperature_figure)


@pytest.fixture(scope="module")
def year():
    # the demo house over a whole year of its invented weather
    return atticsim.simulate(atticsim.demo_scenario(), months="year")


@pytest.fixture(scope="module")
def week():
    return atticsim.simulate(atticsim.demo_scenario(["simulation.spinup_days=1"]))


def series(fig):
    """(label, rgb) of every drawn series in a figure: lines, filled areas and bar groups. Every one must carry
    a label (an unlabelled artist could hide a clash); reference lines labelled '_...' are skipped."""
    out = []
    for ax in fig.axes:
        for line in ax.lines:
            if not line.get_label().startswith("_"):
                out.append((line.get_label(), to_rgb(line.get_color())))
        for coll in ax.collections:
            label = coll.get_label()
            assert label and not label.startswith("_"), f"unlabelled filled area in {ax.get_title()!r}"
            out.append((label, to_rgb(coll.get_facecolor()[0])))
        bars = set()
        for cont in ax.containers:
            out.append((cont.get_label(), to_rgb(cont.patches[0].get_facecolor())))
            bars.update(id(p) for p in cont.patches)
        for patch in ax.patches:
            if id(patch) not in bars:
                assert not patch.get_label().startswith("_"), "unlabelled patch"
                out.append((patch.get_label(), to_rgb(patch.get_facecolor())))
    return out


def assert_one_colour_per_series(fig):
    by_colour = {}
    by_label = {}
    for label, rgb in series(fig):
        key = tuple(round(c, 3) for c in rgb)
        by_colour.setdefault(key, set()).add(label)
        by_label.setdefault(label, set()).add(key)
    shared = {c: labels for c, labels in by_colour.items() if len(labels) > 1}
    assert not shared, f"colours used for more than one series: {shared}"
    assert all(len(c) == 1 for c in by_label.values()), by_label


def legends_outside(fig):
    """Every legend lies outside its axes (to the right), so no legend hides data."""
    fig.canvas.draw()
    for ax in fig.axes:
        leg = ax.get_legend()
        if leg is not None:
            assert leg.get_window_extent().x0 >= ax.get_window_extent().x1 - 1.0


def test_year_temperature_figure_shows_daily_bands(year):
    ts = year.timeseries
    fig = temperature_figure(ts, year.summary, year.daily, "demo", "si")
    bands = {c.get_label(): c for ax in fig.axes for c in ax.collections}
    assert "attic air" in bands and "outdoor air" in bands and "deck underside, hottest plane" in bands
    # the attic band's upper edge is each day's maximum, computed here independently by grouping on the date
    by_day = ts["attic_air_c"].groupby(ts.index.strftime("%Y-%m-%d")).agg(["min", "max"])
    assert len(by_day) == 366  # Jan 1 to Dec 31 24:00 (the last instant is Jan 1 00:00 of the next year)
    path = bands["attic air"].get_paths()[0].vertices[:, 1]
    assert np.isclose(path.max(), by_day["max"].max()) and np.isclose(path.min(), by_day["min"].min())
    b = daily_bands(ts)
    np.testing.assert_allclose(b["attic_max"].to_numpy(), by_day["max"].to_numpy(), atol=1e-12)
    np.testing.assert_allclose(b["attic_min"].to_numpy(), by_day["min"].to_numpy(), atol=1e-12)
    # daily run hours as bars, and the hottest week drawn in full below
    bars = [c for ax in fig.axes for c in ax.containers]
    assert len(bars) == 1 and len(bars[0].patches) == len(year.daily)
    titles = " ".join(ax.get_title(loc="left") for ax in fig.axes)
    assert "hottest week" in titles
    assert_one_colour_per_series(fig)
    legends_outside(fig)


def test_week_figure_traces_colours_and_ticks(week):
    fig = temperature_figure(week.timeseries, week.summary, week.daily, "demo", "ip")
    labels = [line.get_label() for line in fig.axes[0].lines]
    assert {"outdoor air", "attic air", "sensor", "deck underside, south", "deck underside, north"} <= set(labels)
    # the traces are at the full output step, in degF
    attic = next(line for line in fig.axes[0].lines if line.get_label() == "attic air")
    assert len(attic.get_xdata()) == len(week.timeseries)
    assert np.isclose(np.max(attic.get_ydata()), week.summary["attic_air_max_c"] * 1.8 + 32.0)
    assert (week.timeseries.index[-1] - week.timeseries.index[0]).days <= LONG_PERIOD_DAYS
    assert_one_colour_per_series(fig)
    legends_outside(fig)
    # tick labels do not repeat the date on every tick
    fig.canvas.draw()
    ticks = [t.get_text() for t in fig.axes[-1].get_xticklabels() if t.get_text()]
    assert len(ticks) >= 4 and len(set(ticks)) == len(ticks)


def test_hip_roof_design_day_colours():
    # four planes, four deck colours, none shared with the air traces (mesa_ranch is a fictional hip roof)
    from pathlib import Path

    from atticsim.pipeline import design_day

    sc = atticsim.load_scenario(Path(__file__).resolve().parents[2] / "scenarios" / "mesa_ranch.toml")
    r = design_day(sc, "2025-07-21", 43.0, 14.0)
    fig = temperature_figure(r.timeseries, r.summary, r.daily, "ranch", "si")
    decks = [line for line in fig.axes[0].lines if line.get_label().startswith("deck underside")]
    assert len(decks) == len(sc.roof.planes) == 4
    assert_one_colour_per_series(fig)


def test_monthly_figure_has_kwh_and_net_benefit_by_month(year, week):
    fig = monthly_figure(year, "si")
    labels = [c.get_label() for ax in fig.axes for c in ax.containers]
    assert "fan electricity [kWh]" in labels and any("net benefit" in x for x in labels)
    net = next(c for ax in fig.axes for c in ax.containers if "net benefit" in c.get_label())
    assert len(net.patches) == 12
    # the months' net benefits add up to the season's (the summary's own definition)
    total = sum(p.get_height() for p in net.patches)
    assert total == pytest.approx(year.summary["net_benefit_kwh"], rel=1e-6, abs=1e-6)
    assert_one_colour_per_series(fig)
    # a week lies within one month: days on the axis instead of a single pair of bars, whole starts only
    fig = monthly_figure(week, "si")
    net = next(c for ax in fig.axes for c in ax.containers if "net benefit" in c.get_label())
    assert len(net.patches) == 7
    fig.canvas.draw()
    starts_axis = next(ax for ax in fig.axes if ax.get_ylabel() == "starts")
    ticks = [float(t) for t in starts_axis.get_yticks() if starts_axis.get_ylim()[0] <= t <= starts_axis.get_ylim()[1]]
    assert all(float(t).is_integer() for t in ticks)
    assert_one_colour_per_series(fig)


def test_daily_net_benefit_adds_up_with_the_conditioned_air_term():
    # a vented house with ceiling leaks: the fan draws conditioned air, so the daily net benefit carries the
    # conditioned-air term; the days add up to the summary (the same books, cut at midnight)
    from pathlib import Path

    sc = atticsim.load_scenario(Path(__file__).resolve().parents[2] / "scenarios" / "starved_intakes.toml",
                                ["simulation.spinup_days=1"])
    r = atticsim.simulate(sc, start="2025-07-01", end="2025-07-02")
    s = r.summary
    assert s["conditioned_air_load_kwh"] > 1.0  # the term matters here
    assert r.daily["net_benefit_kwh"].sum() == pytest.approx(s["net_benefit_kwh"], rel=1e-9)
    assert r.monthly["net_benefit_kwh"].sum() == pytest.approx(s["net_benefit_kwh"], rel=1e-9)


def test_placements_figure_one_colour_per_placement():
    from atticsim.study.placements import run_placements

    sc = atticsim.demo_scenario(["simulation.spinup_days=1"])
    results = run_placements(sc, ["ridge", "intake"], start="2025-07-01", end="2025-07-01")
    fig = placements_figure(results, "si")
    assert_one_colour_per_series(fig)
    legends_outside(fig)


def test_period_shorter_than_a_day_of_samples_still_draws():
    # a design-day-like single day: the short form, whatever the length
    idx = pd.date_range("2025-07-01", periods=1441, freq="1min", tz="Etc/GMT+6")
    ts = pd.DataFrame({"outdoor_air_c": 30.0, "attic_air_c": 35.0, "fan_on": 0, "deck_underside_a_c": 40.0},
                      index=idx)
    fig = temperature_figure(ts, {"fan_starts": 0, "fan_run_hours": 0.0}, None, "x", "si")
    assert_one_colour_per_series(fig)
