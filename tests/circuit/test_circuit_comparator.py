"""Comparator stage with hysteresis against an application-note worked example and hand nodal analysis."""

import dataclasses
import math

import numpy as np
import pytest
from scipy.optimize import brentq

from atticsim.circuit.comparator import (
    K_OVER_Q, CircuitParams, air_temperatures, derived_position, diode_loop_current, led_on_current,
    led_saturation_current, supply_current, switching_temperatures, thermistor_power)
from atticsim.circuit.thermistor import Thermistor

NTC = Thermistor.from_beta(10e3, 3950.0)
VT25 = K_OVER_Q * 298.15  # thermal voltage at 25 degC [V]


def beta_t(r):
    """Beta equation solved for T, written out by hand (thermistor makers' notes), degC."""
    return 1.0 / (1.0 / 298.15 + math.log(r / 10e3) / 3950.0) - 273.15


def ideal(**kw):
    """The circuit with an ideal output stage: a pull-up of 1 mOhm and 1 uV, output low 0 V."""
    base = dict(rail=12.0, reference_upper=4.7e3, reference_lower=10e3, sense_fixed=10e3, sense_trim=0.0,
                feedback=100e3, led_resistor=1e-3, led_forward=1e-6, output_low=0.0, thermistor=NTC)
    base.update(kw)
    return CircuitParams(**base)


def test_application_note_hysteresis_example():
    # Worked example of a comparator maker's application note on adding hysteresis (our own values,
    # worked by hand with its formulas): Vcc = 12 V, R1 = 4.7 k (rail to +), R2 = 10 k (+ to ground), RH = 100 k
    # (output to +), ideal output: V_H = 8.28214 V, V_L = 7.91035 V.
    p = ideal(feedback_on="reference", action="close-on-rise")
    th = switching_temperatures(p)
    assert th.v_plus_on == pytest.approx(8.28214, abs=1e-3)
    assert th.v_plus_off == pytest.approx(7.91035, abs=1e-3)
    # the note's closed form, G = 1/R1 + 1/R2 + 1/RH, V_H = (Vcc/R1 + V_OH/RH)/G, V_L = (Vcc/R1 + V_OL/RH)/G
    g = 1 / 4.7e3 + 1 / 10e3 + 1 / 100e3
    assert th.v_plus_on == pytest.approx((12 / 4.7e3 + 12 / 100e3) / g, abs=1e-6)
    assert th.v_plus_off == pytest.approx((12 / 4.7e3) / g, abs=1e-6)
    # the NTC on top of 10 k: V_s = 12 * 10k / (R_t + 10k) reaches V_H / V_L (Ohm's law)
    assert th.on_c == pytest.approx(beta_t(10e3 * (12 - 8.282136) / 8.282136), abs=2e-3)
    assert th.off_c == pytest.approx(beta_t(10e3 * (12 - 7.910345) / 7.910345), abs=2e-3)


def test_sense_arrangement_by_hand_nodal_analysis():
    # NTC lower, 10 k from the rail, feedback 100 k from an ideal output to the sense node; the sense node
    # switches when it crosses the reference, V = 12 * 10k / 14.7k. KCL at the sense node (Kirchhoff):
    #   output high (12 V): (12 - V)/R_f + (12 - V)/R_H = V/R_t
    #   output low (0 V):   (12 - V)/R_f - V/R_H       = V/R_t
    p = ideal(feedback_on="sense", action="close-on-rise")
    th = switching_temperatures(p)
    v = 12 * 10e3 / 14.7e3
    r_on = v / ((12 - v) / 10e3 + (12 - v) / 100e3)
    r_off = v / ((12 - v) / 10e3 - v / 100e3)
    assert th.r_on == pytest.approx(r_on, rel=1e-6)
    assert th.r_off == pytest.approx(r_off, rel=1e-6)
    assert th.on_c == pytest.approx(beta_t(r_on), abs=1e-4)
    assert th.off_c == pytest.approx(beta_t(r_off), abs=1e-4)
    assert th.v_minus_on == pytest.approx(v, abs=1e-9)


def test_input_offset_moves_the_switching_node_voltage():
    # the output switches where V(+) - V(-) = offset: with +5 mV the sense node switches 5 mV higher
    p = ideal(feedback_on="sense", action="close-on-rise", input_offset=0.005)
    th = switching_temperatures(p)
    v = 12 * 10e3 / 14.7e3 + 0.005
    assert th.v_plus_on == pytest.approx(v, abs=1e-9)
    assert th.r_on == pytest.approx(v / ((12 - v) / 10e3 + (12 - v) / 100e3), rel=1e-6)


def test_without_feedback_there_is_no_hysteresis():
    # no feedback: both thresholds where the NTC equals the upper resistor times V_ref/(Vcc - V_ref)
    p = ideal(feedback_on="sense", action="close-on-rise", feedback=math.inf, reference_upper=10e3)
    th = switching_temperatures(p)
    assert th.hysteresis_k == 0.0
    assert th.on_c == pytest.approx(25.0, abs=1e-9)  # R_t = 10 k = R25


def test_unequal_reference_divider_by_ohms_law():
    # Our own worked case (the demo circuit's reference): 22 k over 12 k on a 9.1 V rail.
    # Ohm's law, unloaded divider: V = 9.1 V x 12 k / (22 k + 12 k) = 109.2 / 34 = 3.2118 V; the comparator's
    # input draws nothing, and at the switching points V(-) is that node.
    p = CircuitParams(rail=9.1, reference_upper=22e3, reference_lower=12e3, sense_fixed=39e3, sense_trim=12e3,
                      feedback=300e3, led_resistor=1.3e3, led_forward=1.2,
                      thermistor=Thermistor.from_beta(47e3, 4100.0))
    th = switching_temperatures(p)
    assert th.v_minus_on == pytest.approx(9.1 * 12e3 / 34e3, rel=1e-9)
    assert th.v_minus_on == pytest.approx(3.2118, abs=1e-4)


def test_led_current_when_on_by_hand():
    # 12 V rail, 0.2 V output low, 1.2 V at 10 mA: 1060 ohm leaves exactly 10.6 V for 10 mA (Ohm's law)
    p = ideal(led_resistor=1060.0, led_forward=1.2, output_low=0.2)
    assert led_on_current(p) == pytest.approx(0.010, rel=1e-9)


@pytest.mark.parametrize("volts, ohms", [(10.0, 101e3), (10.6, 1060.0), (3.0, 50.0)])
def test_diode_loop_closed_form_against_brentq(volts, ohms):
    # Shockley law I = I_s (exp(V_d/(n V_T)) - 1) in series with R, solved by bracketing (scipy brentq)
    i_s, n_vt = led_saturation_current(1.2, 0.010, 2.0), 2.0 * VT25
    f = lambda i: volts - i * ohms - n_vt * math.log1p(i / i_s)
    ref = brentq(f, 0.0, volts / ohms, xtol=1e-18, rtol=1e-14)
    assert diode_loop_current(volts, ohms, i_s, n_vt) == pytest.approx(ref, rel=1e-9)


def test_output_high_voltage_is_self_consistent_with_the_led():
    # LED pull-up, output off: the microamp feedback current sets the LED drop (well under its 10 mA value)
    p = CircuitParams(rail=12.0, reference_upper=4.7e3, reference_lower=10e3, sense_fixed=10e3, sense_trim=0.0,
                      feedback=100e3, led_resistor=1e3, led_forward=1.2, thermistor=NTC, feedback_on="reference")
    th = switching_temperatures(p)
    i = (th.v_out_high - th.v_plus_on) / 100e3  # Ohm's law in the feedback resistor
    i_s = 0.010 / math.expm1(1.2 / (2.0 * VT25))
    v_f = 2.0 * VT25 * math.log1p(i / i_s)  # Shockley law by hand
    assert th.v_out_high + i * 1e3 + v_f == pytest.approx(12.0, abs=1e-9)
    assert 20e-6 < i < 40e-6 and v_f < 1.0
    # KCL at the reference node: (12 - V)/4.7k + i = V/10k
    assert (12 - th.v_plus_on) / 4.7e3 + i == pytest.approx(th.v_plus_on / 10e3, rel=1e-9)


def test_thermistor_power_by_hand():
    # unloaded divider (reference arrangement, NTC upper, 10 k lower): P = (12 - V_s)^2 / R_t
    p = ideal(feedback_on="reference", action="close-on-rise")
    r_t = 10e3 * math.exp(3950 * (1 / 313.15 - 1 / 298.15))
    v_s = 12 * 10e3 / (r_t + 10e3)
    assert thermistor_power(p, 40.0, False) == pytest.approx((12 - v_s) ** 2 / r_t, rel=1e-9)
    # loaded sense node (sense arrangement, NTC lower, output sinking at 0 V): Millman's theorem
    p = ideal(feedback_on="sense", action="close-on-rise")
    v = (12 / 10e3) / (1 / 10e3 + 1 / r_t + 1 / 100e3)
    assert thermistor_power(p, np.array([40.0]), np.array([True])) == pytest.approx([v**2 / r_t], rel=1e-9)


def test_threshold_powers_and_air_temperatures():
    p = CircuitParams(rail=12.0, reference_upper=4.7e3, reference_lower=10e3, sense_fixed=10e3, sense_trim=0.0,
                      feedback=100e3, led_resistor=1e3, led_forward=1.2, thermistor=NTC, feedback_on="sense")
    th = switching_temperatures(p)
    # at the switching node voltage V (NTC lower): P = V^2 / R_t (Joule's law)
    assert th.sense_power_on_w == pytest.approx(th.v_plus_on**2 / th.r_on, rel=1e-12)
    assert thermistor_power(p, th.on_c, False) == pytest.approx(th.sense_power_on_w, rel=1e-9)
    assert thermistor_power(p, th.off_c, True) == pytest.approx(th.sense_power_off_w, rel=1e-9)
    # self-heating dT = P/delta (thermistor makers' notes): a 1 mW/K bead switches at lower air temperatures
    on_air, off_air = air_temperatures(th, p, 1e-3)
    assert on_air == pytest.approx(th.on_c - th.sense_power_on_w / 1e-3, abs=1e-9)
    assert off_air == pytest.approx(th.off_c - th.sense_power_off_w / 1e-3, abs=1e-9)
    assert 1.0 < th.on_c - on_air < 5.0  # a divider of a few mW on a 1 mW/K bead (makers' application pages: ~3 K)


def test_supply_current_by_hand():
    # reference arrangement, fan on: rail current = sense divider + reference upper resistor + LED (KCL)
    p = ideal(feedback_on="reference", action="close-on-rise", led_resistor=1060.0, led_forward=1.2, output_low=0.2)
    r_t = NTC.resistance(45.0)
    v_ref = (12 / 4.7e3 + 0.2 / 100e3) / (1 / 4.7e3 + 1 / 10e3 + 1 / 100e3)  # Millman's theorem
    want = 12 / (r_t + 10e3) + (12 - v_ref) / 4.7e3 + 0.010
    assert supply_current(p, 45.0, True) == pytest.approx(want, rel=1e-9)


def test_fan_switches_on_warm_in_heat_and_cold_in_cold_mode():
    # thermistor position per the issue: the output sinks when V(+) < V(-)
    assert derived_position("close-on-rise", "sense") == "lower"
    assert derived_position("close-on-rise", "reference") == "upper"
    assert derived_position("close-on-fall", "sense") == "upper"
    assert derived_position("close-on-fall", "reference") == "lower"
    for fb_on in ("sense", "reference"):
        heat = switching_temperatures(ideal(feedback_on=fb_on, action="close-on-rise", sense_fixed=5e3))
        cold = switching_temperatures(ideal(feedback_on=fb_on, action="close-on-fall", sense_fixed=20e3))
        assert heat.on_c > heat.off_c
        assert cold.on_c < cold.off_c


def test_findings_flag_led_current_beyond_guaranteed_sink():
    p = ideal(led_resistor=1060.0, led_forward=1.2, output_low=0.2)  # 10 mA
    assert any("guaranteed sink" in f for f in switching_temperatures(p).findings)
    p = dataclasses.replace(p, led_resistor=2e3)  # about 5 mA: under a 10 mA trigger grade
    assert any("trigger current" in f for f in switching_temperatures(p).findings)


def test_bad_input_raises():
    with pytest.raises(ValueError, match="contradicts"):
        ideal(feedback_on="sense", action="close-on-rise", thermistor_position="upper")
    with pytest.raises(ValueError, match="reference_upper"):
        ideal(reference_upper=-1.0)
    with pytest.raises(ValueError, match="action"):
        ideal(action="warm")
    with pytest.raises(ValueError, match="feedback_on"):
        ideal(feedback_on="output")
    with pytest.raises(ValueError, match="led_forward"):
        ideal(led_forward=13.0)
    with pytest.raises(ValueError, match="dissipation constant"):
        p = ideal()
        air_temperatures(switching_temperatures(p), p, 0.0)
    # NTC upper, 100 k lower, 10 k feedback: the output-high current alone holds the node above the
    # reference (0.44 mA x 100 k >> 6 V), so the fan never comes on
    p = ideal(feedback_on="sense", action="close-on-fall", reference_upper=10e3, sense_fixed=100e3, feedback=10e3,
              led_resistor=1e3, led_forward=1.2)
    with pytest.raises(ValueError, match="never switches on"):
        switching_temperatures(p)


# --- tolerance analysis -------------------------------------------------------------------------------

from atticsim.circuit.tolerance import Tolerances, monte_carlo, tolerance_analysis, worst_case  # noqa: E402

NO_TOL = dict(resistor=0.0, trim=0.0, r25=0.0, beta=0.0, rail=0.0, offset=0.0)


def test_ratiometric_circuit_ignores_rail_tolerance():
    # with an ideal output every voltage scales with the rail, so the thresholds do not move
    # (ratiometric divider circuits; common practice, no source)
    p = ideal(feedback_on="reference", action="close-on-rise")
    on, off, _, bad = worst_case(p, Tolerances(**{**NO_TOL, "rail": 0.05}))
    nominal = switching_temperatures(p)
    # (the 1 uV stand-in pull-up is not quite ideal: nano-kelvin residue)
    assert on == pytest.approx((nominal.on_c, nominal.on_c), abs=1e-6)
    assert off == pytest.approx((nominal.off_c, nominal.off_c), abs=1e-6)
    assert bad == 0
    # a real LED's fixed ~1 V drop breaks the scaling: then the rail tolerance does move the switch-on point
    p = dataclasses.replace(p, led_resistor=1e3, led_forward=1.2)
    on, _, _, _ = worst_case(p, Tolerances(**{**NO_TOL, "rail": 0.05}))
    assert on[1] - on[0] > 0.01


def test_r25_tolerance_by_hand():
    # the circuit fixes the thermistor resistance at the switch-on point; a part with R25 +-1 % reaches it at
    # 1/T = 1/T25 + ln(R_on / (R25 (1 +- 0.01)))/B (Beta equation, by hand)
    p = ideal(feedback_on="reference", action="close-on-rise")
    r_on = switching_temperatures(p).r_on
    t = sorted(1 / (1 / 298.15 + math.log(r_on / (10e3 * f)) / 3950) - 273.15 for f in (0.99, 1.01))
    on, _, _, _ = worst_case(p, Tolerances(**{**NO_TOL, "r25": 0.01}))
    assert on == pytest.approx(tuple(t), abs=1e-9)


def test_offset_tolerance_by_hand():
    # +-5 mV offset: the sense divider (NTC upper, 10 k lower) switches at V_H -+ 5 mV (app-note V_H above)
    p = ideal(feedback_on="reference", action="close-on-rise")
    v_h = switching_temperatures(p).v_plus_on
    t = sorted(beta_t(10e3 * (12 - v) / v) for v in (v_h - 0.005, v_h + 0.005))
    on, _, _, _ = worst_case(p, Tolerances(**{**NO_TOL, "offset": 0.005}))
    assert on == pytest.approx(tuple(t), abs=1e-6)


def test_monte_carlo_band_is_seeded_and_inside_the_worst_case():
    p = CircuitParams(rail=12.0, reference_upper=4.7e3, reference_lower=10e3, sense_fixed=9.1e3,
                      sense_trim=900.0, feedback=100e3, led_resistor=1e3, led_forward=1.2, thermistor=NTC,
                      feedback_on="reference")
    res = tolerance_analysis(p, Tolerances(trim=0.01), samples=2000, seed=7)
    assert res.on_worst_c[0] < res.on_band_c[0] < res.nominal.on_c < res.on_band_c[1] < res.on_worst_c[1]
    assert res.off_worst_c[0] < res.off_band_c[0] < res.nominal.off_c < res.off_band_c[1] < res.off_worst_c[1]
    assert res.never_switch == 0
    again = monte_carlo(p, Tolerances(trim=0.01), samples=2000, seed=7)
    assert again[0] == res.on_band_c and again[1] == res.off_band_c
    assert monte_carlo(p, Tolerances(trim=0.01), samples=2000, seed=8)[0] != res.on_band_c


def test_tolerances_bad_input():
    with pytest.raises(ValueError, match="resistor tolerance"):
        Tolerances(resistor=-0.01)
    with pytest.raises(ValueError, match="offset"):
        Tolerances(offset=2.0)
    with pytest.raises(ValueError, match="sample count"):
        monte_carlo(ideal(), samples=5)
