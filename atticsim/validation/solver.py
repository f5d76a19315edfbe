"""Validation cases: the fast solver against the reference solver and analytic responses; energy closure."""

from __future__ import annotations

from functools import lru_cache

from atticsim.validation.registry import Comparison, case

_REFERENCE = ("scipy's LSODA (Hindmarsh 1983; Petzold 1983) with event location, run here at rtol 1e-8, "
              "the project's reference solver")
_NARROW = ("the demo house (fictional) with a narrow 0.5 K band (on at 38, off at 37.5 degC) on 1 July of "
           "its invented weather, one spin-up day: 30 switches in the day, compared minute by minute")


@lru_cache(maxsize=1)
def _narrow_runs():
    from atticsim.pipeline import run_raw
    from atticsim.scenario import demo_scenario

    base = ["simulation.spinup_days=1", "thermostat.on=38 degC", "thermostat.off=37.5 degC"]
    day = dict(start="2025-07-01", end="2025-07-01", include_no_fan=False)
    fast = run_raw(demo_scenario(base), **day)
    ref = run_raw(demo_scenario(base + ['simulation.solver="reference"', "simulation.rtol=1e-8"]), **day)
    return fast, ref


@case(group="solver", name="Fast solver: peak attic air temperature of the day", source=_REFERENCE, unit="degC",
      tolerance=0.05, digits=4, inputs=_NARROW + "; the volume-mean attic air")
def fast_attic_peak():
    fast, ref = _narrow_runs()
    net = ref.network
    n = net.n_nodes
    return Comparison(float(net.mean_air(fast.with_fan.y[:n]).max()), float(net.mean_air(ref.with_fan.y[:n]).max()))


@case(group="solver", name="Fast solver: largest temperature difference, any node, any minute", source=_REFERENCE,
      unit="K", tolerance=0.05, digits=4,
      inputs=_NARROW + "; atticsim's figure is the largest |fast - reference| over every node (roof, deck, air "
                       "layers, framing, ceiling, sensor) and output minute, the reference figure 0")
def fast_temperatures():
    import numpy as np

    fast, ref = _narrow_runs()
    n = ref.network.n_nodes
    a, b = fast.with_fan.y[:n], ref.with_fan.y[:n]
    if a.shape != b.shape:
        raise RuntimeError(f"the runs have different output grids: {a.shape} and {b.shape}")
    return Comparison(float(np.max(np.abs(a - b))), 0.0)


@case(group="solver", name="Fast solver: fan starts in the day", source=_REFERENCE, unit="starts",
      tolerance=0.0, digits=0, inputs=_NARROW)
def fast_starts():
    fast, ref = _narrow_runs()
    return Comparison(sum(e[1] for e in fast.with_fan.events), sum(e[1] for e in ref.with_fan.events))


@case(group="solver", name="Fast solver: largest difference of a switch instant", source=_REFERENCE,
      unit="s", tolerance=5.0, digits=2,
      inputs=_NARROW + "; atticsim's figure is the largest |fast - reference| over the switches, the reference "
                       "figure 0")
def fast_switch_times():
    import numpy as np

    fast, ref = _narrow_runs()
    a = np.array([e[0] for e in fast.with_fan.events])
    b = np.array([e[0] for e in ref.with_fan.events])
    if a.size != b.size or a.size == 0:
        raise RuntimeError(f"switch counts differ or are zero: {a.size} fast, {b.size} reference")
    return Comparison(float(np.max(np.abs(a - b))), 0.0)


@case(group="solver", name="Fast solver: heat through the ceiling in the day", source=_REFERENCE, unit="kWh",
      tolerance=1e-3, kind="rel", digits=4, inputs=_NARROW + "; the energy book integrated with the states")
def fast_ceiling_gain():
    from atticsim.network.model import BOOKS

    fast, ref = _narrow_runs()
    n = ref.network.n_nodes + BOOKS.index("ceiling_gain")
    return Comparison(float(fast.with_fan.y_end[n]) / 3.6e6, float(ref.with_fan.y_end[n]) / 3.6e6)


_TWO_DAYS = "the demo house (fictional) with its fan, 1-2 July of its invented weather, one spin-up day, fast solver"


@lru_cache(maxsize=1)
def _two_days():
    from atticsim.pipeline import simulate
    from atticsim.scenario import demo_scenario

    return simulate(demo_scenario(["simulation.spinup_days=1"]), start="2025-07-01", end="2025-07-02")


@case(group="solver", name="Energy closure of the attic over two days",
      source="conservation of energy: storage change + heat across the attic's boundary = 0 (the project's "
             "acceptance figure: under 0.5 % of the gross exchange)", unit="%", tolerance=0.5, digits=4,
      inputs=_TWO_DAYS + "; the error relative to the gross heat exchanged. The books are integrated with the "
                         "states, so the closure is exact to rounding unless a flow is missing from the books")
def energy_closure():
    return Comparison(float(_two_days().summary["energy_balance_error_pct"]), 0.0)


@case(group="solver", name="Heat through the ceiling: energy book against the sampled heat rate",
      source="trapezoid rule on the 1-minute ceiling heat rates the network gives at the outputs (an independent "
             "integration of the same flow)", unit="kWh", tolerance=0.01, kind="rel", digits=3,
      inputs=_TWO_DAYS + "; 1 % allows for the sampling")
def book_against_rates():
    import numpy as np

    r = _two_days()
    ts = r.timeseries
    t = (ts.index - ts.index[0]).total_seconds().to_numpy()
    return Comparison(float(r.summary["ceiling_heat_gain_kwh"]),
                      float(np.trapezoid(ts["ceiling_heat_gain_w"].to_numpy(), t)) / 3.6e6)


@case(group="solver", name="Sensor step response (fast solver) against the first-order form",
      source="first-order lag T_s(t) = T_a + (T_s0 - T_a) exp(-t/tau) (analytic; e.g. Ogata, Modern Control "
             "Engineering, first-order systems)", unit="degC", tolerance=2e-3, digits=4,
      inputs="sensor with tau 25 s starting at 20 degC in attic air held at 40 degC (the air node's heat capacity raised a "
             "millionfold, no ventilation, fan disabled; hand-made constant weather at 30 degC); the sensor one time constant "
             "after the step: 40 - 20/e = 32.6424 degC")
def sensor_step():
    import numpy as np

    from atticsim.hybrid.solve import run_fast

    net, forcing, y0, t_out, expected = sensor_step_setup()
    run = run_fast(net, forcing, 0.0, 200.0, y0, t_out)
    worst = float(np.max(np.abs(run.y[net.index["sensor"]] - expected)))
    k = int(np.searchsorted(t_out, 25.0))
    return Comparison(float(run.y[net.index["sensor"], k]), float(expected[k]),
                      note="largest difference over the 200 s: "
                           + ("under 0.0001 K" if worst < 1e-4 else f"{worst:.4f} K"))


def sensor_step_setup():
    """The sensor's step (the case above; its test runs it with the reference solver): (network, forcing, y0,
    output instants over 200 s, the analytic first-order response T_a + (T_s0 - T_a) exp(-t / tau) there)."""
    import numpy as np

    from atticsim.assembly import build_network
    from atticsim.forcing.build import build_forcing
    from atticsim.network.model import BOOKS
    from atticsim.validation.houses import constant_weather, demo_house

    sc = demo_house({"attic": {"ridge_height": 2.5, "air_layers": 1},
                     "vents": {"passive_ach": 0.0}, "fan": {"enabled": False},
                     "sensor": {"time_constant": "25 s"}})
    net = build_network(sc)
    net.c_air *= 1e6  # the air holds its temperature: a clean step for the sensor
    frame, meta = constant_weather(30.0, hours=4)
    forcing = build_forcing(frame, meta, sc)
    y0 = np.zeros(net.n_nodes + len(BOOKS))
    y0[:net.n_nodes] = 30.0
    y0[net.index["air"]] = 40.0
    y0[net.index["sensor"]] = 20.0
    net.air = net.airflow.solve(40.0, 30.0, 3.0, False)
    t_out = np.arange(0.0, 201.0, 5.0)
    return net, forcing, y0, t_out, 40.0 - 20.0 * np.exp(-t_out / 25.0)


class DrivenRC:
    """One RC node driven through a conductance by forcing channel 0 (a minimal network for the hybrid
    driver: ``rate`` at one state); the periodic-response case and its test use it."""

    n_nodes = 1
    index = {"sensor": 0}
    airflow = None

    def __init__(self, tau):
        self.tau = tau

    def rate(self, x, u, fan_on, air):
        import numpy as np

        from atticsim.network.model import BOOKS

        return np.concatenate([[(u[0] - x[0]) / self.tau], np.zeros(len(BOOKS))])


@case(group="solver", name="Reference solver: periodic response of a driven RC node (amplitude)",
      source="frequency response of a first-order lag: amplitude A / sqrt(1 + (w tau)^2), lag atan(w tau) "
             "(analytic; Ogata, Modern Control Engineering, frequency response)", unit="K", tolerance=1e-3,
      kind="rel", digits=4,
      inputs="tau 600 s driven by 5 sin(2 pi t / 3600 s): amplitude 5 / sqrt(1 + (2 pi/6)^2) = 3.4531 K, "
             "fitted over periods 7-8 of an 8-period run (LSODA, rtol 1e-9)")
def driven_rc():
    import numpy as np

    from atticsim.forcing.build import Forcing
    from atticsim.hybrid.solve import run_reference
    from atticsim.network.model import BOOKS

    tau, period, amp = 600.0, 3600.0, 5.0
    w = 2.0 * np.pi / period
    step = 5.0
    t_grid = np.arange(0.0, 8 * period + step, step)
    forcing = Forcing(times=None, step=step, values=(amp * np.sin(w * t_grid))[None, :], channels=["in"], notes=[])
    t_out = np.arange(6 * period, 8 * period + 1.0, 10.0)
    run = run_reference(DrivenRC(tau), forcing, 0.0, 8 * period, np.zeros(1 + len(BOOKS)), t_out, rtol=1e-9)
    basis = np.vstack([np.sin(w * t_out), np.cos(w * t_out)]).T
    a, b = np.linalg.lstsq(basis, run.y[0], rcond=None)[0]
    lag = -np.arctan2(b, a)
    return Comparison(float(np.hypot(a, b)), amp / np.sqrt(1 + (w * tau) ** 2),
                      note=f"phase lag {np.degrees(lag):.2f} deg against {np.degrees(np.arctan(w * tau)):.2f} deg")
