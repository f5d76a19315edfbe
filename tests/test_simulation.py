"""Whole-run checks: energy books, exact event location, and a clear summer day against field data."""

import time
from dataclasses import replace

import numpy as np
import pandas as pd
import pytest

from atticsim.forcing.synthetic import DEMO_CLIMATES, synthetic_weather
from atticsim.scenario import demo_scenario
from atticsim.network.kernel import FORCING_BASE
from atticsim.hybrid.solve import integrate
from atticsim.pipeline import run_raw, simulate


@pytest.fixture(scope="module")
def clear_week():
    # Invented weather (demo climate with clouds switched off): test data, not a climate record.
    climate = replace(DEMO_CLIMATES["saltmarsh-point"], cloudy_day_chance=0.0)
    return synthetic_weather(climate, "2025-07-14", 4, seed=3)


@pytest.fixture(scope="module")
def two_days(clear_week):
    sc = demo_scenario(["simulation.spinup_days=1"])
    return simulate(sc, weather=clear_week, start="2025-07-15", end="2025-07-16")


def test_energy_books_close(two_days):
    # The acceptance figure: closure below 0.5 % of the gross exchange.
    s = two_days.summary
    assert abs(s["energy_balance_error_pct"]) < 0.5
    assert abs(s["energy_balance_error_no_fan_pct"]) < 0.5


def test_books_agree_with_the_sampled_heat_rates(two_days):
    # The books are integrated with the states; integrating the 1-min sampled rates by the trapezoid
    # rule must give the same energies (to the sampling error, well under 1 %).
    ts = two_days.timeseries
    t = (ts.index - ts.index[0]).total_seconds().to_numpy()
    for col, key in [("ceiling_heat_gain_w", "ceiling_heat_gain_kwh"), ("solar_absorbed_w", "solar_absorbed_kwh")]:
        trapz = np.trapezoid(ts[col].to_numpy(), t) / 3.6e6
        assert trapz == pytest.approx(two_days.summary[key], rel=0.01)


def test_run_hours_match_events(two_days):
    ev = two_days.events
    ons = ev[ev.fan == "on"].time.reset_index(drop=True)
    offs = ev[ev.fan == "off"].time.reset_index(drop=True)
    assert len(ons) == two_days.summary["fan_starts"] > 0
    hours = sum((b - a).total_seconds() for a, b in zip(ons, offs)) / 3600.0
    assert hours == pytest.approx(two_days.summary["fan_run_hours"], abs=1e-6)
    # every switch happens exactly at its threshold (exact event location, not a sampled one)
    th = demo_scenario().thermostat
    assert np.allclose(ev[ev.fan == "on"].sensor_c, th.on, atol=1e-6)
    assert np.allclose(ev[ev.fan == "off"].sensor_c, th.off, atol=1e-6)


def test_events_located_within_one_second(clear_week):
    # Compare the default tolerances with a much finer run (rtol 1e-10, 20 s steps): the switching
    # instants must agree within 1 s (the acceptance figure).
    base = ["simulation.spinup_days=1", 'simulation.solver="reference"']
    coarse = run_raw(demo_scenario(base), clear_week, "2025-07-15", "2025-07-16", include_no_fan=False)
    fine = run_raw(demo_scenario(base + ["simulation.rtol=1e-10", 'simulation.max_step="20 s"']),
                   clear_week, "2025-07-15", "2025-07-16", include_no_fan=False)
    a = np.array([e[0] for e in coarse.with_fan.events])
    b = np.array([e[0] for e in fine.with_fan.events])
    assert len(a) == len(b) > 0
    assert np.max(np.abs(a - b)) < 1.0


def test_clear_day_dark_roof_passive_vents_in_field_range(clear_week):
    # Clear hot-humid summer day, dark shingles, R-30, passive vents only (fan disabled).
    # Field range: attic air peaks 15-25 K above ambient, deck 60-80 C (common-practice sanity band; the
    # Florida roof-systems study, Parker, Sonne & Sherwin, FSEC-CR-1220-00, reports ~22 K for dark
    # shingles). Common practice band, values recalled, not re-measured here.
    sc = demo_scenario(["fan.enabled=false", "simulation.spinup_days=3"])
    r = simulate(sc, weather=clear_week, start="2025-07-15", end="2025-07-15")
    s = r.summary
    rise = s["attic_air_max_c"] - s["outdoor_air_max_c"]
    assert 15.0 <= rise <= 25.0
    assert 60.0 <= s["deck_max_c"] <= 80.0
    assert s["fan_starts"] == 0
    # Peak ceiling heat flux: the Florida roof-systems study measured roughly 3 Btu/h ft2 (about 9-10 W/m2)
    # at the peak through R-19 under dark shingles (Parker, Sonne & Sherwin 2002, FSEC-CR-1220-00; value
    # from memory); through R-30 the same attic gives about 19/30 of that, some 6 W/m2. Band: 3-10 W/m2.
    peak_flux = r.timeseries["ceiling_heat_gain_w"].max() / sc.attic.floor_area
    assert 3.0 <= peak_flux <= 10.0


def test_fan_keeps_attic_cooler_and_cuts_ceiling_gain(two_days):
    # A fact any practitioner expects: ventilation lowers the attic peak and the ceiling gain.
    s = two_days.summary
    assert s["ceiling_heat_gain_kwh"] < s["ceiling_heat_gain_no_fan_kwh"]
    assert s["fan_energy_kwh"] == pytest.approx(s["fan_run_hours"] * 0.180, rel=1e-6)  # 180 W fan


def test_reused_no_fan_run_equals_a_fresh_one(clear_week):
    # A study that varies only the set points reuses the no-fan run: the reused figures must be the ones a
    # fresh run gives, and a change that does affect the no-fan run (vent area) must not hit the cache.
    import atticsim.pipeline as pipeline

    pipeline._NO_FAN_RUNS.clear()
    fresh = simulate(demo_scenario(["simulation.spinup_days=1", "thermostat.on=41 degC"]),
                     weather=clear_week, start="2025-07-15", end="2025-07-15")
    simulate(demo_scenario(["simulation.spinup_days=1", "thermostat.on=37 degC"]), weather=clear_week,
             start="2025-07-15", end="2025-07-15", reuse_no_fan=True)
    assert len(pipeline._NO_FAN_RUNS) == 1
    reused = simulate(demo_scenario(["simulation.spinup_days=1", "thermostat.on=41 degC"]), weather=clear_week,
                      start="2025-07-15", end="2025-07-15", reuse_no_fan=True)
    assert len(pipeline._NO_FAN_RUNS) == 1
    for key in ("ceiling_heat_gain_no_fan_kwh", "energy_balance_error_no_fan_pct", "ceiling_heat_gain_kwh",
                "fan_starts"):
        assert reused.summary[key] == fresh.summary[key], key
    other = demo_scenario(["simulation.spinup_days=1", "thermostat.on=41 degC", "vents.passive_ach=3"])
    changed = simulate(other, weather=clear_week, start="2025-07-15", end="2025-07-15", reuse_no_fan=True)
    assert len(pipeline._NO_FAN_RUNS) == 2
    assert changed.summary["ceiling_heat_gain_no_fan_kwh"] != fresh.summary["ceiling_heat_gain_no_fan_kwh"]


def test_the_no_fan_run_beside_the_fans_is_the_run_made_alone(clear_week, monkeypatch):
    # run_raw integrates the no-fan run in a thread while the fan's runs: the same numbers as one after the
    # other, to the last bit
    import atticsim.pipeline as pipeline

    sc = demo_scenario(["simulation.spinup_days=1"])
    beside = run_raw(sc, weather=clear_week, start="2025-07-15", end="2025-07-16")

    class InTurn:  # the work done at once, in the caller's thread
        def __init__(self, work):
            self.value = work(None)

        def result(self):
            return self.value

    monkeypatch.setattr(pipeline, "Beside", InTurn)
    alone = run_raw(sc, weather=clear_week, start="2025-07-15", end="2025-07-16")
    for a, b in ((beside.with_fan, alone.with_fan), (beside.without_fan, alone.without_fan)):
        assert np.array_equal(a.y, b.y) and np.array_equal(a.t, b.t) and a.events == b.events


def test_a_fan_run_that_fails_ends_the_no_fan_run_beside_it(clear_week, monkeypatch):
    # a run stopped (Ctrl-C, SIGTERM) while its no-fan run goes on in a thread: that thread ends before the
    # exception leaves run_raw, at its next step, and never finishes its period
    import threading

    import atticsim.pipeline as pipeline

    from atticsim.hybrid.driver import RunCancelled

    ended = []

    def integrate(*args, **kw):
        if kw.get("progress") is not None:  # the fan's run (it reports progress)
            threading.Event().wait(0.2)  # the no-fan run is under way meanwhile
            raise KeyboardInterrupt
        if kw["cancel"].wait(30.0):  # a long no-fan run, between two of its steps
            ended.append("cancelled")
            raise RunCancelled("cancelled")
        raise AssertionError("never cancelled")

    monkeypatch.setattr(pipeline, "integrate", integrate)
    t0 = time.monotonic()
    with pytest.raises(KeyboardInterrupt):
        run_raw(demo_scenario(["simulation.spinup_days=0"]), weather=clear_week, start="2025-07-14",
                end="2025-07-17", progress=lambda *a: None)
    assert not [t for t in threading.enumerate() if t.name == "atticsim-beside"]
    assert ended == ["cancelled"] and time.monotonic() - t0 < 10.0


def test_a_run_whose_cancel_is_set_ends_at_its_next_step(clear_week):
    import threading

    from atticsim.hybrid.driver import RunCancelled

    raw = run_raw(demo_scenario(["simulation.spinup_days=0"]), weather=clear_week, start="2025-07-15",
                  end="2025-07-15", include_no_fan=False)
    cancel = threading.Event()
    cancel.set()
    with pytest.raises(RunCancelled, match="cancelled at t = "):
        integrate(raw.network, raw.forcing, None, raw.period.t_start, raw.period.t_end,
                  raw.with_fan.y[:, 0].copy(), raw.output_times, demo_scenario([]).simulation, cancel=cancel)


def test_heat_flows_formed_by_blocks_in_threads_are_those_formed_at_once(clear_week):
    from atticsim.results.metrics import series_flows

    raw = run_raw(demo_scenario(["simulation.spinup_days=1"]), weather=clear_week, start="2025-07-15",
                  end="2025-07-15", include_no_fan=False)
    m = raw.with_fan.t.size
    whole = series_flows(raw.network, raw.with_fan, raw.forcing, rows=m)
    blocks = series_flows(raw.network, raw.with_fan, raw.forcing, rows=97)  # 15 blocks, two threads
    for a, b in zip(whole, blocks):
        assert a.keys() == b.keys()
        for name in a:
            assert np.array_equal(a[name], b[name]), name


def test_reused_forcing_is_the_one_a_fresh_build_gives(clear_week):
    # Study points reuse the forcing built for an earlier point on the same weather frame, site, roof and
    # period; the reused channels must equal a fresh build, and another roof must not hit the cache.
    import atticsim.pipeline as pipeline
    from atticsim.forcing.build import build_forcing

    pipeline._FORCINGS.clear()
    first = pipeline.run_raw(demo_scenario(["thermostat.on=37 degC"]), weather=clear_week, start="2025-07-15",
                             end="2025-07-15", include_no_fan=False, reuse_no_fan=True)
    second = pipeline.run_raw(demo_scenario(["thermostat.on=41 degC"]), weather=clear_week, start="2025-07-15",
                              end="2025-07-15", include_no_fan=False, reuse_no_fan=True)
    assert second.forcing is first.forcing and len(pipeline._FORCINGS) == 1
    fresh = build_forcing(clear_week[0], clear_week[1], demo_scenario([]), first.period.start, first.period.end)
    np.testing.assert_array_equal(second.forcing.values, fresh.values)
    steeper = demo_scenario(["roof.planes.0.tilt=40"])
    third = pipeline.run_raw(steeper, weather=clear_week, start="2025-07-15", end="2025-07-15",
                             include_no_fan=False, reuse_no_fan=True)
    assert third.forcing is not first.forcing and len(pipeline._FORCINGS) == 2
    poa = len(FORCING_BASE)  # the first plane's irradiance
    assert not np.array_equal(third.forcing.values[poa], first.forcing.values[poa])


def test_summary_only_result_has_the_full_summary(clear_week):
    # Study points ask for the summary alone (no daily, monthly or full time series); every summary figure
    # must be the one the full result gives, the sensor's local-air excess included.
    from atticsim.results.metrics import build_result

    sc = demo_scenario(["simulation.spinup_days=0", "thermostat.on=37 degC"])
    raw = run_raw(sc, weather=clear_week, start="2025-07-15", end="2025-07-16")
    full, short = build_result(sc, raw), build_result(sc, raw, summary_only=True)
    assert short.summary == full.summary
    assert short.daily is None and short.monthly is None
    assert list(short.timeseries.columns) == ["attic_air_c", "fan_on"]
    np.testing.assert_array_equal(short.timeseries["attic_air_c"], full.timeseries["attic_air_c"])
    assert len(short.events) == len(full.events) > 0


def test_forcing_value_is_the_channel_at_gives(clear_week):
    # The solvers' per-switch reads take one channel as a float; it must be what Forcing.at interpolates,
    # inside the period and clamped beyond both ends.
    raw = run_raw(demo_scenario(["simulation.spinup_days=0"]), weather=clear_week, start="2025-07-15",
                  end="2025-07-15", include_no_fan=False)
    forcing = raw.forcing
    last = forcing.step * (forcing.values.shape[1] - 1)
    for t in (-100.0, 0.0, 1234.5, forcing.step * 3, last - 0.25, last, last + 500.0):
        for c in range(forcing.values.shape[0]):
            assert forcing.value(c, t) == forcing.at(t)[c]


def test_reused_no_fan_arrays_are_read_only(clear_week):
    # the kept no-fan run is shared by every later caller; its arrays refuse writes instead of letting one
    # caller change what the others read
    import atticsim.pipeline as pipeline

    pipeline._NO_FAN_RUNS.clear()
    args = dict(weather=clear_week, start="2025-07-15", end="2025-07-15", reuse_no_fan=True)
    first = run_raw(demo_scenario(["simulation.spinup_days=0", "thermostat.on=37 degC"]), **args)
    second = run_raw(demo_scenario(["simulation.spinup_days=0", "thermostat.on=39 degC"]), **args)
    assert second.without_fan.y is first.without_fan.y
    with pytest.raises(ValueError):
        second.without_fan.y[0, 0] = 0.0
    with pytest.raises(ValueError):
        second.y_start_nofan[0] = 0.0


@pytest.mark.parametrize("scenario", ["heron_lane_bungalow", "starved_intakes"])
def test_fan_that_never_runs_changes_nothing(scenario):
    # With live air densities (each held volume flow carried at the present density of its air), a run whose
    # fan never switches on is the no-fan run: the same equations at the same instants, so the ceiling gain
    # and the attic temperatures agree to rounding (identity of the two runs, no outside reference needed).
    from pathlib import Path

    from atticsim.scenario import load_scenario

    path = Path(__file__).resolve().parent.parent / "scenarios" / f"{scenario}.toml"
    sc = load_scenario(path, ["thermostat.on=90degC", "thermostat.off=85degC", "simulation.spinup_days=1"])
    r = simulate(sc, start="2025-07-03", end="2025-07-03")
    assert r.summary["fan_starts"] == 0
    gain, gain_nf = r.summary["ceiling_heat_gain_kwh"], r.summary["ceiling_heat_gain_no_fan_kwh"]
    assert gain == pytest.approx(gain_nf, rel=1e-9, abs=1e-9)
    assert r.summary["conditioned_air_load_kwh"] == pytest.approx(r.summary["conditioned_air_load_no_fan_kwh"],
                                                                  rel=1e-9, abs=1e-9)


def test_held_flows_of_a_stopped_fan_do_not_remember_when_it_stopped():
    # The flows held with the fan off are volume flows, carried at the present density of their air: the
    # with-fan run's held state after its last switch and the no-fan run's state from the first instant give
    # the network the same rates at the same temperatures and weather (with mass flows held, the former kept
    # the density of the switch instant, the latter that of the first instant, a few percent apart).
    from atticsim.pipeline import run_raw

    raw = run_raw(demo_scenario(["simulation.spinup_days=0"]), start="2025-07-01", end="2025-07-05")
    run, nofan = raw.with_fan, raw.without_fan
    assert len(run.events) >= 4
    i = int(np.flatnonzero(~run.fan)[-1])  # a row with the fan off, after its last switch
    net = raw.network
    x, u = run.y[:net.n_nodes, i], raw.forcing.at(run.t[i])
    # the no-fan run's state held at the same instant (its output grid is coarser: its last update before then)
    held = [state for t, state in nofan.air_updates if t <= run.t[i]][-1]
    with_fan_rates = net.rate(x, u, False, net.air_vector(run.air[i]))
    no_fan_rates = net.rate(x, u, False, net.air_vector(held))
    np.testing.assert_array_equal(with_fan_rates, no_fan_rates)


@pytest.mark.parametrize("scenario,output_step", [("heron_lane_bungalow", 60), ("starved_intakes", 60),
                                                  ("heron_lane_bungalow", 300)])
def test_no_fan_run_on_its_coarse_grid_is_the_full_grid_run(monkeypatch, scenario, output_step):
    # The no-fan run keeps only what the metrics read (its books at the days' first instants and at the end),
    # on every m-th output instant; the compiled solver's segments and check steps are the same as on the
    # full grid, so the run is the same to the last bit (identity of the two runs, no outside reference needed)
    from pathlib import Path

    import atticsim.pipeline as pipeline
    from atticsim.scenario import load_scenario

    path = Path(__file__).resolve().parent.parent / "scenarios" / f"{scenario}.toml"
    sc = load_scenario(path, ["simulation.spinup_days=1", f"simulation.output_step={output_step}"])
    period = dict(start="2025-07-01", end="2025-07-03")
    coarse = pipeline.run_raw(sc, **period)
    monkeypatch.setattr(pipeline, "no_fan_output_times", lambda times, *args: times)
    full = pipeline.run_raw(sc, **period)
    c, f = coarse.without_fan, full.without_fan
    assert f.t.size == coarse.with_fan.t.size == 3 * 86400 // output_step + 1
    assert c.t.size == 3 * 86400 // 1200 + 1  # every 20 minutes
    rows = np.searchsorted(f.t, c.t)
    assert np.array_equal(f.t[rows], c.t)
    np.testing.assert_array_equal(c.y, f.y[:, rows])
    np.testing.assert_array_equal(c.y_end, f.y_end)
    # and so the results are the same
    from atticsim.results.metrics import build_result

    a, b = (build_result(sc, raw) for raw in (coarse, full))
    assert a.summary == b.summary
    pd.testing.assert_frame_equal(a.daily, b.daily)


def test_no_fan_grid_is_coarse_only_where_the_run_stays_the_same():
    # midnight must stay on the coarse grid (a period from 00:10 allows 10 minutes, not 20); an output step of
    # 15 min already gives the longest segment (no coarser grid keeps it); the reference solver keeps its grid
    import atticsim.pipeline as pipeline

    for overrides, start, want in ((["simulation.output_step=60"], "2025-07-01", 1200.0),
                                   (["simulation.output_step=60"], "2025-07-01T00:10", 600.0),
                                   (["simulation.output_step=900"], "2025-07-01", 900.0)):
        sc = demo_scenario(["simulation.spinup_days=0"] + overrides)
        raw = run_raw(sc, start=start, end="2025-07-02", include_no_fan=False)
        times = pipeline.no_fan_output_times(raw.output_times, raw.period, raw.forcing, sc.simulation)
        assert times[1] - times[0] == want, (overrides, start)
        assert times[0] == raw.output_times[0] and times[-1] == raw.output_times[-1]
    sc = demo_scenario(["simulation.spinup_days=0", 'simulation.solver="reference"'])
    raw = run_raw(demo_scenario(["simulation.spinup_days=0"]), start="2025-07-01", end="2025-07-01",
                  include_no_fan=False)
    assert pipeline.no_fan_output_times(raw.output_times, raw.period, raw.forcing, sc.simulation) \
        is raw.output_times
