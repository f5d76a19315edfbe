"""The sensor's still-air time constant from the bench: the fan's run-on after the heat is taken away.

A technician warms the bare sensor (a finger, a warm air stream) until the fan runs, takes the heat away and
times how long the fan runs on. The sensor cools as a first-order body towards the room's temperature plus its
own self-heating, T(t) = T_final + (T_0 - T_final) exp(-t / tau), and the fan stops when T reaches the switch-off
temperature. So

    tau = t_run_on / ln((T_0 - T_final) / (T_off - T_final)),   T_final = T_room + self-heating rise,

the first-order step response solved for its time constant (the same relation as
:func:`atticsim.circuit.timer.crossing_time`, which is used here). A time rule that keeps the fan running on
after the thermostat releases (``thermostat.run_on``, a timer stage's delay) is taken off the timing first.
The same holds for a switch that closes on fall (the sensor cooled, then warming towards the room).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from atticsim.calibration.errors import CalibrationError


#: The bench test's own caution: the sensor of a dropper-fed thermostat is at mains potential.
BENCH_CAUTION = ("Bench test: a thermostat fed by a capacitive dropper has its sensor, leads and board at mains "
                 "potential. Never touch them while it is connected to the mains: for the test feed the circuit from an "
                 "isolated low-voltage bench supply in place of the dropper, or warm the sensor only with a warm air "
                 "stream from a safe distance, and have the circuit checked by a qualified person.")


@dataclass
class BenchResult:
    """The inferred time constant and what it rests on (temperatures in degC, times in s)."""

    tau_s: float
    band_s: tuple
    run_on_s: list
    timing_s: float
    start_c: float
    ambient_c: float
    off_c: float
    on_c: float
    rise_k: float
    final_c: float
    rule_run_on_s: float
    log_ratio: float
    per_kelvin_s: float
    action: str
    body_tau_s: float | None = None
    findings: list = field(default_factory=list)

    def as_dict(self) -> dict:
        """JSON-friendly figures (the keys carry their units)."""
        return {"bench_tau_s": self.tau_s, "bench_tau_band_s": list(self.band_s), "run_on_s": list(self.run_on_s),
                "timing_uncertainty_s": self.timing_s, "heated_to_c": self.start_c, "ambient_c": self.ambient_c,
                "switch_off_c": self.off_c, "switch_on_c": self.on_c, "self_heating_k": self.rise_k,
                "settles_at_c": self.final_c, "rule_run_on_s": self.rule_run_on_s, "log_ratio": self.log_ratio,
                "tau_per_kelvin_of_heated_to_s": self.per_kelvin_s, "action": self.action,
                "body_still_air_tau_s": self.body_tau_s, "findings": list(self.findings),
                "cautions": [BENCH_CAUTION]}


def time_constant_from_run_on(run_on_s: float, start_c: float, final_c: float, off_c: float) -> float:
    """tau [s] of a first-order body that takes ``run_on_s`` to go from ``start_c`` to ``off_c`` on its way to
    ``final_c``: run_on / ln((final - start) / (final - off)) (the inverse of
    :func:`atticsim.circuit.timer.crossing_time`). NaN where the switch-off level is not between the two."""
    from atticsim.circuit.timer import crossing_time

    unit = crossing_time(1.0, start_c, final_c, off_c)
    return run_on_s / unit if 0.0 < unit < math.inf else float("nan")


def bench_time_constant(run_on_s, start_c: float, ambient_c: float, off_c: float, on_c: float | None = None,
                        rise_k: float = 0.0, timing_s: float = 1.0, rule_run_on_s: float = 0.0,
                        action: str = "close-on-rise") -> BenchResult:
    """Infer the sensor's still-air time constant from timed run-ons.

    Parameters
    ----------
    run_on_s : float or sequence of float
        Timed run-ons [s] (several repeats of the same test: their mean is used, their spread widens the band).
    start_c : float
        The sensor's temperature when the heat was taken away [degC].
    ambient_c : float
        The room's air [degC].
    off_c : float
        The sensor temperature at which the thermostat releases [degC].
    on_c : float, optional
        The switch-on temperature [degC] (to check that the fan can have started).
    rise_k : float
        The sensor's self-heating in still air near ``off_c`` [K] (it settles this far above the room).
    timing_s : float
        Uncertainty of each timing [s] (a hand stopwatch).
    rule_run_on_s : float
        Run-on the thermostat adds by itself after it releases (a time rule, a timer stage) [s].
    action : {"close-on-rise", "close-on-fall"}

    Returns
    -------
    BenchResult

    Raises
    ------
    CalibrationError
        The temperatures make a run-on impossible (the sensor would never reach its switch-off temperature in
        that room, or started beyond it), or the timing is not longer than the thermostat's own run-on.
    """
    times = [float(t) for t in (run_on_s if isinstance(run_on_s, (list, tuple)) else [run_on_s])]
    if not times or any(not (t > 0 and math.isfinite(t)) for t in times):
        raise CalibrationError("--run-on", ",".join(f"{t:g}" for t in times), "each timing must be a positive duration")
    final = ambient_c + rise_k
    rises = action == "close-on-rise"
    beyond = (lambda a, b: a > b) if rises else (lambda a, b: a < b)  # noqa: E731
    if not beyond(off_c, final):
        raise CalibrationError("--ambient", f"{ambient_c:g} degC", f"the sensor settles at {final:.2f} degC (the room "
                               f"plus {rise_k:.2f} K of self-heating), at or {'above' if rises else 'below'} its "
                               f"switch-off temperature {off_c:.2f} degC: the fan would never stop; do the test in a "
                               f"{'cooler' if rises else 'warmer'} room")
    if not beyond(start_c, off_c):
        raise CalibrationError("--heated-to", f"{start_c:g} degC", f"not {'above' if rises else 'below'} the "
                               f"switch-off temperature {off_c:.2f} degC: the fan would stop at once")
    mean = sum(times) / len(times)
    if mean - rule_run_on_s <= 0:
        raise CalibrationError("--run-on", f"{mean:g} s", f"no longer than the thermostat's own run-on "
                               f"({rule_run_on_s:g} s): the sensor's cooling is not in the timing")
    tau = time_constant_from_run_on(mean - rule_run_on_s, start_c, final, off_c)
    lo = time_constant_from_run_on(max(min(times) - timing_s - rule_run_on_s, 0.0), start_c, final, off_c)
    hi = time_constant_from_run_on(max(times) + timing_s - rule_run_on_s, start_c, final, off_c)
    hotter = start_c + (1.0 if rises else -1.0)
    per_k = tau - time_constant_from_run_on(mean - rule_run_on_s, hotter, final, off_c)
    ratio = math.log((start_c - final) / (off_c - final))
    findings = []
    if on_c is not None and not (start_c >= on_c if rises else start_c <= on_c):
        findings.append(f"heated to {start_c:.2f} degC, the sensor did not reach its switch-on temperature "
                        f"{on_c:.2f} degC: did the fan start? Heat it further.")
    if ratio < 0.3:
        findings.append(f"the sensor started only {abs(start_c - off_c):.2f} K beyond its switch-off temperature: "
                        f"the timing then hangs on small temperature errors; heat it further for a longer run-on.")
    return BenchResult(tau, (lo, hi), times, timing_s, start_c, ambient_c, off_c, on_c if on_c is not None else
                       float("nan"), rise_k, final, rule_run_on_s, ratio, per_k, action, findings=findings)


def scenario_bench(scenario, run_on_s, start_c: float, ambient_c: float, timing_s: float = 1.0) -> BenchResult:
    """:func:`bench_time_constant` with the switching temperatures, self-heating and time rules of a scenario.

    The switch-off temperature is the thermistor's own (a circuit's exact threshold, or the set point); the
    self-heating is its still-air rise near that point: the circuit's divider power (output sinking: the fan
    runs) or ``sensor.self_heating`` over the still-air dissipation constant (the body's own conductance at rest
    with ``sensor.body``). The thermostat's run-on rule (a key or a timer stage) comes off the timing.
    """
    from atticsim.scenario.thermostat import time_rules

    th, sensor = scenario.thermostat, scenario.sensor
    if th.kind == "circuit":
        from atticsim.circuit import thermistor_power

        t = th.thresholds()
        on_c, off_c = t.on_c, t.off_c
        power = float(thermistor_power(th.circuit_params(), off_c, True))
    else:
        on_c, off_c, power = th.on, th.off, sensor.self_heating
    body_tau = None
    if sensor.body is not None:
        from atticsim.sensor.body import preset

        body = preset(sensor.body)
        rise = float(body.self_heating_rise(power, 0.0, ambient_c)) if power > 0 else 0.0
        body_tau = float(body.time_constant(0.0, ambient_c, 0.5 * (start_c + off_c)))
    else:
        rise = power / sensor.dissipation_constant
    rules = time_rules(scenario)
    result = bench_time_constant(run_on_s, start_c, ambient_c, off_c, on_c, rise, timing_s, rules.run_on, th.action)
    if rules.min_run > 0:
        result.findings.append(f"the thermostat's minimum run ({rules.min_run:g} s) may have held the fan: keep the "
                               f"sensor heated longer than that before taking the heat away.")
    if rules.start_delay > 0 or rules.min_rest > 0:
        result.findings.append("the start delay and minimum rest do not touch the run-on, but wait them out before "
                               "the next repeat.")
    result.body_tau_s = body_tau
    return result


def bench_text(r: BenchResult, units: str = "si") -> str:
    """The inference on the terminal, the solution shown."""
    ip = units == "ip"

    def t(c):
        return f"{c * 9 / 5 + 32:.1f} °F" if ip else f"{c:.2f} °C"

    def dt(k):
        return f"{k * 9 / 5:.2f} °F" if ip else f"{k:.2f} K"

    times = ", ".join(f"{x:g}" for x in r.run_on_s)
    net = f" - {r.rule_run_on_s:g} s of the thermostat's own run-on" if r.rule_run_on_s else ""
    mean = sum(r.run_on_s) / len(r.run_on_s)
    lines = [
        "sensor time constant from the bench (still air, first-order cooling)",
        f"  timed run-on {times} s (mean {mean:.1f} s{net}); heat taken away at {t(r.start_c)}; room {t(r.ambient_c)}",
        f"  the sensor settles at T_final = room + self-heating = {t(r.ambient_c)} + {dt(r.rise_k)} = {t(r.final_c)}",
        f"  the fan stops when it reaches T_off = {t(r.off_c)}",
        f"  tau = t / ln((T_0 - T_final) / (T_off - T_final)) = {mean - r.rule_run_on_s:.1f} s / "
        f"ln({dt(r.start_c - r.final_c)} / {dt(r.off_c - r.final_c)}) = {mean - r.rule_run_on_s:.1f} s / "
        f"{r.log_ratio:.3f} = {r.tau_s:.1f} s",
        f"  with +-{r.timing_s:g} s on each timing: {r.band_s[0]:.1f} .. {r.band_s[1]:.1f} s; each kelvin the heated-to "
        f"temperature is off moves tau by {abs(r.per_kelvin_s):.1f} s",
    ]
    if r.body_tau_s is not None:
        lines.append(f"  the scenario's sensor.body predicts {r.body_tau_s:.1f} s in still air (its correlations)")
    from atticsim.report.cautions import caution_text

    lines += [f"  - {f}" for f in r.findings]
    lines += [f"! CAUTION: {BENCH_CAUTION}", caution_text()]
    return "\n".join(lines)


__all__ = ["BenchResult", "bench_text", "bench_time_constant", "scenario_bench", "time_constant_from_run_on"]
