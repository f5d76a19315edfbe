"""The thermostat's comparator stage: switching temperatures of an NTC divider, a reference divider and an
open-collector comparator with positive feedback, whose pull-up is the opto-triac driver's LED.

Topology
--------
- Reference divider: ``reference_upper`` from the rail to the reference node, ``reference_lower`` to ground.
- Sense divider: the thermistor and ``sense_fixed + sense_trim`` in series across the rail; the thermistor is
  the lower leg (sense node to ground) or the upper leg (rail to sense node).
- The comparator output is open-collector. Its pull-up is ``led_resistor`` in series with the LED from the rail.
  The output sinks (LED on, fan on) when V(+) - V(-) < ``input_offset``; sinking, it sits at ``output_low``.
- ``feedback_on = "sense"``: the sense node feeds the non-inverting input and ``feedback`` runs from the
  output to it; the reference node feeds the inverting input.
  ``feedback_on = "reference"``: the sense node feeds the inverting input; the reference node feeds the
  non-inverting input and ``feedback`` runs from the output to it.
- While the output is off, the current through the LED, ``led_resistor`` and ``feedback`` into the
  non-inverting node sets the LED's drop (Shockley law), so the output-high voltage is solved, not assumed.

All node equations are solved exactly (Kirchhoff's current law, the diode loop in closed form), so each
threshold is a thermistor resistance, turned into a temperature by the thermistor model.
Comparator input bias currents and the off-state output leakage are neglected (tens of nA against
divider currents of 0.1-1 mA).

References
----------
.. [1] Semiconductor makers' application notes on adding hysteresis to a comparator:
       V_H = (Vcc/R1 + V_OH/RH)/G, V_L = (Vcc/R1 + V_OL/RH)/G, G = 1/R1 + 1/R2 + 1/RH.
.. [2] W. Shockley, diode law I = I_s (exp(V/(n V_T)) - 1); any device-physics text, e.g. Sze & Ng,
       Physics of Semiconductor Devices, 3rd ed., ch. 2 (from memory).
.. [3] T. C. Banwell and A. Jayakumar, "Exact analytical solution for current flow through diode with
       series resistance", Electronics Letters 36(4), 2000 (from memory): Lambert-W closed form.
"""

from __future__ import annotations

import math
import numbers
from dataclasses import dataclass

import numpy as np
from scipy.special import wrightomega

from atticsim.constants import KELVIN
from atticsim.circuit.thermistor import Thermistor

#: Boltzmann constant over elementary charge [V/K] (CODATA 2018, exact since the 2019 SI).
K_OVER_Q = 8.617333262e-5
#: LED junction temperature at which its Shockley law is calibrated and used [degC]
#: (room temperature; common practice, no source).
LED_TEMP_C = 25.0
#: Comparator input common-mode range stops this far below the rail [V]
#: (dual open-collector comparator, typical datasheet figure).
COMMON_MODE_HEADROOM = 1.5

_FEEDBACK_ON = ("sense", "reference")
_POSITIONS = ("lower", "upper")
#: The switch's action: it closes (fan on) when the temperature rises, or when it falls (the trade's words).
ACTIONS = ("close-on-rise", "close-on-fall")


def derived_position(action, feedback_on):
    """Thermistor position that makes the fan come on when warm (close on rise) or when cold (close on fall).

    The output sinks (fan on) when V(+) < V(-). With the NTC lower in its divider the sense voltage falls as
    the temperature rises; upper, it rises. On the non-inverting input ("sense") a falling sense voltage
    switches the fan on; on the inverting input ("reference") a rising one does (common practice, no source).

    Parameters
    ----------
    action : str
        "close-on-rise" (fan on when warm) or "close-on-fall" (fan on when cold).
    feedback_on : str
        "sense" or "reference".

    Returns
    -------
    str
        "lower" or "upper".
    """
    if action not in ACTIONS:
        raise ValueError(f"thermostat action must be 'close-on-rise' or 'close-on-fall' (got {action!r})")
    if feedback_on not in _FEEDBACK_ON:
        raise ValueError(f"feedback_on must be 'sense' or 'reference' (got {feedback_on!r})")
    falling_switches_on = feedback_on == "sense"
    want_falling = falling_switches_on == (action == "close-on-rise")
    return "lower" if want_falling else "upper"


@dataclass(frozen=True)
class CircuitParams:
    """Component values of the thermostat circuit (SI units).

    Parameters
    ----------
    rail : float
        Regulated supply voltage [V].
    reference_upper, reference_lower : float
        Reference divider, rail to node and node to ground [ohm].
    sense_fixed, sense_trim : float
        Fixed resistor and trimmer setting in series, the other leg of the thermistor divider [ohm].
    feedback : float
        Positive-feedback resistor, output to the non-inverting input [ohm]; ``math.inf`` for none.
    led_resistor : float
        Series resistor of the opto-triac driver's LED [ohm].
    led_forward : float
        LED forward voltage at ``led_current`` [V].
    thermistor : Thermistor
        The NTC (anything with ``resistance(temp_c)`` and ``temperature(resistance)``).
    led_current : float
        Current at which ``led_forward`` is given [A]. Default 0.010 (datasheet test condition).
    led_ideality : float
        Shockley ideality factor of the LED [-]. Default 2.0: the LED runs at microamps while the output is
        off, where space-charge recombination current dominates and n approaches 2 (Sah, Noyce & Shockley,
        Proc. IRE 45, 1957; from memory); measured LEDs give 1.5-2.5. One n spans the three decades from
        the 10 mA calibration point down to the feedback current.
    output_low : float
        Output voltage while sinking [V]. Default 0.2.
    input_offset : float
        Comparator input offset [V]: the output switches where V(+) - V(-) = input_offset. Default 0.
    feedback_on : str
        "sense" or "reference" (see module docstring). Default "sense".
    thermistor_position : str or None
        "lower", "upper" or None to derive it from ``action`` and ``feedback_on``.
    action : str
        "close-on-rise" (fan on when warm) or "close-on-fall" (fan on when cold). Default "close-on-rise".
    sink_guaranteed : float
        Comparator's guaranteed output sink current [A]. Default 0.006 (typical datasheet minimum).
    trigger_current : float
        Opto-triac driver's maximum trigger current for its grade [A]. Default 0.010 (grades 5/10/15/30 mA).
    led_current_max : float
        LED absolute maximum forward current [A]. Default 0.050 (typical datasheet).
    """

    rail: float
    reference_upper: float
    reference_lower: float
    sense_fixed: float
    sense_trim: float
    feedback: float
    led_resistor: float
    led_forward: float
    thermistor: Thermistor
    led_current: float = 0.010
    led_ideality: float = 2.0
    output_low: float = 0.2
    input_offset: float = 0.0
    feedback_on: str = "sense"
    thermistor_position: str | None = None
    action: str = "close-on-rise"
    sink_guaranteed: float = 0.006
    trigger_current: float = 0.010
    led_current_max: float = 0.050

    def __post_init__(self):
        for name in ("rail", "reference_upper", "reference_lower", "sense_fixed", "feedback", "led_resistor",
                     "led_forward", "led_current", "led_ideality", "sink_guaranteed", "trigger_current",
                     "led_current_max"):
            value = getattr(self, name)
            if not (isinstance(value, numbers.Real) and value > 0.0):
                raise ValueError(f"circuit {name} must be a positive number (got {value!r})")
        if not (isinstance(self.sense_trim, numbers.Real) and 0.0 <= self.sense_trim < math.inf):
            raise ValueError(f"circuit sense_trim must be zero or positive (got {self.sense_trim!r})")
        for name in ("rail", "reference_upper", "reference_lower", "sense_fixed", "led_resistor"):
            if math.isinf(getattr(self, name)):
                raise ValueError(f"circuit {name} must be finite")
        if not 0.0 <= self.output_low < self.rail:
            raise ValueError(f"circuit output_low must be between 0 and the rail (got {self.output_low!r} V)")
        if not self.led_forward < self.rail:
            raise ValueError(f"circuit led_forward ({self.led_forward} V) must be below the rail ({self.rail} V)")
        if not (isinstance(self.input_offset, numbers.Real) and abs(self.input_offset) < self.rail):
            raise ValueError(
                f"circuit input_offset must be a voltage smaller than the rail (got {self.input_offset!r})")
        if not (hasattr(self.thermistor, "resistance") and hasattr(self.thermistor, "temperature")):
            raise ValueError("circuit thermistor must be a Thermistor")
        derived = derived_position(self.action, self.feedback_on)
        if self.thermistor_position is not None:
            if self.thermistor_position not in _POSITIONS:
                raise ValueError(
                    f"thermistor_position must be 'lower', 'upper' or omitted (got {self.thermistor_position!r})")
            if self.thermistor_position != derived:
                falls = "falls" if self.thermistor_position == "lower" else "rises"
                inp = "non-inverting" if self.feedback_on == "sense" else "inverting"
                when = "cold" if self.action == "close-on-rise" else "warm"
                raise ValueError(
                    f"thermistor_position '{self.thermistor_position}' contradicts action '{self.action}' with "
                    f"feedback_on '{self.feedback_on}': the sense voltage {falls} with temperature on the {inp} "
                    f"input, so the fan would come on when {when}; use '{derived}' or omit it")

    @property
    def position(self):
        """Thermistor position in its divider, "lower" or "upper" (given or derived)."""
        return self.thermistor_position or derived_position(self.action, self.feedback_on)

    @property
    def sense_resistance(self):
        """Fixed leg of the thermistor divider, sense_fixed + sense_trim [ohm]."""
        return self.sense_fixed + self.sense_trim


@dataclass(frozen=True)
class Thresholds:
    """Switching points of the thermostat circuit.

    Voltages and powers are those at the instant of switching, in the state before the switch
    (output off at the switch-on point, sinking at the switch-off point).

    Attributes
    ----------
    on_c, off_c : float
        Thermistor temperatures at which the fan switches on / off [degC].
    hysteresis_k : float
        |on_c - off_c| [K].
    r_on, r_off : float
        Thermistor resistance at each threshold [ohm].
    v_plus_on, v_minus_on, v_plus_off, v_minus_off : float
        Comparator input voltages at each threshold [V].
    v_out_high : float
        Comparator output voltage, not sinking, at the switch-on point [V].
    led_current_on : float
        LED current while the output sinks [A].
    sense_power_on_w, sense_power_off_w : float
        Thermistor dissipation at each threshold [W].
    findings : tuple of str
        Plain-language checks (LED current against the sink and trigger currents, input common-mode range).
    """

    on_c: float
    off_c: float
    hysteresis_k: float
    r_on: float
    r_off: float
    v_plus_on: float
    v_minus_on: float
    v_plus_off: float
    v_minus_off: float
    v_out_high: float
    led_current_on: float
    sense_power_on_w: float
    sense_power_off_w: float
    findings: tuple = ()


def led_saturation_current(led_forward, led_current, led_ideality):
    """Shockley saturation current that puts the LED at led_forward [V] when carrying led_current [A].

    Returns
    -------
    float
        I_s [A].
    """
    n_vt = led_ideality * K_OVER_Q * (LED_TEMP_C + KELVIN)
    # I = I_s (exp(V/(n V_T)) - 1) solved for I_s: Shockley diode law [2]
    return led_current / math.expm1(led_forward / n_vt)


def diode_loop_current(voltage, resistance, i_s, n_vt):
    """Current through a resistor in series with a Shockley diode across a voltage (exact).

    Solves V = I R + n V_T ln(1 + I/I_s) with the Wright omega function (the logarithmic form of the
    Lambert W closed form [3]), so it never overflows. Vectorised.

    Parameters
    ----------
    voltage : float or array
        Voltage across resistor + diode [V], >= 0.
    resistance : float or array
        Series resistance [ohm], > 0; ``inf`` gives zero current.
    i_s : float
        Diode saturation current [A].
    n_vt : float
        Ideality factor times thermal voltage [V].

    Returns
    -------
    float or array
        Current [A].
    """
    v = np.asanyarray(voltage, dtype=float)
    r = np.asanyarray(resistance, dtype=float)
    finite = np.isfinite(r)
    i = np.where(finite, _loop(v, np.where(finite, r, 1.0), i_s, n_vt), 0.0)
    return float(i) if i.ndim == 0 else i


def _loop(v, r, i_s, n_vt):
    """diode_loop_current for finite r, without conversions (floats or arrays)."""
    # (I + I_s) R/(n V_T) = omega((V + I_s R)/(n V_T) + ln(I_s R/(n V_T))): Banwell & Jayakumar [3]
    z = (v + i_s * r) / n_vt + np.log(i_s * r / n_vt)
    return np.maximum(wrightomega(z) * n_vt / r - i_s, 0.0)


def _led(params):
    """(I_s [A], n V_T [V]) of the LED."""
    n_vt = params.led_ideality * K_OVER_Q * (LED_TEMP_C + KELVIN)
    return led_saturation_current(params.led_forward, params.led_current, params.led_ideality), n_vt


def led_on_current(params):
    """LED current while the comparator output sinks [A]: rail - output_low = I R_led + V_F(I)."""
    i_s, n_vt = _led(params)
    return diode_loop_current(params.rail - params.output_low, params.led_resistor, i_s, n_vt)


def _switch_levels(rail, ref_u, ref_l, fb, led_r, i_s, n_vt, v_ol, v_os, feedback_on):
    """Comparator-side quantities at the switch-on and switch-off points; they do not depend on the sense
    divider (vectorised over every numeric input).

    Returns a dict: v_plus_on, v_minus_on, v_plus_off, v_minus_off, v_out_high [V]; v_sense_on, v_sense_off,
    the sense-node voltage at each point [V]; i_fb_on, i_fb_off, the current the feedback resistor drives
    into the sense node just before each point [A] (zero when the feedback goes to the reference node).
    """
    v_ref = rail * ref_l / (ref_u + ref_l)  # unloaded divider (Ohm's law)
    finite = np.isfinite(fb)
    fb_w = np.where(finite, fb, 1.0)
    if feedback_on == "sense":
        # the sense node is the non-inverting input; it switches where V(+) = V(-) + offset
        v_node = v_ref + v_os
        # output off: rail - V(+) = I (R_led + R_fb) + V_F(I), the LED loop closed by the node voltage
        i_on = np.where(finite, _loop(rail - v_node, led_r + fb_w, i_s, n_vt), 0.0)
        # output sinking: the feedback current flows from the node to output_low
        i_off = np.where(finite, (v_ol - v_node) / fb_w, 0.0)
        return dict(v_plus_on=v_node, v_minus_on=v_ref, v_plus_off=v_node, v_minus_off=v_ref,
                    v_out_high=np.where(finite, v_node + i_on * fb_w, rail),
                    v_sense_on=v_node, v_sense_off=v_node, i_fb_on=i_on, i_fb_off=i_off)
    # the reference node is the non-inverting input, loaded by the feedback resistor
    r_ref = ref_u * ref_l / (ref_u + ref_l)  # Thevenin resistance of the divider
    i = np.where(finite, _loop(rail - v_ref, led_r + fb_w + r_ref, i_s, n_vt), 0.0)
    v_plus_on = v_ref + i * r_ref
    # output sinking: Thevenin source (v_ref, r_ref) against fb to output_low (Millman's theorem)
    v_plus_off = v_ref + (v_ol - v_ref) * np.where(finite, r_ref / (fb_w + r_ref), 0.0)
    # it switches where V(-) = V(+) - offset; the sense divider feeds V(-) and carries no feedback current
    return dict(v_plus_on=v_plus_on, v_minus_on=v_plus_on - v_os, v_plus_off=v_plus_off,
                v_minus_off=v_plus_off - v_os, v_out_high=np.where(finite, v_plus_on + i * fb_w, rail),
                v_sense_on=v_plus_on - v_os, v_sense_off=v_plus_off - v_os, i_fb_on=0.0, i_fb_off=0.0)


def _thermistor_at(rail, v, i_fb, r_sense, position):
    """Thermistor resistance [ohm] that holds the sense node at v [V] while the feedback drives i_fb [A] into
    it, with fixed leg r_sense [ohm]; NaN where no positive resistance does (vectorised)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        if position == "lower":
            r = v / ((rail - v) / r_sense + i_fb)  # KCL: (Vcc - V)/R_fixed + I_fb = V/R_t
        else:
            r = (rail - v) / (v / r_sense - i_fb)  # KCL: (Vcc - V)/R_t + I_fb = V/R_fixed
    return np.where((r > 0.0) & np.isfinite(r) & (v > 0.0) & (v < rail), r, np.nan)


def _sense_leg_conductance(rail, v, i_fb, r_t, position):
    """1/R_fixed [S] of the fixed leg that holds the sense node at v [V] with thermistor r_t [ohm] while the
    feedback drives i_fb [A] into it: the KCL of `_thermistor_at` solved for the fixed leg."""
    if position == "lower":
        return (v / r_t - i_fb) / (rail - v)
    return ((rail - v) / r_t + i_fb) / v


def _threshold_resistances(rail, ref_u, ref_l, r_sense, fb, led_r, i_s, n_vt, v_ol, v_os, feedback_on,
                           position):
    """Thermistor resistances at the switch-on and switch-off points (vectorised over every numeric input).

    Returns the dict of `_switch_levels` plus r_on, r_off [ohm] (NaN where the circuit cannot switch) and
    v_th_on, v_th_off, the voltage across the thermistor at each point [V].
    """
    k = _switch_levels(rail, ref_u, ref_l, fb, led_r, i_s, n_vt, v_ol, v_os, feedback_on)
    k["r_on"] = _thermistor_at(rail, k["v_sense_on"], k["i_fb_on"], r_sense, position)
    k["r_off"] = _thermistor_at(rail, k["v_sense_off"], k["i_fb_off"], r_sense, position)
    lower = position == "lower"
    k["v_th_on"] = k["v_sense_on"] if lower else rail - k["v_sense_on"]
    k["v_th_off"] = k["v_sense_off"] if lower else rail - k["v_sense_off"]
    return k


def _kernel_args(params):
    """Positional numeric arguments of _threshold_resistances for one CircuitParams."""
    i_s, n_vt = _led(params)
    return (params.rail, params.reference_upper, params.reference_lower, params.sense_resistance,
            params.feedback, params.led_resistor, i_s, n_vt, params.output_low, params.input_offset)


def _findings(params, led_on, v_inputs):
    """Plain-language checks of the LED current and the input common-mode range."""
    out = []
    ma = led_on * 1e3
    if led_on < params.trigger_current:
        out.append(f"LED current when on is {ma:.1f} mA, below the opto-triac driver's trigger current "
                   f"{params.trigger_current * 1e3:.0f} mA: the triac may not fire; lower led_resistor.")
    if led_on > params.sink_guaranteed:
        out.append(f"LED current when on is {ma:.1f} mA, above the comparator's guaranteed sink current "
                   f"{params.sink_guaranteed * 1e3:.0f} mA: typical parts sink more, but output_low rises; "
                   f"check the datasheet's output-low curve.")
    if led_on > params.led_current_max:
        out.append(f"LED current when on is {ma:.1f} mA, above the LED's absolute maximum "
                   f"{params.led_current_max * 1e3:.0f} mA: raise led_resistor.")
    v_max = max(v_inputs)
    if v_max > params.rail - COMMON_MODE_HEADROOM:
        out.append(f"a comparator input reaches {v_max:.2f} V, within {COMMON_MODE_HEADROOM} V of the rail: "
                   f"outside the typical input common-mode range; lower the dividers' voltages.")
    return tuple(out)


def switching_temperatures(params):
    """Thermistor temperatures at which the fan switches on and off, with the circuit's operating values.

    Parameters
    ----------
    params : CircuitParams
        The circuit.

    Returns
    -------
    Thresholds
        Switching temperatures [degC], hysteresis [K], input voltages [V], LED current [A], thermistor
        dissipation [W] at each threshold and plain-language findings.
    """
    k = _threshold_resistances(*_kernel_args(params), params.feedback_on, params.position)
    r_on, r_off = float(k["r_on"]), float(k["r_off"])
    if math.isnan(r_on) or math.isnan(r_off):
        which = "on" if math.isnan(r_on) else "off"
        raise ValueError(
            f"the circuit never switches {which}: no thermistor resistance brings the sense divider to the "
            f"comparator's threshold (check the reference divider, sense resistors and feedback)")
    on_c = float(params.thermistor.temperature(r_on))
    off_c = float(params.thermistor.temperature(r_off))
    if (on_c - off_c) * (1.0 if params.action == "close-on-rise" else -1.0) < 0.0:
        raise ValueError(f"switch-on ({on_c:.2f} degC) and switch-off ({off_c:.2f} degC) are in the wrong order "
                         f"for action '{params.action}': the feedback does not give positive hysteresis")
    led_on = led_on_current(params)
    v_th_on, v_th_off = float(k["v_th_on"]), float(k["v_th_off"])
    v_in = (float(k["v_plus_on"]), float(k["v_minus_on"]), float(k["v_plus_off"]), float(k["v_minus_off"]))
    return Thresholds(
        on_c=on_c, off_c=off_c, hysteresis_k=abs(on_c - off_c), r_on=r_on, r_off=r_off,
        v_plus_on=v_in[0], v_minus_on=v_in[1], v_plus_off=v_in[2], v_minus_off=v_in[3],
        v_out_high=float(k["v_out_high"]), led_current_on=led_on,
        # P = V^2/R (Joule's law)
        sense_power_on_w=v_th_on**2 / r_on, sense_power_off_w=v_th_off**2 / r_off,
        findings=_findings(params, led_on, v_in))


def _node_function(params):
    """Closure state(temp_c, fan_on, led=True) -> (v_sense [V], v_ref [V], i_led [A], r_t [ohm], r_up [ohm]):
    node voltages, LED current, thermistor resistance and upper sense leg at thermistor temperature temp_c
    [degC] with the output sinking where fan_on; the circuit's constants are computed once. With
    led=False in the reference arrangement, v_ref and i_led are None (the sense divider does not need them)."""
    rail, fb, v_ol, led_r = params.rail, params.feedback, params.output_low, params.led_resistor
    r_f = params.sense_resistance
    lower = params.position == "lower"
    sense_fb = params.feedback_on == "sense"
    resistance = params.thermistor.resistance
    i_s, n_vt = _led(params)
    i_led_on = led_on_current(params)
    has_fb = math.isfinite(fb)
    ref_u, ref_l = params.reference_upper, params.reference_lower
    v_ref0, r_ref = rail * ref_l / (ref_u + ref_l), ref_u * ref_l / (ref_u + ref_l)  # Thevenin of the divider

    def loaded(v_th, r_th, on):
        # Thevenin node (v_th, r_th) with the feedback resistor to the output: sinking -> Millman's theorem
        # toward output_low; off -> the LED loop current rail -> R_led -> LED -> R_fb -> node
        if not has_fb:
            return v_th, np.where(on, i_led_on, 0.0)
        i_off = _loop(rail - v_th, led_r + fb + r_th, i_s, n_vt)
        v_low = v_th + (v_ol - v_th) * r_th / (fb + r_th)
        return np.where(on, v_low, v_th + i_off * r_th), np.where(on, i_led_on, i_off)

    def state(temp_c, fan_on, led=True):
        r_t = resistance(temp_c)
        r_up, r_low = (r_f, r_t) if lower else (r_t, r_f)
        v_sense = rail * r_low / (r_up + r_low)  # unloaded divider
        if sense_fb:
            v_sense, i_led = loaded(v_sense, r_up * r_low / (r_up + r_low), fan_on)
            v_ref = v_ref0
        elif led:
            v_ref, i_led = loaded(v_ref0, r_ref, fan_on)
        else:
            v_ref = i_led = None
        return v_sense, v_ref, i_led, r_t, r_up

    return state


def _scalar(x):
    return float(x) if np.ndim(x) == 0 else x


def thermistor_power_function(params):
    """Fast form of `thermistor_power` for a simulation: the circuit's constants computed once.

    Parameters
    ----------
    params : CircuitParams
        The circuit.

    Returns
    -------
    callable
        power(temp_c, fan_on) -> thermistor dissipation [W]; temp_c [degC] and fan_on (True where the output
        sinks) floats or arrays. About 10 us per scalar call.
    """
    state = _node_function(params)
    rail, lower = params.rail, params.position == "lower"

    def power(temp_c, fan_on):
        v_sense, _, _, r_t, _ = state(temp_c, fan_on, led=False)
        v_t = v_sense if lower else rail - v_sense
        return _scalar(v_t**2 / r_t)  # Joule's law

    return power


def thermistor_power(params, temp_c, fan_on):
    """Power dissipated in the thermistor at a given thermistor temperature and output state.

    Exact node solution in closed form (no iteration), vectorised. In a simulation, build the fast form
    once with `thermistor_power_function` and call that at every step.

    Parameters
    ----------
    params : CircuitParams
        The circuit.
    temp_c : float or array
        Thermistor temperature [degC].
    fan_on : bool or array of bool
        True where the comparator output sinks (fan on).

    Returns
    -------
    float or array
        Thermistor dissipation [W].
    """
    return thermistor_power_function(params)(temp_c, fan_on)


def supply_current(params, temp_c, fan_on):
    """Current the circuit draws from the rail (dividers and LED; not the comparator's own supply current).

    Parameters
    ----------
    params : CircuitParams
        The circuit.
    temp_c : float or array
        Thermistor temperature [degC].
    fan_on : bool or array of bool
        True where the comparator output sinks (fan on).

    Returns
    -------
    float or array
        Rail current [A].
    """
    v_sense, v_ref, i_led, _, r_up = _node_function(params)(temp_c, fan_on)
    # KCL at the rail: the current through every element tied to it
    return _scalar((params.rail - v_sense) / r_up + (params.rail - v_ref) / params.reference_upper + i_led)


def air_temperatures(thresholds, params, dissipation_constant):
    """Air temperatures at which the fan switches, allowing for the thermistor's self-heating.

    In steady state the thermistor sits above the air by its dissipation over its dissipation constant,
    T_th = T_air + P(T_th)/delta. At a switching point T_th is the threshold, so T_air follows directly.

    Parameters
    ----------
    thresholds : Thresholds
        Result of `switching_temperatures` for `params`.
    params : CircuitParams
        The circuit.
    dissipation_constant : float
        Thermistor dissipation constant delta [W/K] (epoxy bead ~0.5-1e-3 in still air).

    Returns
    -------
    tuple of float
        (on_air_c, off_air_c) [degC].
    """
    if not (isinstance(dissipation_constant, numbers.Real) and dissipation_constant > 0.0):
        raise ValueError(f"thermistor dissipation constant must be positive in W/K (got {dissipation_constant!r})")
    # before switching on the output is off; before switching off it sinks
    p_on = thermistor_power(params, thresholds.on_c, False)
    p_off = thermistor_power(params, thresholds.off_c, True)
    # self-heating dT = P/delta (thermistor makers' application notes on dissipation constant)
    return thresholds.on_c - p_on / dissipation_constant, thresholds.off_c - p_off / dissipation_constant
