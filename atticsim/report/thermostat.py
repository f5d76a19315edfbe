"""The thermostat circuit explained: switching points, self-heating, tolerance bands, mains checks; and
the design the other way round. Returns plain dicts (for JSON) and text (for the terminal)."""

from __future__ import annotations

import math

from atticsim.report.cautions import MAINS, caution_text


def still_air_rise(scenario):
    """The sensor's steady self-heating in still air as rise(power [W], air [degC]) -> K, and its description.

    With ``sensor.body`` the body's own conductance in still air (its convection and radiation correlations,
    :meth:`atticsim.sensor.body.SensorBody.self_heating_rise` at 0 m/s); else P / ``sensor.dissipation_constant``.
    """
    sensor = scenario.sensor
    if sensor.body is not None:
        from atticsim.sensor.body import preset

        body = preset(sensor.body)
        return (lambda power, air_c: float(body.self_heating_rise(power, 0.0, air_c)),
                f"{sensor.body} in still air")
    delta = sensor.dissipation_constant
    return (lambda power, air_c: power / delta), f"dissipation constant {delta * 1e3:.2f} mW/K, still air"


def thermostat_report(scenario) -> dict:
    """Everything the ``thermostat`` command prints about a circuit thermostat.

    Keys (temperatures in degC, K for widths): ``on_c``, ``off_c``, ``hysteresis_k`` (thermistor
    temperatures at which the fan switches), ``on_air_c``, ``off_air_c`` (air temperatures at those
    switches with the thermistor's self-heating, using ``sensor.dissipation_constant``), ``on_band_c`` and
    ``off_band_c`` (Monte-Carlo 5-95 % bands), ``on_worst_c``/``off_worst_c`` (worst-case corners), input
    voltages, LED current, thermistor power at each threshold, findings, the mains checks when
    ``[thermostat.mains]`` is given, and the cautions.
    """
    from atticsim.circuit import air_temperatures, check_mains, supply_current, tolerance_analysis

    th = scenario.thermostat
    if th.kind != "circuit":
        raise ValueError(f"thermostat: kind is {th.kind!r}; this command explains a circuit thermostat "
                         f"(kind = \"circuit\" with a [thermostat.circuit] table)")
    params = th.circuit_params()
    t = th.thresholds()
    delta = scenario.sensor.dissipation_constant
    if scenario.sensor.body is None:
        on_air, off_air = air_temperatures(t, params, delta)
    else:
        from atticsim.circuit.design import air_switching

        on_air, off_air = air_switching(t, still_air_rise(scenario)[0])
    tol = tolerance_analysis(params, th.tolerance_spec(), samples=th.tolerances.samples, seed=th.tolerances.seed)
    out = {
        "action": th.action,
        "feedback_on": params.feedback_on,
        "thermistor_position": params.position,
        "on_c": t.on_c, "off_c": t.off_c, "hysteresis_k": t.hysteresis_k,
        "on_air_c": float(on_air), "off_air_c": float(off_air),
        "dissipation_constant_w_per_k": delta, "self_heating_basis": still_air_rise(scenario)[1],
        "on_band_c": list(tol.on_band_c), "off_band_c": list(tol.off_band_c),
        "on_worst_c": list(tol.on_worst_c), "off_worst_c": list(tol.off_worst_c),
        "hysteresis_band_k": list(tol.hysteresis_band_k), "hysteresis_worst_k": list(tol.hysteresis_worst_k),
        "tolerance_samples": tol.samples, "tolerance_seed": tol.seed, "never_switch": tol.never_switch,
        "thermistor_r_on_ohm": t.r_on, "thermistor_r_off_ohm": t.r_off,
        "v_plus_on_v": t.v_plus_on, "v_minus_on_v": t.v_minus_on,
        "v_plus_off_v": t.v_plus_off, "v_minus_off_v": t.v_minus_off,
        "v_out_high_v": t.v_out_high,
        "led_current_on_a": t.led_current_on,
        "sense_power_on_w": t.sense_power_on_w, "sense_power_off_w": t.sense_power_off_w,
        "findings": list(t.findings),
    }
    if th.mains is not None:
        load = max(float(supply_current(params, t.on_c, True)), float(supply_current(params, t.off_c, False)))
        m = check_mains(th.mains.mains_params(), load)
        out["mains"] = {k: getattr(m, k) for k in (
            "dropper_current", "dc_available_low", "dc_available_high", "load_current", "supply_margin",
            "zener_power", "discharge_voltage_1s", "bleed_resistor_max", "triac_loss", "heatsink_rth_needed",
            "starting_current", "gate_resistor_min", "fuse_suggested")}
        out["mains"]["findings"] = list(m.findings)
    out.update(timer_report(th))
    out["cautions"] = [MAINS]
    return out


def thermostat_text(report: dict, units: str = "si") -> str:
    """Terminal text for :func:`thermostat_report`."""
    from atticsim.units import c_to_f, k_to_delta_f

    ip = units == "ip"

    def t(c):
        return f"{c_to_f(c):.1f} °F" if ip else f"{c:.2f} °C"

    def dt(k):
        return f"{k_to_delta_f(k):.1f} °F" if ip else f"{k:.2f} K"

    r = report
    lines = [
        f"thermostat circuit (switch closes on {r['action'].removeprefix('close-on-')}, feedback on the {r['feedback_on']} divider, thermistor in the "
        f"{r['thermistor_position']} position)",
        f"  thermistor switches the fan ON at {t(r['on_c'])} and OFF at {t(r['off_c'])} "
        f"(hysteresis {dt(r['hysteresis_k'])})",
        f"  with self-heating ({r.get('self_heating_basis', '')}) the AIR is at {t(r['on_air_c'])} "
        f"when it switches on and {t(r['off_air_c'])} when it switches off",
        f"  part tolerances: ON within {t(r['on_band_c'][0])} .. {t(r['on_band_c'][1])} (5-95 %), worst case "
        f"{t(r['on_worst_c'][0])} .. {t(r['on_worst_c'][1])}",
        f"                   OFF within {t(r['off_band_c'][0])} .. {t(r['off_band_c'][1])} (5-95 %), worst case "
        f"{t(r['off_worst_c'][0])} .. {t(r['off_worst_c'][1])}",
        f"  comparator inputs at switch-on: + {r['v_plus_on_v']:.3f} V, - {r['v_minus_on_v']:.3f} V; "
        f"at switch-off: + {r['v_plus_off_v']:.3f} V, - {r['v_minus_off_v']:.3f} V",
        f"  LED current when on {r['led_current_on_a'] * 1e3:.2f} mA; thermistor dissipates "
        f"{r['sense_power_on_w'] * 1e3:.2f} mW at switch-on, {r['sense_power_off_w'] * 1e3:.2f} mW at switch-off",
    ]
    lines += [f"  - {f}" for f in r["findings"]]
    if "mains" in r:
        m = r["mains"]
        lines.append(f"  mains side: dropper {m['dropper_current'] * 1e3:.1f} mA ac; {m['dc_available_low'] * 1e3:.1f} "
                     f"mA dc at low line for a {m['load_current'] * 1e3:.1f} mA load")
        lines += [f"  - {f}" for f in m["findings"]]
    lines += timer_lines(r)
    lines.append(caution_text())
    return "\n".join(lines)


def _number(x):
    """A float for JSON: None for NaN or inf (never reached)."""
    return float(x) if x is not None and math.isfinite(x) else None


def timer_report(thermostat) -> dict:
    """The time rules a thermostat applies and, with ``[thermostat.timer]``, its timer stage explained.

    Keys: ``time_rules_s`` (every rule [s], 0 where none), ``time_rule_sources`` (rule -> the key that sets
    it); with a timer ``timer_wiring``, ``timer_on_call``, ``timer_resistance_ohm``, ``timer_capacitance_f``,
    ``timer_tau_s`` (R C), ``timer_threshold`` (fraction), ``timer_threshold_v``, ``timer_supply_v``,
    ``timer_delay_s`` (rule -> delay with the node's input and leakage currents: what the simulation
    applies), ``timer_ideal_delay_s`` (the ideal stage's closed form), ``timer_band_s`` (Monte-Carlo 5-95 %),
    ``timer_worst_s`` (worst-case corners), ``timer_tolerances``, ``timer_never_switch`` and
    ``timer_findings``.
    """
    from dataclasses import asdict

    rules = thermostat.time_rules()
    out = {"time_rules_s": asdict(rules), "time_rule_sources": thermostat.time_rule_sources()}
    params = getattr(thermostat, "timer_params", lambda: None)()
    if params is None:
        return out
    from atticsim.circuit.timer import timer_analysis

    tol = thermostat.timer.tolerances()
    res = timer_analysis(params, tol, samples=thermostat.tolerances.samples, seed=thermostat.tolerances.seed)
    out.update({
        "timer_wiring": params.wiring, "timer_on_call": params.on_call,
        "timer_resistance_ohm": params.resistance, "timer_capacitance_f": params.capacitance,
        "timer_tau_s": params.tau, "timer_threshold": params.threshold, "timer_threshold_v": params.threshold_v,
        "timer_supply_v": params.supply, "timer_capacitor": params.capacitor,
        "timer_input_current_a": params.input_current, "timer_leakage_current_a": params.leakage_current,
        "timer_delay_s": {k: _number(v) for k, v in res.delays.items()},
        "timer_ideal_delay_s": {k: _number(v) for k, v in res.ideal.items()},
        "timer_band_s": {k: [_number(x) for x in v] for k, v in res.band.items()},
        "timer_worst_s": {k: [_number(x) for x in v] for k, v in res.worst.items()},
        "timer_tolerances": {"resistor": tol.resistor, "capacitor": tol.capacitor, "threshold": tol.threshold},
        "timer_never_switch": res.never_switch,
        "timer_findings": list(res.findings),
    })
    return out


_WIRING_WORDS = {
    "delay-start": "an input delay; the fan starts once the call has stood this long",
    "delay-stop": "an input delay; the fan runs on this long after the call ends",
    "delay-both": "an input delay both ways, without a diode",
    "minimum-run": "a monostable after the comparator; each start runs the fan at least this long",
}


def _seconds(s, minutes=True):
    if s is None:
        return "never"
    if s < 120.0 or not minutes:
        return f"{s:.1f} s" if s < 120.0 else f"{s:.0f} s"
    return f"{s:.0f} s = {s / 60.0:.1f} min"


def _parts(r):
    ohm, cap = r["timer_resistance_ohm"], r["timer_capacitance_f"]
    ohm_text = f"{ohm / 1e6:.3g} MΩ" if ohm >= 1e6 else f"{ohm / 1e3:.3g} kΩ" if ohm >= 1e3 else f"{ohm:.3g} Ω"
    cap_text = f"{cap * 1e6:.3g} µF" if cap >= 1e-7 else f"{cap * 1e9:.3g} nF"
    return f"{ohm_text}, {cap_text} {r['timer_capacitor']}"


def timer_lines(report: dict) -> list:
    """Terminal lines for :func:`timer_report`'s keys in ``report``."""
    from atticsim.circuit.timer import RULE_WORDS

    lines = []
    r = report
    if "timer_wiring" in r:
        charges = "charges" if r["timer_on_call"] == "charges" else "discharges"
        call = "" if r["timer_wiring"] == "minimum-run" else f"; the capacitor {charges} while the thermostat calls"
        lines += [f"  timer stage \"{r['timer_wiring']}\": {_WIRING_WORDS[r['timer_wiring']]}",
                  f"    {_parts(r)}: R C = {_seconds(r['timer_tau_s'])}; switches at {r['timer_threshold']:.3f} x "
                  f"{r['timer_supply_v']:g} V = {r['timer_threshold_v']:.2f} V{call}"]
        for k, d in r["timer_delay_s"].items():
            band, worst = r["timer_band_s"][k], r["timer_worst_s"][k]
            lines.append(f"    {RULE_WORDS[k]} {_seconds(d)} (ideal R C stage {_seconds(r['timer_ideal_delay_s'][k], False)}); "
                         f"part tolerances {_seconds(band[0], False)} .. {_seconds(band[1], False)} (5-95 %), "
                         f"worst case {_seconds(worst[0], False)} .. {_seconds(worst[1], False)}")
        lines += [f"  - {f}" for f in r["timer_findings"]]
    sources = r["time_rule_sources"]
    if sources:
        rules = "; ".join(f"{RULE_WORDS[k]} {_seconds(r['time_rules_s'][k])} ({v})" for k, v in sources.items())
        lines.append(f"  time rules for the simulation: {rules}")
    else:
        lines.append("  time rules: none (the fan follows the thermostat's call)")
    return lines


def design_report(scenario, on_c: float, off_c: float | None = None, hysteresis_k: float | None = None,
                  series: str = "E24", basis: str = "air") -> dict:
    """Choose the trimmer setting and feedback resistor for wanted switching temperatures.

    The user's other parts (rail, dividers, thermistor, LED) are kept; see
    :func:`atticsim.circuit.design_circuit` for the rounding rules. With ``basis="air"`` (the default) the
    wanted temperatures are those of the air around the sensor, its self-heating in still air included
    (:func:`still_air_rise`); with ``basis="thermistor"`` those of the thermistor itself. Either way the
    report gives both.
    """
    from atticsim.circuit import design_circuit

    th = scenario.thermostat
    if th.kind != "circuit":
        raise ValueError("thermostat: --design needs a circuit thermostat (kind = \"circuit\")")
    rise, rise_text = still_air_rise(scenario)
    d = design_circuit(th.circuit_params(), on_c, off_c=off_c, hysteresis_k=hysteresis_k, series=series,
                       self_heating=rise, basis=basis)
    return {
        "basis": d.basis, "self_heating_basis": rise_text,
        "wanted_on_c": d.wanted_on_c, "wanted_off_c": d.wanted_off_c, "series": d.series,
        "feedback_exact_ohm": d.feedback_exact, "sense_trim_exact_ohm": d.sense_trim_exact,
        "feedback_ohm": d.feedback, "sense_trim_ohm": d.sense_trim,
        "on_c": d.thresholds.on_c, "off_c": d.thresholds.off_c, "hysteresis_k": d.thresholds.hysteresis_k,
        "on_air_c": d.air_on_c, "off_air_c": d.air_off_c,
        "sense_power_on_w": d.thresholds.sense_power_on_w, "sense_power_off_w": d.thresholds.sense_power_off_w,
        "sense_trim_fixed_ohm": d.sense_trim_fixed,
        "fixed_on_c": d.thresholds_fixed.on_c if d.thresholds_fixed else None,
        "fixed_off_c": d.thresholds_fixed.off_c if d.thresholds_fixed else None,
        "fixed_on_air_c": d.fixed_air_on_c, "fixed_off_air_c": d.fixed_air_off_c,
        "findings": list(d.findings), "cautions": [MAINS],
    }


def design_text(r: dict, units: str = "si") -> str:
    """Terminal text for :func:`design_report` (temperatures in degC, or degF with ``units="ip"``)."""
    from atticsim.units import c_to_f, k_to_delta_f

    ip = units == "ip"

    def t(c):
        return f"{c_to_f(c):.1f} °F" if ip else f"{c:.2f} °C"

    def dt(k):
        return f"{k_to_delta_f(k):.1f} °F" if ip else f"{k:.2f} K"

    what = "AIR around the sensor" if r["basis"] == "air" else "THERMISTOR itself"
    lines = [
        f"design for the {what}: ON at {t(r['wanted_on_c'])}, OFF at {t(r['wanted_off_c'])} ({r['series']} values; "
        f"self-heating: {r['self_heating_basis']}):",
        f"  feedback resistor: {r['feedback_ohm']:,.0f} ohm (exact {r['feedback_exact_ohm']:,.0f} ohm, rounded down: "
        f"hysteresis at least as wide as asked)",
        f"  trimmer setting: {r['sense_trim_ohm']:,.0f} ohm -> the AIR switches ON at {t(r['on_air_c'])}, OFF at "
        f"{t(r['off_air_c'])} (hysteresis {dt(abs(r['on_air_c'] - r['off_air_c']))})",
        f"    the thermistor itself then switches ON at {t(r['on_c'])}, OFF at {t(r['off_c'])}: its own "
        f"{r['sense_power_on_w'] * 1e3:.2f} mW warms it above the air",
    ]
    if r["sense_trim_fixed_ohm"] is not None:
        lines.append(f"  or a fixed {r['sense_trim_fixed_ohm']:,.0f} ohm in place of the trimmer -> AIR ON "
                     f"{t(r['fixed_on_air_c'])}, OFF {t(r['fixed_off_air_c'])} (thermistor {t(r['fixed_on_c'])} / "
                     f"{t(r['fixed_off_c'])})")
    lines.append(f"  the feedback resistor is rounded down to the series, so the hysteresis is at least as wide as "
                 f"asked ({dt(abs(r['wanted_on_c'] - r['wanted_off_c']))})")
    # the design's own notes are said above in the chosen units; the circuit's checks follow
    lines += [f"  - {f}" for f in r["findings"] if not f.startswith(("feedback ", "designed for the "))]
    lines.append(caution_text())
    return "\n".join(lines)
