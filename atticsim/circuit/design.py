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


def design_circuit(params, on_c, off_c=None, hysteresis_k=None, series="E24", trim_max=None):
    """Choose the trimmer setting and feedback resistor for wanted switching temperatures.

    Parameters
    ----------
    params : CircuitParams
        The circuit with the user's parts; its sense_trim and feedback are replaced.
    on_c : float
        Wanted switch-on thermistor temperature [degC].
    off_c : float, optional
        Wanted switch-off temperature [degC] (below on_c for a switch closing on rise, above for one closing on fall).
    hysteresis_k : float, optional
        Wanted hysteresis [K], instead of off_c.
    series : str
        "E12", "E24" or "E96".
    trim_max : float, optional
        Full-scale value of the trimmer [ohm].

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
    r_on = float(params.thermistor.resistance(on_c))
    r_off = float(params.thermistor.resistance(off_c))

    fb_exact = _solve_feedback(params, r_on, r_off)
    trim_exact = _trim(params, fb_exact, r_on, trim_max)

    fb = round_down(fb_exact, series)
    trim = _trim(params, fb, r_on, trim_max)
    chosen = dataclasses.replace(params, feedback=fb, sense_trim=trim)
    try:
        thresholds = switching_temperatures(chosen)
    except ValueError:
        raise ValueError(f"with the feedback rounded down to {fb:.0f} ohm the circuit no longer switches both "
                         f"ways; ask for less hysteresis or use a finer series (E96)") from None

    # a fixed resistor for the trimmer: of its two series neighbours take the one that switches the fan on
    # no later than wanted (heat: at or below on_c; cold: at or above)
    candidates = [0.0] if trim == 0.0 else sorted({round_down(trim, series), round_up(trim, series)})
    best = None
    for t in candidates:
        p = dataclasses.replace(params, feedback=fb, sense_trim=t)
        try:
            th = switching_temperatures(p)
        except ValueError:
            continue  # this neighbour does not switch both ways
        safe = (on_c - th.on_c) * sign >= -1e-9
        key = (not safe, abs(th.on_c - on_c))
        if best is None or key < best[0]:
            best = (key, t, p, th)
    findings = [f"feedback {fb_exact:.0f} ohm rounded down to {fb:.0f} ohm ({series}): hysteresis "
                f"{thresholds.hysteresis_k:.2f} K instead of {hyst:.2f} K."]
    if best is None:
        trim_fixed, params_fixed, th_fixed = None, None, None
        findings.append(f"neither {series} neighbour of the trimmer setting gives a circuit that switches both "
                        f"ways; keep the trimmer.")
    else:
        _, trim_fixed, params_fixed, th_fixed = best
        if (on_c - th_fixed.on_c) * sign < -1e-9:
            findings.append(f"no {series} value for the trimmer's place switches on at or "
                            f"{'below' if sign > 0 else 'above'} {on_c:.2f} degC; keep the trimmer.")
        if th_fixed.hysteresis_k < hyst - 1e-9:
            findings.append(f"with the fixed {trim_fixed:.0f} ohm resistor the hysteresis is "
                            f"{th_fixed.hysteresis_k:.2f} K, under the {hyst:.2f} K wanted.")
    return Design(wanted_on_c=float(on_c), wanted_off_c=float(off_c), feedback_exact=fb_exact,
                  sense_trim_exact=trim_exact, feedback=fb, sense_trim=trim, sense_trim_fixed=trim_fixed,
                  series=str(series).upper(), params=chosen, thresholds=thresholds, params_fixed=params_fixed,
                  thresholds_fixed=th_fixed, findings=tuple(findings) + thresholds.findings)
