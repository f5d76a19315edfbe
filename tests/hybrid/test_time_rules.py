"""Time rules in the hybrid driver: switching instants against schedules worked by hand, and the fast solver
against the reference with the rules on."""

from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest

from atticsim.forcing.build import Forcing
from atticsim.hybrid.controller import Controller
from atticsim.hybrid.driver import simulate_hybrid
from atticsim.hybrid.reference import ReferenceStepper
from atticsim.network.kernel import BOOKS
from atticsim.pipeline import run_raw
from atticsim.scenario import load_scenario

ROOT = Path(__file__).resolve().parents[2]
SLOPE = 0.01  # K/s


class _Ramp:
    """A one-node 'attic' whose sensor rises at 0.01 K/s with the fan off and falls at 0.01 K/s with it on:
    its switching instants can be worked by hand (a test network, not a model of anything)."""

    n_nodes = 1
    index = {"sensor": 0}

    def rate(self, x, u, fan_on, air):
        return np.concatenate([[-SLOPE if fan_on else SLOPE], np.zeros(len(BOOKS))])

    def mean_air(self, y):
        return y[0]


def events_of(rules, on=40.0, off=35.0, t_end=4000.0, x0=30.0):
    net = _Ramp()
    forcing = Forcing(times=None, step=3600.0, values=np.zeros((1, 3)), channels=["unused"], notes=[])
    out = np.arange(0.0, t_end + 1.0, 100.0)
    y0 = np.concatenate([[x0], np.zeros(len(BOOKS))])
    stepper = ReferenceStepper(net, forcing, out, np.empty((y0.size, out.size)), rtol=1e-10)
    run = simulate_hybrid(net, forcing, Controller("close-on-rise", on, off, rules), 0.0, t_end, y0, out, stepper)
    return [(round(t, 3), fan, round(s, 3), cause) for t, fan, s, cause in run.events]


def rules(**kw):
    return SimpleNamespace(**{"start_delay": 0.0, "run_on": 0.0, "min_run": 0.0, "min_rest": 0.0, **kw})


def test_thresholds_alone():
    # 30 -> 40 degC at 0.01 K/s: on at 1000 s; 40 -> 35: off at 1500 s; 35 -> 40: on at 2000 s ...
    assert events_of(rules())[:4] == [(1000.0, True, 40.0, "threshold"), (1500.0, False, 35.0, "threshold"),
                                      (2000.0, True, 40.0, "threshold"), (2500.0, False, 35.0, "threshold")]


def test_start_delay():
    # called at 1000 s, the fan starts 100 s later at 41 degC; it falls to 35 by 1700 s and stops; rises
    # again, called at 2200 s, starts at 2300 s
    assert events_of(rules(start_delay=100.0))[:3] == [(1100.0, True, 41.0, "start_delay"),
                                                       (1700.0, False, 35.0, "threshold"),
                                                       (2300.0, True, 41.0, "start_delay")]


def test_run_on():
    # on at 1000 s; released at 1500 s (35 degC); runs on 200 s to 1700 s (33 degC); rises 33 -> 40 by 2400 s
    assert events_of(rules(run_on=200.0))[:3] == [(1000.0, True, 40.0, "threshold"),
                                                  (1700.0, False, 33.0, "run_on"),
                                                  (2400.0, True, 40.0, "threshold")]


def test_min_run():
    # on at 1000 s; released at 1500 s but held to 1800 s (32 degC); rises 32 -> 40 by 2600 s
    assert events_of(rules(min_run=800.0))[:3] == [(1000.0, True, 40.0, "threshold"),
                                                   (1800.0, False, 32.0, "min_run"),
                                                   (2600.0, True, 40.0, "threshold")]


def test_min_rest_with_a_narrow_band():
    # on 36, off 35: on at 600 s, off at 700 s (35 degC); called again at 800 s (36 degC) but rests to
    # 1000 s (38 degC); falls to 35 by 1300 s
    assert events_of(rules(min_rest=300.0), on=36.0, off=35.0)[:4] == [
        (600.0, True, 36.0, "threshold"), (700.0, False, 35.0, "threshold"),
        (1000.0, True, 38.0, "min_rest"), (1300.0, False, 35.0, "threshold")]


def test_rules_combine_and_a_switch_without_hysteresis():
    # on = off = 38 with a minimum run of 300 s and a minimum rest of 200 s: on at 800 s (38), the call ends
    # at once as the sensor falls, the fan runs to 1100 s (35); called at 1400 s (38 again) after 300 s of
    # rest, so at once; off at 1700 s (35) ... (the switch gets 1 uK of hysteresis: instants within 1 ms)
    assert events_of(rules(min_run=300.0, min_rest=200.0), on=38.0, off=38.0)[:4] == [
        (800.0, True, 38.0, "threshold"), (1100.0, False, 35.0, "min_run"),
        (1400.0, True, 38.0, "threshold"), (1700.0, False, 35.0, "min_run")]
    with pytest.raises(ValueError, match="without hysteresis"):
        Controller("close-on-rise", 38.0, 38.0, rules(run_on=60.0))


def test_a_call_shorter_than_the_start_delay_starts_nothing():
    # a start delay of 200 s: called at 1000 s, the fan would start at 1200 s; the call ends at 1100 s, so
    # nothing is pending; a new call at 1300 s starts its own delay, and the fan starts at 1500 s
    c = Controller("close-on-rise", 40.0, 35.0, rules(start_delay=200.0))
    c.start(0.0, 30.0)
    assert c.crossed(1000.0) is None and c.deadline() == 1200.0
    assert c.crossed(1100.0) is None and c.deadline() == float("inf")  # the call ended: nothing pending
    assert c.crossed(1300.0) is None and c.deadline() == 1500.0        # a new call, a new delay
    assert c.expired(1500.0) == "start_delay" and c.fan


@pytest.mark.parametrize("name,extra", [
    ("heron_lane_bungalow", ['sensor.placement="intake"', "thermostat.min_run=3min", "thermostat.min_rest=2min"]),
    ("heron_lane_bungalow", ["thermostat.start_delay=10min", "thermostat.run_on=20min"]),
    ("starved_intakes", ["thermostat.on=38degC", "thermostat.off=37.9degC", "thermostat.min_run=5min"]),
])
def test_fast_agrees_with_reference_with_time_rules(name, extra):
    # the agreement the project promises (0.05 K, 5 s, same starts, books to 0.1 %), rules on; every switch a
    # rule caused lies exactly (1 ms) its duration after the event that started it
    base = ["simulation.spinup_days=1"] + extra
    path = ROOT / "scenarios" / f"{name}.toml"
    runs = {}
    for solver in ("fast", "reference"):
        sc = load_scenario(path, base + [f'simulation.solver="{solver}"'])
        runs[solver] = run_raw(sc, start="2025-07-02", end="2025-07-02", include_no_fan=False)
    a, b = runs["reference"].with_fan, runs["fast"].with_fan
    n = runs["fast"].network.n_nodes
    assert len(a.events) == len(b.events) > 0
    assert [e[3] for e in a.events] == [e[3] for e in b.events]
    assert max(abs(ea[0] - eb[0]) for ea, eb in zip(a.events, b.events)) < 5.0
    assert np.max(np.abs(a.y[:n] - b.y[:n])) < 0.05
    ctl = runs["fast"].controller
    timed = 0
    for run in (a, b):
        for prev, ev in zip(run.events, run.events[1:]):
            if ev[3] in ("min_run", "min_rest"):
                assert ev[0] - prev[0] == pytest.approx(getattr(ctl, ev[3]), abs=1e-3)
                timed += 1
    if any("min_run" in e for e in extra):
        assert timed > 0


def test_a_logged_fan_switches_exactly_when_the_log_changes():
    # a fan log (on at 500 s, still on at 700 s, off at 1300 s, on at 2000 s): the driver switches the fan at
    # those instants exactly, whatever the sensor does, and skips entries that change nothing
    from atticsim.hybrid.controller import LoggedFan

    net = _Ramp()
    forcing = Forcing(times=None, step=3600.0, values=np.zeros((1, 3)), channels=["unused"], notes=[])
    out = np.arange(0.0, 2501.0, 100.0)
    y0 = np.concatenate([[30.0], np.zeros(len(BOOKS))])
    log = LoggedFan([0.0, 500.0, 700.0, 1300.0, 2000.0], [False, True, True, False, True])
    stepper = ReferenceStepper(net, forcing, out, np.empty((y0.size, out.size)), rtol=1e-10)
    run = simulate_hybrid(net, forcing, log, 0.0, 2500.0, y0, out, stepper)
    assert [(round(t, 6), fan, cause) for t, fan, _, cause in run.events] == [
        (500.0, True, "log"), (1300.0, False, "log"), (2000.0, True, "log")]
    # the sensor rose 0.01 K/s for 500 s, fell for 800 s, rose for 700 s, fell for 500 s: 30 + 5 - 8 + 7 - 5
    assert run.y_end[0] == pytest.approx(29.0, abs=1e-6)
