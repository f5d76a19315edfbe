"""Design the other way round: the trimmer setting and feedback resistor that give wanted switching
temperatures with the parts the user has, rounded to a standard series in the safe direction.

Method (exact, from the same node equations as `comparator`):
1. The wanted temperatures give the thermistor resistances R_on, R_off at the two switching points.
2. Eliminating the fixed leg of the sense divider between the two threshold equations leaves one equation
   in the feedback resistor alone, monotonic in it: solved by bracketing (brentq on ln R_fb).
3. The fixed leg follows from the switch-on equation; the trimmer setting is that minus sense_fixed.
4. The feedback resistor is rounded down to the series (more hysteresis: the fan cycles less, never more
   than asked), the trimmer setting is solved again for the exact switch-on temperature with that rounded
   resistor, and a fixed resistor replacing the trimmer is rounded so that the fan comes on no later than
   wanted (a maximum is rounded down, a minimum up; common practice, no source).

The wanted temperatures are those of the thermistor itself (``basis="thermistor"``) or of the air around it
(``basis="air"``, with the sensor's self-heating): in steady state the thermistor sits above the air by its
own dissipation, T_th = T_air + dT(P) (dT = P/delta for a dissipation constant delta), so the thermistor
thresholds that put the AIR at the wanted temperatures are found by fixed-point iteration on steps 1-3
(and on step 4's trimmer setting), each pass moving the thermistor targets by the air's remaining error.
"""

from __future__ import annotations

import dataclasses
import math
import numbers
from dataclasses import dataclass

from atticsim.circuit.comparator import (
    CircuitParams, Thresholds, _led, _sense_leg_conductance, _switch_levels, switching_temperatures)
from atticsim.circuit.eseries import round_down, round_up, series_values

#: Search range of the feedback resistor [ohm] (practical resistor values).
_FB_RANGE = (10.0, 1e10)


@dataclass(frozen=True)
class Design:
    """Chosen parts and what they give.

    Attributes
    ----------
    wanted_on_c, wanted_off_c : float
        Wanted switch-on / switch-off thermistor temperatures [degC].
    feedback_exact, sense_trim_exact : float
        Exact values that give both wanted temperatures [ohm].
    feedback : float
        Feedback resistor, rounded down to the series [ohm].
    sense_trim : float
        Trimmer setting that gives the wanted switch-on temperature with the rounded feedback [ohm].
    sense_trim_fixed : float or None
        Series value for a fixed resistor in place of the trimmer, rounded the safe way [ohm]; None when
        neither neighbouring series value gives a working circuit.
    series : str
        Resistor series used.
    params, thresholds : CircuitParams, Thresholds
        Circuit with the rounded feedback and the trimmer at `sense_trim`, and its switching points.
    params_fixed, thresholds_fixed : CircuitParams, Thresholds or None
        Circuit with every part a series value, and its switching points (None with sense_trim_fixed).
    findings : tuple of str
        Plain-language notes.
    basis : str
        "thermistor" (the wanted temperatures are the thermistor's) or "air" (the air's, self-heating
        included).
    air_on_c, air_off_c : float or None
        Air temperatures at which the chosen circuit switches, in steady state with its self-heating [degC]
        (None without a self-heating model).
    fixed_air_on_c, fixed_air_off_c : float or None
        The same with the fixed resistor in place of the trimmer.
    """

    wanted_on_c: float
    wanted_off_c: float
    feedback_exact: float
    sense_trim_exact: float
    feedback: float
    sense_trim: float
    sense_trim_fixed: float
    series: str
    params: CircuitParams
    thresholds: Thresholds
    params_fixed: CircuitParams
    thresholds_fixed: Thresholds
    findings: tuple = ()
    basis: str = "thermistor"
    air_on_c: float | None = None
    air_off_c: float | None = None
    fixed_air_on_c: float | None = None
    fixed_air_off_c: float | None = None


def _rise_function(self_heating):
    """rise(power [W], air [degC]) -> K from a dissipation constant [W/K] or a function of that form."""
    if self_heating is None:
        return None
    if callable(self_heating):
        return self_heating
    if not (isinstance(self_heating, numbers.Real) and self_heating > 0.0):
        raise ValueError(f"thermistor dissipation constant must be positive in W/K (got {self_heating!r})")
    delta = float(self_heating)
    return lambda power, air_c: power / delta  # self-heating dT = P / delta (dissipation constant definition)


def air_switching(thresholds, rise):
    """Air temperatures at which a circuit switches, with the thermistor's steady self-heating [degC].

    At a switching point the thermistor is at its threshold T_th and dissipates P (the power before the
    switch, ``Thresholds.sense_power_on_w`` / ``_off_w``); the air is at T_air with T_air + dT(P, T_air) =
    T_th, solved by fixed-point iteration (dT changes little with T_air).

    Parameters
    ----------
    thresholds : Thresholds
        The circuit's switching points.
    rise : callable
        rise(power [W], air [degC]) -> self-heating [K].

    Returns
    -------
    tuple of float
        (on_air_c, off_air_c) [degC].
    """
    out = []
    for t_th, power in ((thresholds.on_c, thresholds.sense_power_on_w), (thresholds.off_c, thresholds.sense_power_off_w)):
        air = t_th - rise(power, t_th)
        for _ in range(50):
            new = t_th - rise(power, air)
            if abs(new - air) < 1e-12:
                break
            air = new
        out.append(float(new))
    return tuple(out)


def _leg_conductance(p, fb, r_t, which):
    """1/R_fixed [S] of the sense divider's fixed leg that puts the switch-on (which="on") or switch-off
    (which="off") point at thermistor resistance r_t [ohm], with feedback resistor fb [ohm]."""
    i_s, n_vt = _led(p)
    lv = _switch_levels(p.rail, p.reference_upper, p.reference_lower, fb, p.led_resistor, i_s, n_vt,
                        p.output_low, p.input_offset, p.feedback_on)
    return float(_sense_leg_conductance(p.rail, lv[f"v_sense_{which}"], lv[f"i_fb_{which}"], r_t, p.position))


def _solve_feedback(p, r_on, r_off):
    """Feedback resistor [ohm] with which one fixed leg puts the switching points at r_on and r_off [ohm]."""
    from scipy.optimize import brentq  # loaded here: only the design needs it (import cost ~0.2 s)

    # the two switching points ask for the same fixed leg; the difference is monotonic in the feedback
    def mismatch(log_fb):
        fb = math.exp(log_fb)
        return _leg_conductance(p, fb, r_on, "on") - _leg_conductance(p, fb, r_off, "off")

    lo, hi = (math.log(x) for x in _FB_RANGE)
    f_lo, f_hi = mismatch(lo), mismatch(hi)
    if not f_lo * f_hi < 0.0:
        raise ValueError(f"no feedback resistor from {_FB_RANGE[0]:.0f} ohm to {_FB_RANGE[1]:.0e} ohm gives the "
                         f"wanted hysteresis with this reference divider and LED")
    return math.exp(brentq(mismatch, lo, hi, xtol=1e-12, rtol=1e-13))


def _trim(p, fb, r_t, trim_max):
    """Trimmer setting [ohm] for the switch-on point at r_t [ohm], refusing what the parts cannot do."""
    g = _leg_conductance(p, fb, r_t, "on")
    leg = 1.0 / g if g > 0.0 else math.nan
    if math.isnan(leg):
        raise ValueError("no sense-divider resistance puts the switch-on point at the wanted temperature "
                         "with this reference divider; change the reference divider")
    trim = leg - p.sense_fixed
    if trim < 0.0:
        raise ValueError(f"sense_fixed ({p.sense_fixed:.0f} ohm) is already more than the {leg:.0f} ohm the "
                         f"sense divider needs; use a smaller fixed resistor")
    if trim_max is not None and trim > trim_max:
        raise ValueError(f"the trimmer would have to be set to {trim:.0f} ohm, beyond its {trim_max:.0f} ohm; "
                         f"use a larger sense_fixed or trimmer")
    return trim


def _exact(params, t_on, t_off, trim_max):
    """Exact feedback and trimmer for thermistor switching points t_on, t_off [degC], and the circuit."""
    r_on = float(params.thermistor.resistance(t_on))
    r_off = float(params.thermistor.resistance(t_off))
    fb = _solve_feedback(params, r_on, r_off)
    trim = _trim(params, fb, r_on, trim_max)
    return fb, trim


def _basis_targets(params, on_c, off_c, rise, trim_max, tol=1e-9, max_iter=60):
    """Thermistor switching temperatures whose exact design puts the AIR at on_c, off_c [degC]."""
    t_on, t_off = on_c, off_c
    for _ in range(max_iter):
        fb, trim = _exact(params, t_on, t_off, trim_max)
        th = switching_temperatures(dataclasses.replace(params, feedback=fb, sense_trim=trim))
        a_on, a_off = air_switching(th, rise)
        e_on, e_off = on_c - a_on, off_c - a_off
        if max(abs(e_on), abs(e_off)) < tol:
            return t_on, t_off
        t_on, t_off = t_on + e_on, t_off + e_off
    raise ValueError("the self-heating design did not settle (the thermistor dissipates too much for its "
                     "dissipation constant); use a larger sense resistor or a thermistor of higher resistance")


def _trim_for_air(params, fb, on_c, t_on, rise, trim_max, tol=1e-9, max_iter=60):
    """Trimmer setting with feedback fb that puts the air at on_c at switch-on; t_on is a first guess [degC]."""
    for _ in range(max_iter):
        trim = _trim(params, fb, float(params.thermistor.resistance(t_on)), trim_max)
        th = switching_temperatures(dataclasses.replace(params, feedback=fb, sense_trim=trim))
        err = on_c - air_switching(th, rise)[0]
        if abs(err) < tol:
            return trim
        t_on += err
    raise ValueError("the self-heating design did not settle for the rounded feedback resistor; use a finer "
                     "series (E96)")


def design_circuit(params, on_c, off_c=None, hysteresis_k=None, series="E24", trim_max=None, self_heating=None,
                   basis="thermistor"):
    """Choose the trimmer setting and feedback resistor for wanted switching temperatures.

    Parameters
    ----------
    params : CircuitParams
        The circuit with the user's parts; its sense_trim and feedback are replaced.
    on_c : float
        Wanted switch-on temperature [degC].
    off_c : float, optional
        Wanted switch-off temperature [degC] (below on_c for a switch closing on rise, above for one closing on fall).
    hysteresis_k : float, optional
        Wanted hysteresis [K], instead of off_c.
    series : str
        "E12", "E24" or "E96".
    trim_max : float, optional
        Full-scale value of the trimmer [ohm].
    self_heating : float or callable, optional
        The thermistor's self-heating in steady state: a dissipation constant [W/K] or a function
        rise(power [W], air [degC]) -> K. Needed for ``basis="air"``; with it the design also reports the air
        temperatures at which its parts switch.
    basis : {"thermistor", "air"}
        Whether on_c and off_c are the thermistor's temperatures or the air's around it.

    Returns
    -------
    Design
        Exact and rounded values and what the rounded parts give.
    """
    if not isinstance(params, CircuitParams):
        raise ValueError("design needs a CircuitParams with the user's parts")
    series_values(series)
    for name, value in (("switch-on", on_c), ("switch-off", off_c)):
        if value is not None and not (isinstance(value, numbers.Real) and -100.0 < value < 200.0):
            raise ValueError(f"wanted {name} temperature must be a number of degC between -100 and 200 "
                             f"(got {value!r})")
    if basis not in ("thermistor", "air"):
        raise ValueError(f"design basis must be 'thermistor' or 'air' (got {basis!r})")
    rise = _rise_function(self_heating)
    if basis == "air" and rise is None:
        raise ValueError("a design for the air temperature needs the thermistor's self-heating (its dissipation "
                         "constant)")
    sign = 1.0 if params.action == "close-on-rise" else -1.0
    if (off_c is None) == (hysteresis_k is None):
        raise ValueError("give exactly one of the wanted switch-off temperature and the wanted hysteresis")
    if off_c is None:
        if not (isinstance(hysteresis_k, numbers.Real) and 0.0 < hysteresis_k < 50.0):
            raise ValueError(f"wanted hysteresis must be between 0 and 50 K (got {hysteresis_k!r})")
        off_c = on_c - sign * hysteresis_k
    hyst = (on_c - off_c) * sign
    if not hyst > 0.0:
        raise ValueError(f"with the switch closing on {'rise' if sign > 0 else 'fall'} the fan must switch off {'below' if sign > 0 else 'above'} "
                         f"the switch-on temperature (got on {on_c} degC, off {off_c} degC)")
    if trim_max is not None and not trim_max > 0.0:
        raise ValueError(f"trimmer full-scale value must be positive (got {trim_max!r})")

    air = basis == "air"
    t_on, t_off = _basis_targets(params, on_c, off_c, rise, trim_max) if air else (on_c, off_c)
    fb_exact, trim_exact = _exact(params, t_on, t_off, trim_max)

    fb = round_down(fb_exact, series)
    trim = (_trim_for_air(params, fb, on_c, t_on, rise, trim_max) if air
            else _trim(params, fb, float(params.thermistor.resistance(t_on)), trim_max))
    chosen = dataclasses.replace(params, feedback=fb, sense_trim=trim)
    try:
        thresholds = switching_temperatures(chosen)
    except ValueError:
        raise ValueError(f"with the feedback rounded down to {fb:.0f} ohm the circuit no longer switches both "
                         f"ways; ask for less hysteresis or use a finer series (E96)") from None

    def in_basis(th):
        """(on, off) of a circuit in the design's basis [degC]."""
        return air_switching(th, rise) if air else (th.on_c, th.off_c)

    got_on, got_off = in_basis(thresholds)
    # a fixed resistor for the trimmer: of its two series neighbours take the one that switches the fan on
    # no later than wanted (rise: at or below on_c; fall: at or above)
    candidates = [0.0] if trim == 0.0 else sorted({round_down(trim, series), round_up(trim, series)})
    best = None
    for t in candidates:
        p = dataclasses.replace(params, feedback=fb, sense_trim=t)
        try:
            th = switching_temperatures(p)
        except ValueError:
            continue  # this neighbour does not switch both ways
        on_t = in_basis(th)[0]
        safe = (on_c - on_t) * sign >= -1e-9
        key = (not safe, abs(on_t - on_c))
        if best is None or key < best[0]:
            best = (key, t, p, th)
    what = "air" if air else "thermistor"
    findings = [f"feedback {fb_exact:.0f} ohm rounded down to {fb:.0f} ohm ({series}): hysteresis "
                f"{abs(got_on - got_off):.2f} K of the {what} instead of {hyst:.2f} K."]
    if best is None:
        trim_fixed, params_fixed, th_fixed, fixed_basis = None, None, None, (None, None)
        findings.append(f"neither {series} neighbour of the trimmer setting gives a circuit that switches both "
                        f"ways; keep the trimmer.")
    else:
        _, trim_fixed, params_fixed, th_fixed = best
        fixed_basis = in_basis(th_fixed)
        if (on_c - fixed_basis[0]) * sign < -1e-9:
            findings.append(f"no {series} value for the trimmer's place switches on at or "
                            f"{'below' if sign > 0 else 'above'} {on_c:.2f} degC; keep the trimmer.")
        if abs(fixed_basis[0] - fixed_basis[1]) < hyst - 1e-9:
            findings.append(f"with the fixed {trim_fixed:.0f} ohm resistor the hysteresis is "
                            f"{abs(fixed_basis[0] - fixed_basis[1]):.2f} K, under the {hyst:.2f} K wanted.")
    air_on = air_off = fixed_air = None
    if rise is not None:
        air_on, air_off = air_switching(thresholds, rise)
        fixed_air = air_switching(th_fixed, rise) if th_fixed is not None else (None, None)
        if air:
            findings.append(f"designed for the AIR: the thermistor itself switches on at {thresholds.on_c:.2f} degC, "
                            f"{thresholds.on_c - air_on:.2f} K above the air, warmed by its own "
                            f"{thresholds.sense_power_on_w * 1e3:.2f} mW (steady state, still air).")
        else:
            findings.append(f"designed for the THERMISTOR: its own {thresholds.sense_power_on_w * 1e3:.2f} mW warms it, "
                            f"so the air is at {air_on:.2f} degC when the fan switches on and {air_off:.2f} degC when "
                            f"it switches off (steady state, still air).")
    return Design(wanted_on_c=float(on_c), wanted_off_c=float(off_c), feedback_exact=fb_exact,
                  sense_trim_exact=trim_exact, feedback=fb, sense_trim=trim, sense_trim_fixed=trim_fixed,
                  series=str(series).upper(), params=chosen, thresholds=thresholds, params_fixed=params_fixed,
                  thresholds_fixed=th_fixed, findings=tuple(findings) + thresholds.findings, basis=basis,
                  air_on_c=air_on, air_off_c=air_off,
                  fixed_air_on_c=fixed_air[0] if fixed_air else None,
                  fixed_air_off_c=fixed_air[1] if fixed_air else None)
