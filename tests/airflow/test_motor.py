"""The fan motor: first-order spin-up and coast-down of the flow, and the energy of each start in the books."""

import math
from pathlib import Path

import numpy as np
import pytest

from atticsim.airflow.motor import STRETCHES, Motor
from atticsim.hybrid.controller import LoggedFan
from atticsim.pipeline import run_raw
from atticsim.scenario import demo_scenario, load_scenario

ROOT = Path(__file__).resolve().parents[2]


def held_volume(motor, t0, t1):
    """The speed the motor holds, integrated over [t0, t1] stretch by stretch as the hybrid loop holds it [s]."""
    total, t = 0.0, t0
    while t < t1:
        b = min(motor.next_change(t), t1)
        total += motor.mean_speed(t, b) * (b - t)
        t = b
    return total


@pytest.mark.parametrize("s_start,on,tau", [(0.0, True, 4.0), (0.3, True, 4.0), (1.0, False, 30.0),
                                            (0.6, False, 30.0)])
def test_a_transition_moves_the_first_order_volume(s_start, on, tau):
    # first-order lag s(t) = target + (s0 - target) exp(-t/tau): over [0, T] the speed integrates to
    # target T + (s0 - target) tau (1 - exp(-T/tau)) (closed form); the held stretches move the same volume,
    # and each stretch before the last holds the first-order mean over it exactly
    other = 7.0
    m = Motor(spin_up=tau if on else other, coast_down=tau if not on else other)
    t1 = 0.0
    if s_start in (0.0, 1.0):
        m.start(0.0, s_start == 1.0)
    else:  # a transition from a part speed: switched while it still coasts down or spins up
        m.start(0.0, on)
        m.switch(0.0, not on)
        t1 = -other * math.log(s_start if on else 1.0 - s_start)
        assert m.speed(t1) == pytest.approx(s_start, rel=1e-12)
    m.switch(t1, on)
    target = 1.0 if on else 0.0
    horizon = 20.0 * tau
    exact = target * horizon + (s_start - target) * tau * (1.0 - math.exp(-horizon / tau))
    assert held_volume(m, t1, t1 + horizon) == pytest.approx(exact, rel=1e-8)  # the tail beyond: exp(-20)
    for a, b in zip((0.0,) + STRETCHES[:-2], STRETCHES[:-1]):
        closed = target + (s_start - target) * (math.exp(-a) - math.exp(-b)) / (b - a)
        assert m.mean_speed(t1 + a * tau, t1 + b * tau) == pytest.approx(closed, rel=1e-12)
    end = t1 + STRETCHES[-1] * tau
    assert m.next_change(end) == math.inf and m.speed(end) == target


def test_an_instant_motor_never_holds_a_part_speed():
    m = Motor()
    m.switch(10.0, True)
    assert m.instant and m.next_change(10.0) == math.inf and m.mean_speed(10.0, 20.0) == 1.0


def _one_day(extra, controller=None, no_fan=False):
    """The demo bungalow (fictional) on July 2 of its invented weather, with results."""
    from atticsim.results.metrics import build_result

    sc = demo_scenario(["simulation.spinup_days=1"] + extra)
    raw = run_raw(sc, start="2025-07-02", end="2025-07-02", include_no_fan=no_fan, controller=controller)
    result = build_result(sc, raw)
    result.raw = raw
    return sc, result


def raw_origin(result):
    """The instant the forcing's clock counts from."""
    return result.raw.forcing.times[0]


def test_the_simulated_fan_flow_follows_the_first_order_spin_up_and_coast_down():
    import pandas as pd

    tau_up, tau_down = 6.0, 40.0
    on = pd.Timestamp("2025-07-02 13:00", tz="-06:00")  # the fan switched by a log: on at 13:00, off at 13:30
    log = LoggedFan.at_instants([on - pd.Timedelta(days=3), on, on + pd.Timedelta(minutes=30)], [False, True, False])
    sc, r = _one_day([f"fan.spin_up={tau_up}s", f"fan.coast_down={tau_down}s", 'simulation.output_step="1 s"'], log)
    ts = r.timeseries
    q = ts["fan_flow_m3_s"].to_numpy()
    t = (ts.index - on).total_seconds().to_numpy()
    full = sc.fan.rated_flow
    # the volume the fan moves over the spin-up and over the coast-down: the first-order solution's (closed
    # forms: full (T - tau) over a spin-up's first T >> tau, full tau over a coast-down; the held stretches
    # carry the transition's tail in their last), exactly from the held stretches...
    t_on = (on - raw_origin(r)).total_seconds()
    ups = [(a - t_on, s.fan_flow) for a, s in r.raw.with_fan.air_updates if t_on - 1.0 < a < t_on + 1800.0 + 500.0]
    edges = [a for a, _ in ups] + [1800.0 + 500.0]
    volume = {"up": 0.0, "down": 0.0}
    for (a, flow), b in zip(ups, edges[1:]):
        volume["up" if a < 1800.0 else "down"] += flow * (b - a)
    T = 1800.0
    assert volume["up"] == pytest.approx(full * (T - tau_up), rel=1e-9)
    assert volume["down"] == pytest.approx(full * tau_down, rel=1e-9)
    # ... and from the 1 s time series, to one sample's worth (a row shows the flow held up to it)
    up = (t > 0.0) & (t <= 10.0 * tau_up)
    assert np.sum(q[up]) * 1.0 == pytest.approx(full * (10.0 * tau_up - tau_up), abs=full * 1.0)
    down = (t > 1800.0) & (t <= 1800.0 + 10.0 * tau_down)
    assert np.sum(q[down]) * 1.0 == pytest.approx(full * tau_down, abs=full * 1.0)
    # at full speed between them, stopped long after
    assert np.allclose(q[(t > 5.0 * tau_up) & (t < 1800.0)], full)
    assert np.all(q[t > 1800.0 + 5.0 * tau_down] == 0.0)
    # each held step lies within the first-order speed's range over its stretch (a quarter of full at most)
    s_true = 1.0 - np.exp(-np.clip(t, 0.0, None) / tau_up)
    inside = up & (t > 0.0)
    assert np.all(q[inside] <= full * (1.0 + 1e-12)) and np.all(q[inside] >= 0.0)
    assert np.max(np.abs(q[inside] / full - s_true[inside])) < 0.25


def test_the_books_still_close_and_count_each_start():
    # the start energy is booked at each switch-on, beside the running power; it heats nothing, so the
    # thermal run is unchanged and the fan's electricity grows by starts x energy exactly
    _, a = _one_day(['sensor.placement="intake"'], no_fan=True)
    _, b = _one_day(['sensor.placement="intake"', "fan.start_energy=400J"], no_fan=True)
    sa, sb = a.summary, b.summary
    assert sa["fan_starts"] == sb["fan_starts"] > 5
    assert sb["fan_energy_kwh"] - sa["fan_energy_kwh"] == pytest.approx(sb["fan_starts"] * 400.0 / 3.6e6, rel=1e-9)
    assert sb["fan_start_energy_kwh"] == pytest.approx(sb["fan_starts"] * 400.0 / 3.6e6, rel=1e-12)
    assert sb["fan_starts_per_day"] == pytest.approx(sb["fan_starts"] / sb["days"])
    assert abs(sb["energy_balance_error_pct"]) < 0.5
    assert b.daily["fan_energy_kwh"].sum() == pytest.approx(sb["fan_energy_kwh"], rel=1e-9)


def test_start_energy_from_the_locked_rotor_current():
    # (V I_LR pf - P) t: 120 V x 6 A x 0.5 = 360 W at standstill, less the demo fan's running power, for 1.5 s
    sc = demo_scenario(["fan.locked_rotor_current=6A", "fan.locked_rotor_time=1.5s"])
    assert sc.fan.start_energy_j == pytest.approx((360.0 - sc.fan.power) * 1.5)


@pytest.mark.parametrize("name,extra", [
    ("heron_lane_bungalow", ['sensor.placement="intake"', "fan.spin_up=5s", "fan.coast_down=30s",
                             "fan.start_energy=300J", "thermostat.min_run=3min"]),
    ("starved_intakes", ["thermostat.on=38degC", "thermostat.off=37degC", "fan.spin_up=8s", "fan.coast_down=45s",
                         "thermostat.min_run=2min"]),
])
def test_fast_agrees_with_reference_with_the_motor(name, extra):
    # the agreement the project promises (0.05 K, 5 s, same starts), the motor's transitions on
    runs = {}
    for solver in ("fast", "reference"):
        sc = load_scenario(ROOT / "scenarios" / f"{name}.toml",
                           ["simulation.spinup_days=1", f'simulation.solver="{solver}"'] + extra)
        runs[solver] = run_raw(sc, start="2025-07-02", end="2025-07-02", include_no_fan=False)
    a, b = runs["reference"].with_fan, runs["fast"].with_fan
    net = runs["fast"].network
    assert len(a.events) == len(b.events) > 0
    assert [e[3] for e in a.events] == [e[3] for e in b.events]
    assert max(abs(ea[0] - eb[0]) for ea, eb in zip(a.events, b.events)) < 5.0
    # the building's nodes to 0.05 K; a sensor at the intakes moves tenths of a kelvin a second as the fan's
    # stream reaches it, so a switching instant a second apart shows there as tenths of a kelvin beside it
    building = [i for i, name in enumerate(net.node_names) if name != "sensor"]
    assert np.max(np.abs(a.y[building] - b.y[building])) < 0.05


def test_spin_up_slows_the_intake_sensors_short_cycling():
    # with the sensor at the intakes the fan's own stream trips it; a motor that takes seconds to reach its
    # flow, and blades that coast on, give the sensor time: fewer starts over the same day
    _, quick = _one_day(['sensor.placement="intake"'])
    _, slow = _one_day(['sensor.placement="intake"', "fan.spin_up=5s", "fan.coast_down=30s"])
    assert slow.summary["fan_starts"] < quick.summary["fan_starts"]


def test_motor_keys_are_checked():
    from atticsim.scenario.load import ScenarioError

    with pytest.raises(ScenarioError, match="not both"):
        demo_scenario(["fan.start_energy=100J", "fan.locked_rotor_current=5A", "fan.locked_rotor_time=1s"])
    with pytest.raises(ScenarioError, match="go together"):
        demo_scenario(["fan.locked_rotor_current=5A"])
    with pytest.raises(ScenarioError, match="fan.spin_up"):
        demo_scenario(["fan.spin_up=-1s"])
