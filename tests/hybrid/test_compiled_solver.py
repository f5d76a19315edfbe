"""The compiled stepper in the hybrid driver: many switches against the reference stepper, exact crossings,
its output grid, and the reference taking over where it cannot go on."""

from pathlib import Path

import numpy as np
import pytest

from atticsim.hybrid import compiled
from atticsim.hybrid.solve import integrate
from atticsim.pipeline import run_raw
from atticsim.scenario import load_scenario

ROOT = Path(__file__).resolve().parents[2]
BUNGALOW = ROOT / "scenarios" / "heron_lane_bungalow.toml"
# a narrow band (0.5 K) on the demo house: 78 switches in the day compared (measured; the test asks for more than 50)
NARROW = ["simulation.spinup_days=1", "thermostat.on=38 degC", "thermostat.off=37.5 degC"]


@pytest.fixture(scope="module")
def narrow_runs():
    sc_ref = load_scenario(BUNGALOW, NARROW + ['simulation.solver="reference"'])
    start = sc_ref.weather.start
    end = (np.datetime64(start) + np.timedelta64(1, "D")).astype(str)
    ref = run_raw(sc_ref, start=start, end=end, include_no_fan=False)
    fast = run_raw(load_scenario(BUNGALOW, NARROW + ['simulation.solver="fast"']), start=start, end=end,
                   include_no_fan=False)
    return ref, fast


def test_many_switches_agree_with_reference(narrow_runs):
    # the agreement the project promises (0.05 K, 5 s, same starts, books to 0.1 %) where it is hardest
    ref, fast = narrow_runs
    n = ref.network.n_nodes
    a, b = ref.with_fan, fast.with_fan
    assert len(a.events) > 50 and len(a.events) == len(b.events)
    assert [e[1] for e in a.events] == [e[1] for e in b.events]
    assert np.max(np.abs(np.array([e[0] for e in a.events]) - np.array([e[0] for e in b.events]))) < 5.0
    assert np.max(np.abs(a.y[:n] - b.y[:n])) < 0.05
    big = np.abs(a.y_end[n:]) > 1e5
    assert np.all(np.abs(b.y_end[n:][big] - a.y_end[n:][big]) <= 1e-3 * np.abs(a.y_end[n:][big]))


def test_switches_happen_exactly_at_the_levels(narrow_runs):
    _, fast = narrow_runs
    ctl = fast.controller
    for _, fan_on, sensor, cause in fast.with_fan.events:
        assert cause == "threshold"
        assert sensor == pytest.approx(ctl.on if fan_on else ctl.off, abs=1e-6)


def test_fan_state_and_outputs_follow_the_events(narrow_runs):
    _, fast = narrow_runs
    run = fast.with_fan
    assert np.allclose(np.diff(run.t[:-1]), 60.0)
    checked = 0
    for i, (t_event, fan_on, *_) in enumerate(run.events):
        after = np.searchsorted(run.t, t_event + 1e-6)
        nxt = run.events[i + 1][0] if i + 1 < len(run.events) else np.inf
        if after < run.t.size and run.t[after] < nxt:  # (two switches within a minute: the later one shows)
            assert run.fan[after] == fan_on
            checked += 1
    assert checked > len(run.events) // 2


def test_a_switch_closing_on_fall_agrees_with_reference():
    # a switch closing on fall (on when the sensor falls to `on`, off when it rises to `off`): the driver asks
    # the controller for each crossing's level and direction, for every stepper alike
    base = ["simulation.spinup_days=0", 'thermostat.action="close-on-fall"', "thermostat.on=30 degC",
            "thermostat.off=31 degC"]
    runs = {}
    for solver in ("fast", "reference"):
        sc = load_scenario(BUNGALOW, base + [f'simulation.solver="{solver}"'])
        end = (np.datetime64(sc.weather.start) + np.timedelta64(1, "D")).astype(str)
        runs[solver] = run_raw(sc, start=sc.weather.start, end=end, include_no_fan=False)
    a, b = runs["fast"].with_fan, runs["reference"].with_fan
    ctl = runs["fast"].controller
    assert len(a.events) >= 2 and len(a.events) == len(b.events)
    for ea, eb in zip(a.events, b.events):
        assert ea[1] == eb[1] and ea[0] == pytest.approx(eb[0], abs=5.0)
        assert ea[2] == pytest.approx(ctl.on if ea[1] else ctl.off, abs=1e-6)


def assert_air_runs_describe_air(run):
    """HybridRun.air_runs: each run starts where the held state changes, with that very state; the held
    state of every row is the one the airflow model gave at the last update before it."""
    starts, states = run.air_runs
    ids = np.array([id(s) for s in run.air])
    changes = np.flatnonzero(np.concatenate(([True], ids[1:] != ids[:-1])))
    np.testing.assert_array_equal(starts, changes)
    assert all(run.air[i] is s for i, s in zip(starts, states))
    update_times = np.array([u[0] for u in run.air_updates])
    for i in (0, run.t.size // 3, run.t.size - 1):
        last = int(np.searchsorted(update_times, run.t[i] + 1e-6)) - 1
        assert run.air[i] == run.air_updates[last][1]


def test_air_runs_describe_the_held_flows(narrow_runs):
    _, fast = narrow_runs
    run = fast.with_fan
    assert run.air_runs is not None and len(run.air_runs[0]) > 50
    assert_air_runs_describe_air(run)


def test_grid_steps():
    t0 = 1000.0
    assert compiled.grid_steps(np.append(np.arange(t0, t0 + 3600, 60.0), t0 + 3601), t0) == (60.0, 60.0, 1200.0)
    assert compiled.grid_steps(np.append(np.arange(t0, t0 + 7200, 300.0), t0 + 7200), t0) == (300.0, 60.0, 1200.0)
    assert compiled.grid_steps(np.arange(t0, t0 + 7200, 900.0), t0) == (900.0, 60.0, 900.0)
    assert compiled.grid_steps(np.array([t0 + 86400.0]), t0) == (60.0, 60.0, 1200.0)  # spin-up: the end only
    assert compiled.grid_steps(np.array([t0, t0 + 60, t0 + 100, t0 + 200]), t0) is None
    assert compiled.grid_steps(np.arange(t0 + 30, t0 + 3600, 60.0), t0) is None  # not from the start


def test_change_of_forcing_slope_at_a_sample():
    # the prediction across a weather sample: u moved by KINK_SPAN times the change of slope of the linear
    # interpolation there (hand-worked: samples 0, 1, 3, 3 every 10 s; slopes 0.1, 0.2, 0 per s, zero beyond
    # the ends as the interpolation is clamped there)
    values = np.array([[0.0, 1.0, 3.0, 3.0], [5.0, 5.0, 5.0, 5.0]])
    u = np.array([100.0, 7.0])
    out = np.zeros(2)
    span = compiled.KINK_SPAN
    for t, jump in ((0.0, 0.1), (10.0, 0.1), (20.0, -0.2), (30.0, 0.0)):
        assert compiled._slope_jump(values, 10.0, t, u, out)
        np.testing.assert_allclose(out, [100.0 + span * jump, 7.0], rtol=0, atol=1e-12)
    assert not compiled._slope_jump(values, 10.0, 15.0, u, out)  # between samples: no kink


def test_outputs_off_the_grid_run_on_the_reference_stepper():
    sc = load_scenario(BUNGALOW, ["simulation.spinup_days=0"])
    raw = run_raw(sc, start=sc.weather.start, end=sc.weather.start, include_no_fan=False)
    t0 = raw.period.t_start
    times = t0 + np.array([0.0, 60.0, 100.0, 3600.0])
    run = integrate(raw.network, raw.forcing, raw.controller, t0, t0 + 3600.0, raw.y_start_fan, times,
                    sc.simulation)
    assert np.allclose(run.t, times) and np.all(np.isfinite(run.y))
    assert any("reference solver ran" in n for n in run.notes)


def test_fast_tolerance_reaches_the_solver():
    # simulation.fast_tolerance is the compiled solver's per-segment tolerance: tighter means more work
    # (right-hand-side calls) and a result at least as close to the reference
    runs = {}
    for tol in ("5e-3 K", "2e-4 K"):
        sc = load_scenario(BUNGALOW, ["simulation.spinup_days=0", f"simulation.fast_tolerance={tol}"])
        runs[tol] = run_raw(sc, start=sc.weather.start, end=sc.weather.start, include_no_fan=False)
    assert runs["2e-4 K"].with_fan.n_rhs > 1.2 * runs["5e-3 K"].with_fan.n_rhs
    sc = load_scenario(BUNGALOW, ["simulation.spinup_days=0", 'simulation.solver="reference"'])
    ref = run_raw(sc, start=sc.weather.start, end=sc.weather.start, include_no_fan=False)
    n = ref.network.n_nodes
    err = {k: np.max(np.abs(r.with_fan.y[:n] - ref.with_fan.y[:n])) for k, r in runs.items()}
    assert err["2e-4 K"] <= err["5e-3 K"] + 1e-4


def test_a_segment_that_will_not_converge_hands_over_to_the_reference(monkeypatch):
    # advance() reports FAILED when a segment's fixed point will not converge even at half a second; the
    # driver then goes on with the reference stepper from that instant and says so in the run's notes
    sc = load_scenario(BUNGALOW, ["simulation.spinup_days=0"])
    raw = run_raw(sc, start=sc.weather.start, end=sc.weather.start, include_no_fan=False)
    net, forcing, ctl, t0 = raw.network, raw.forcing, raw.controller, raw.period.t_start
    times = t0 + np.arange(0.0, 3601.0, 60.0)
    monkeypatch.setattr(compiled, "advance", lambda t, *rest: (compiled.FAILED, t, 0, 0, 0, 0, 0))
    run = integrate(net, forcing, ctl, t0, t0 + 3600.0, raw.y_start_fan, times, sc.simulation)
    assert np.allclose(run.t, times) and np.all(np.isfinite(run.y))
    assert any("would not converge" in n and "reference solver went on" in n for n in run.notes)
