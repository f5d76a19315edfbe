"""Validation cases: time in the thermostat and the fan (the timer stage's delays against closed forms and an
ngspice transient, a time rule's instants against a schedule worked by hand, the motor's spin-up against the
first-order solution)."""

from __future__ import annotations

import math

from atticsim.validation.registry import Comparison, NotRun, case

#: Our own test stage (invented values): 1 MOhm, 100 uF, charged from a 12 V output, switching at 2/3.
_STAGE = ("delay-start", 1e6, 100e-6, 2.0 / 3.0, 12.0, "charges")


def _stage():
    from atticsim.circuit.timer import TimerParams

    return TimerParams(*_STAGE)


@case(group="circuit", name="RC timer stage: start delay (closed form)",
      source="RC charging v(t) = V (1 - exp(-t / RC)) solved for v = V_th: t = RC ln(V / (V - V_th)) (any circuits "
             "textbook); worked by hand", unit="s", tolerance=1e-6, digits=3,
      inputs="a delay-start stage of our own: 1 MOhm, 100 uF, 12 V, threshold 2/3 of the supply: "
             "100 s x ln 3 = 109.861 s")
def timer_closed_form():
    from atticsim.circuit.timer import timer_delays

    return Comparison(timer_delays(_stage(), ideal=True)["start_delay"], 100.0 * math.log(3.0))


@case(group="circuit", name="RC timer stage: start delay against an ngspice transient",
      source="ngspice (run here): transient of the same stage (driving step, RC, diode across R for the instant "
             "release, a sharp switch at the threshold), .meas of the switch's crossing", unit="s",
      tolerance=0.005, kind="rel", digits=3,
      inputs="the stage above, called at 5 s and released 1000 s later")
def timer_ngspice():
    from atticsim.circuit.timer import timer_delays
    from atticsim.validation.ngspice import measure, ngspice_path, timer_netlist

    if ngspice_path() is None:
        raise NotRun("ngspice not found")
    p = _stage()
    t_call = 0.05 * p.tau
    m = measure(timer_netlist(p, t_call, t_call + 10.0 * p.tau, t_call + 20.0 * p.tau), ("t_on", "t_off"))
    return Comparison(timer_delays(p, ideal=True)["start_delay"], m["t_on"] - t_call,
                      note=f"the release: {m['t_off'] - t_call - 10.0 * p.tau:.4f} s after it (the diode)")


class _Ramp:
    """A one-node test network: the sensor rises 0.01 K/s with the fan off and falls 0.01 K/s with it on (its
    switching instants can be worked by hand; not a model of anything)."""

    n_nodes = 1
    index = {"sensor": 0}

    def rate(self, x, u, fan_on, air):
        import numpy as np

        from atticsim.network.kernel import BOOKS

        return np.concatenate([[-0.01 if fan_on else 0.01], np.zeros(len(BOOKS))])

    def mean_air(self, y):
        return y[0]


@case(group="solver", name="Minimum run and rest: switching instants against a schedule worked by hand",
      source="the rules' definitions applied by hand to a sensor ramping 0.01 K/s (a schedule of our own)",
      unit="s", tolerance=1e-3, digits=3,
      inputs="switch-on 40, switch-off 39.5 degC, minimum run 120 s, minimum rest 900 s, the sensor from 30 degC "
             "rising 0.01 K/s with the fan off and falling as fast with it on: on at 1000 s (40 degC); the call "
             "ends at 1050 s, the minimum run holds the fan to 1120 s; the call returns at 1240 s, the rest holds "
             "the fan off to 2020 s (47.8 degC); it falls to 39.5 degC at 2850 s (off); the rest holds it to "
             "3750 s (on), off at 4650 s. Compared: the fourth switch, 2850 s")
def rule_schedule():
    import numpy as np

    from atticsim.forcing.build import Forcing
    from atticsim.hybrid.controller import Controller
    from atticsim.hybrid.driver import simulate_hybrid
    from atticsim.hybrid.reference import ReferenceStepper
    from atticsim.network.kernel import BOOKS

    class Rules:
        start_delay, run_on, min_run, min_rest = 0.0, 0.0, 120.0, 900.0

    net = _Ramp()
    forcing = Forcing(times=None, step=3600.0, values=np.zeros((1, 3)), channels=["unused"], notes=[])
    out = np.arange(0.0, 5001.0, 100.0)
    y0 = np.concatenate([[30.0], np.zeros(len(BOOKS))])
    stepper = ReferenceStepper(net, forcing, out, np.empty((y0.size, out.size)), rtol=1e-10)
    run = simulate_hybrid(net, forcing, Controller("close-on-rise", 40.0, 39.5, Rules()), 0.0, 5000.0, y0, out,
                          stepper)
    expected = [(1000.0, "threshold"), (1120.0, "min_run"), (2020.0, "min_rest"), (2850.0, "threshold"),
                (3750.0, "min_rest"), (4650.0, "threshold")]
    got = [(e[0], e[3]) for e in run.events]
    if [c for _, c in got] != [c for _, c in expected]:
        raise RuntimeError(f"switch causes {[c for _, c in got]}, expected {[c for _, c in expected]}")
    worst = max(abs(a - b) for (a, _), (b, _) in zip(got, expected))
    return Comparison(got[3][0], expected[3][0], note=f"all six switches within {worst * 1000:.4f} ms of the schedule")


@case(group="solver", name="Motor spin-up: air the fan moves against the first-order solution",
      source="first-order lag s(t) = 1 - exp(-t / tau): over the first T the fan moves Q (T - tau (1 - exp(-T / "
             "tau))) (analytic)", unit="m3", tolerance=1e-6, kind="rel", digits=3,
      inputs="the demo bungalow (fictional, simple airflow, 0.5663 m3/s), its fan switched on by a log at 13:00 on "
             "July 2 of the invented weather, spin-up time constant 6 s; the volume over the first 120 s from the "
             "flows the simulation held")
def motor_spin_up():
    import pandas as pd

    from atticsim.hybrid.controller import LoggedFan
    from atticsim.pipeline import run_raw
    from atticsim.validation.houses import demo_house

    tau, span = 6.0, 120.0
    sc = demo_house({"fan": {"spin_up": tau}, "simulation": {"spinup_days": 0}})
    on = pd.Timestamp("2025-07-02 13:00", tz="-06:00")
    log = LoggedFan.at_instants([on - pd.Timedelta(days=1), on], [False, True])
    raw = run_raw(sc, start="2025-07-02", end="2025-07-02", include_no_fan=False, controller=log)
    t_on = (on - raw.forcing.times[0]).total_seconds()
    held = [(t, s.fan_flow) for t, s in raw.with_fan.air_updates]
    volume = 0.0
    for (a, q), (b, _) in zip(held, held[1:] + [(math.inf, 0.0)]):
        lo, hi = max(a, t_on), min(b, t_on + span)
        if hi > lo:
            volume += q * (hi - lo)
    full = sc.fan.rated_flow
    return Comparison(volume, full * (span - tau * (1.0 - math.exp(-span / tau))))
