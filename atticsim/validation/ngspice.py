"""ngspice as an outside reference for the thermostat circuit's switching temperatures and its timer stage.

A netlist of the same circuit is written from :class:`~atticsim.circuit.comparator.CircuitParams`
(behavioural open-collector comparator, Shockley diode LED, the thermistor as a behavioural resistor of a
swept temperature); the temperature is swept slowly up and down in a transient run and ngspice's ``.meas``
reports the temperature at the output's crossings. ngspice solves the full nonlinear network by Newton
iteration; atticsim solves the node equations in closed form. ngspice is a separate program (Debian package
``ngspice``); without it the cases that need it are reported as not run.
"""

from __future__ import annotations

import shutil
import subprocess
import tempfile
from pathlib import Path

#: Sink resistance of the behavioural output stage [ohm]: at 11 mA it adds 0.1 mV to output_low.
R_SINK = 0.01


def ngspice_path():
    """The ngspice executable on PATH, or None."""
    return shutil.which("ngspice")


def _thermistor_expr(th):
    """ngspice expression of the thermistor resistance [ohm] as a function of V(tc) in degC."""
    tk = "(V(tc)+273.15)"
    if th.kind == "beta":
        r25, beta = th.parameters
        # Beta equation (thermistor makers' application notes)
        return f"{r25!r}*exp({beta!r}*(1/{tk} - 1/298.15))"
    a, b, c = th.parameters
    # Steinhart-Hart 1/T = A + B x + C x^3 solved for x = ln R with Cardano's formula
    q = f"(({a!r} - 1/{tk})/{c!r})"
    # (pwr() keeps the sign of its base, so squares are written out)
    y = f"sqrt({(b / c / 3) ** 3!r} + ({q}/2)*({q}/2))"
    return f"exp(pwr({y} - {q}/2, 1/3) - pwr({y} + {q}/2, 1/3))"


def netlist(p, t_low, t_high):
    """Netlist of the circuit with the thermistor temperature swept t_low -> t_high -> t_low [degC] in 2 s."""
    from atticsim.circuit.comparator import LED_TEMP_C, led_saturation_current

    i_s = led_saturation_current(p.led_forward, p.led_current, p.led_ideality)
    upper = p.position == "upper"
    inp, inm = ("sen", "ref") if p.feedback_on == "sense" else ("ref", "sen")
    lines = [
        "* atticsim thermostat circuit",
        f".options TEMP={LED_TEMP_C} TNOM={LED_TEMP_C}",
        f"VCC vcc 0 {p.rail!r}",
        f"VT tc 0 PWL(0 {t_low} 1 {t_high} 2 {t_low})",
        f"BRN rn 0 V = {_thermistor_expr(p.thermistor)}",
        "BNTC vcc sen I = V(vcc,sen)/V(rn)" if upper else "BNTC sen 0 I = V(sen)/V(rn)",
        f"RS sen 0 {p.sense_resistance!r}" if upper else f"RS vcc sen {p.sense_resistance!r}",
        f"R1 vcc ref {p.reference_upper!r}",
        f"R2 ref 0 {p.reference_lower!r}",
        f"RH out {inp} {p.feedback!r}",
        f"RLED vcc a {p.led_resistor!r}",
        "DLED a out DLED",
        f".model DLED D(IS={i_s!r} N={p.led_ideality!r})",
        # open-collector stage: sinks to output_low when V(+) - V(-) < input_offset
        f"BCMP out 0 I = (V(out)-{p.output_low!r})/{R_SINK} * 0.5*(1 + tanh(1e6*(V({inm}) + "
        f"{p.input_offset!r} - V({inp}))))",
        # small node capacitances: without them Newton follows the unstable branch and the thresholds merge
        "COUT out 0 100p",
        f"CINP {inp} 0 10p",
        ".tran 10u 2 0 10u",
        f".meas tran T_ON FIND V(tc) WHEN V(out)={p.rail / 2!r} FALL=1",
        f".meas tran T_OFF FIND V(tc) WHEN V(out)={p.rail / 2!r} RISE=1",
        ".end",
    ]
    return "\n".join(lines) + "\n"


def measure(text: str, names, folder=None) -> dict:
    """Run a netlist in ngspice's batch mode; its ``.meas`` results named in ``names`` (lower case) [SI].

    Raises
    ------
    FileNotFoundError
        ngspice is not installed.
    RuntimeError
        ngspice ran but did not measure every name (its output is in the message).
    """
    exe = ngspice_path()
    if exe is None:
        raise FileNotFoundError("ngspice not found (Debian/Ubuntu: apt-get install ngspice)")
    with tempfile.TemporaryDirectory(prefix="atticsim-ngspice-") as tmp:
        path = Path(folder or tmp) / "circuit.cir"
        path.write_text(text)
        out = subprocess.run([exe, "-b", str(path)], capture_output=True, text=True, timeout=120)
    found = {}
    for line in out.stdout.splitlines():
        parts = line.split()
        if len(parts) >= 3 and parts[0] in names and parts[1] == "=":
            found[parts[0]] = float(parts[2])
    if set(found) != set(names):
        raise RuntimeError(f"ngspice did not measure {sorted(names)}:\n{out.stdout}\n{out.stderr}")
    return found


def timer_netlist(p, t_call: float, t_release: float, t_end: float, extras=()) -> str:
    """An RC input-delay stage (:class:`atticsim.circuit.timer.TimerParams`, wiring delay-start, delay-stop or
    delay-both) driven by an output that steps to the call level at t_call and back at t_release; a silicon
    diode across R makes the instant direction instant; the following stage is a sharp behavioural switch at
    the threshold. ``.meas`` gives t_on and t_off, the instants the fan side turns on and off [s]; the
    transient takes steps of a two-thousandth of R C (its interpolation then errs far below 0.5 %)."""
    v = p.supply
    call, rest = (v, 0.0) if p.on_call == "charges" else (0.0, v)
    edge = p.tau * 1e-6
    lines = [
        "* atticsim timer stage, input delay",
        f"VDRV drv 0 PWL(0 {rest!r} {t_call!r} {rest!r} {t_call + edge!r} {call!r} {t_release!r} {call!r} "
        f"{t_release + edge!r} {rest!r})",
        f"RT drv c {p.resistance!r}",
        f"CT c 0 {p.capacitance!r} IC={rest!r}",
    ]
    instant = {"delay-start": rest, "delay-stop": call}.get(p.wiring)
    if instant is not None:  # the diode conducts towards the level of the instant direction
        lines += ["DRS drv c DSW" if instant == v else "DRS c drv DSW", ".model DSW D(IS=1e-14 N=1)"]
    sign = "" if p.on_call == "charges" else "-"
    lines.append(f"BFAN fan 0 V = 0.5*(1 + tanh(1e4*{sign}(V(c) - {p.threshold_v!r})))")
    lines += list(extras)
    lines += [".options RELTOL=1e-6 ABSTOL=1e-12 VNTOL=1e-9",
              f".tran {p.tau / 2000!r} {t_end!r} 0 {p.tau / 2000!r} UIC",
              ".meas tran T_ON WHEN V(fan)=0.5 RISE=1", ".meas tran T_OFF WHEN V(fan)=0.5 FALL=1", ".end"]
    return "\n".join(lines) + "\n"


def run_ngspice(p, t_low=-10.0, t_high=70.0, folder=None):
    """(t_on, t_off) [degC] of the circuit as ngspice measures them.

    Parameters
    ----------
    p : CircuitParams
    t_low, t_high : float
        Ends of the temperature sweep [degC]; both thresholds must lie between them.
    folder : path-like, optional
        Where to write the netlist (default: a temporary folder, removed after the run).

    Raises
    ------
    FileNotFoundError
        ngspice is not installed.
    RuntimeError
        ngspice ran but did not measure both crossings (its output is in the message).
    """
    found = measure(netlist(p, t_low, t_high), ("t_on", "t_off"), folder)
    return found["t_on"], found["t_off"]


def reference_circuits():
    """The circuits checked against ngspice: every arrangement atticsim models (feedback on the sense or the
    reference divider, closing on rise or on fall, beta or Steinhart-Hart thermistor, input offsets), with
    invented part values (ours, for the check only). name -> CircuitParams."""
    from atticsim.circuit.comparator import CircuitParams
    from atticsim.circuit.thermistor import Thermistor

    ntc = Thermistor.from_beta(10e3, 3950.0)
    # widely published 10 kOhm Steinhart-Hart coefficients
    ntc_sh = Thermistor.from_steinhart_hart(1.129148e-3, 2.34125e-4, 8.76741e-8)
    variants = {
        "sense-heat": dict(feedback_on="sense", action="close-on-rise", reference_upper=10e3,
                           reference_lower=6.8e3, sense_fixed=4.7e3, sense_trim=1.3e3, feedback=220e3),
        "sense-cold": dict(feedback_on="sense", action="close-on-fall", reference_upper=10e3,
                           reference_lower=10e3, sense_fixed=8.2e3, sense_trim=0.0, feedback=150e3,
                           input_offset=2e-3),
        "reference-heat": dict(feedback_on="reference", action="close-on-rise", reference_upper=4.7e3,
                               reference_lower=10e3, sense_fixed=10e3, sense_trim=0.0, feedback=100e3),
        "reference-cold": dict(feedback_on="reference", action="close-on-fall", reference_upper=10e3,
                               reference_lower=10e3, sense_fixed=22e3, sense_trim=3.3e3, feedback=330e3,
                               input_offset=-3e-3),
        "reference-heat-steinhart-hart": dict(feedback_on="reference", action="close-on-rise",
                                              reference_upper=4.7e3, reference_lower=10e3, sense_fixed=10e3,
                                              sense_trim=0.0, feedback=100e3, thermistor=ntc_sh,
                                              led_ideality=1.6),
    }
    out = {}
    for name, kw in variants.items():
        base = dict(rail=12.0, led_resistor=1e3, led_forward=1.2, thermistor=ntc)
        base.update(kw)
        out[name] = CircuitParams(**base)
    return out
