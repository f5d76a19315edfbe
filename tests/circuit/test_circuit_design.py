"""Standard resistor series (IEC 60063) and designing the circuit from wanted temperatures."""

import math

import pytest

from atticsim.circuit.comparator import CircuitParams, switching_temperatures
from atticsim.circuit.design import design_circuit
from atticsim.circuit.eseries import E12, E24, E96, round_down, round_nearest, round_up, series_values
from atticsim.circuit.thermistor import Thermistor

NTC = Thermistor.from_beta(10e3, 3950.0)

# IEC 60063:2015 table values written out here as printed in the standard's E24 table
IEC_E24 = [1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8,
           7.5, 8.2, 9.1]


def test_series_tables():
    assert list(E24) == IEC_E24
    # E12 is every other E24 value (IEC 60063)
    assert list(E12) == IEC_E24[::2]
    # the conventional values that differ from round(10^(i/24), 1) (IEC 60063, note to table 1)
    computed = [round(10 ** (i / 24), 1) for i in range(24)]
    assert [v for v, c in zip(E24, computed) if v != c] == [2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2]
    # E96: 96 values, including the familiar 1.02, 4.99, 9.76 (IEC 60063 table 3)
    assert len(E96) == 96 and {1.02, 1.05, 2.49, 4.99, 6.04, 9.76} <= set(E96)
    assert series_values("e96") == E96
    with pytest.raises(ValueError, match="E12, E24, E96"):
        series_values("E7")


def test_rounding_directions():
    assert round_down(4.8e3, "E24") == 4.7e3
    assert round_up(4.8e3, "E24") == 5.1e3
    assert round_up(9.2e3, "E24") == 10e3  # across the decade
    assert round_down(4.7e3) == round_up(4.7e3) == 4.7e3  # a series value stays
    assert round_down(5.0e5, "E96") == 4.99e5
    assert round_nearest(5.3e3, "E12") == 5.6e3  # log-nearest of 4.7 k / 5.6 k
    with pytest.raises(ValueError, match="positive"):
        round_down(-1.0)


def _parts(**kw):
    base = dict(rail=12.0, reference_upper=4.7e3, reference_lower=10e3, sense_fixed=8.2e3, sense_trim=0.0,
                feedback=1e6, led_resistor=1e3, led_forward=1.2, thermistor=NTC)
    base.update(kw)
    return CircuitParams(**base)


def test_design_matches_hand_solution_of_the_application_note_circuit():
    # Ideal output (1 mOhm / 1 uV pull-up, 0 V low), reference arrangement, NTC above R_f, switch closing on rise.
    # App-note thresholds V_L/Vcc = (1/R1)/(g0 + x), 1 - V_H/Vcc = (1/R2)/(g0 + x), g0 = 1/R1 + 1/R2, x = 1/RH;
    # divider V/Vcc = R_f/(R_t + R_f). Dividing the two: (R1/R2) R_f (R_on + R_f) = R_on (R_off + R_f), a
    # quadratic in R_f; then g0 + x = (R_off + R_f)/(R1 R_f). Solved by hand here.
    r1, r2 = 4.7e3, 10e3
    p = _parts(feedback_on="reference", action="close-on-rise", led_resistor=1e-3, led_forward=1e-6, output_low=0.0,
               sense_fixed=1e3)
    r_on = 10e3 * math.exp(3950 * (1 / 313.15 - 1 / 298.15))  # Beta equation at 40 degC
    r_off = 10e3 * math.exp(3950 * (1 / 308.15 - 1 / 298.15))  # at 35 degC
    k = r1 / r2
    b = r_on * (k - 1)
    r_f = (-b + math.sqrt(b * b + 4 * k * r_on * r_off)) / (2 * k)
    r_h = 1 / ((r_off + r_f) / (r1 * r_f) - 1 / r1 - 1 / r2)
    d = design_circuit(p, 40.0, 35.0, series="E24")
    assert d.sense_trim_exact + 1e3 == pytest.approx(r_f, rel=1e-6)
    assert d.feedback_exact == pytest.approx(r_h, rel=1e-6)


@pytest.mark.parametrize("feedback_on, action, on, off", [
    ("sense", "close-on-rise", 40.0, 35.0), ("reference", "close-on-rise", 45.0, 40.0),
    ("sense", "close-on-fall", 5.0, 8.0), ("reference", "close-on-fall", 3.0, 5.0)])
def test_design_rounds_the_safe_way(feedback_on, action, on, off):
    p = _parts(feedback_on=feedback_on, action=action, sense_fixed=1e3)
    d = design_circuit(p, on, off, series="E24")
    # the exact values give the wanted temperatures
    exact = switching_temperatures(CircuitParams(**{**p.__dict__, "feedback": d.feedback_exact,
                                                    "sense_trim": d.sense_trim_exact}))
    assert exact.on_c == pytest.approx(on, abs=1e-6) and exact.off_c == pytest.approx(off, abs=1e-6)
    # the feedback resistor is an E24 value below the exact one (more hysteresis, never less)
    mant = d.feedback / 10 ** math.floor(math.log10(d.feedback))
    assert any(math.isclose(mant, v) for v in IEC_E24)
    assert d.feedback <= d.feedback_exact
    sign = 1.0 if action == "close-on-rise" else -1.0
    # with the trimmer set: switch-on exactly as wanted, hysteresis at least as wanted
    assert d.thresholds.on_c == pytest.approx(on, abs=1e-6)
    assert d.thresholds.hysteresis_k >= abs(on - off) - 1e-9
    # with a fixed series resistor in the trimmer's place the fan comes on no later than wanted
    assert (on - d.thresholds_fixed.on_c) * sign >= -1e-9
    assert d.thresholds_fixed == switching_temperatures(d.params_fixed)


def test_design_from_on_and_hysteresis():
    p = _parts(feedback_on="sense", action="close-on-rise", sense_fixed=1e3)
    a = design_circuit(p, 40.0, hysteresis_k=4.0)
    b = design_circuit(p, 40.0, 36.0)
    assert a.feedback_exact == pytest.approx(b.feedback_exact, rel=1e-12)
    assert a.wanted_off_c == 36.0


def test_design_refuses_what_the_parts_cannot_do():
    p = _parts(feedback_on="sense", action="close-on-rise", sense_fixed=47e3)
    with pytest.raises(ValueError, match="sense_fixed"):
        design_circuit(p, 40.0, 35.0)
    p = _parts(feedback_on="sense", action="close-on-rise", sense_fixed=1e3)
    with pytest.raises(ValueError, match="trimmer"):
        design_circuit(p, 40.0, 35.0, trim_max=500.0)
    with pytest.raises(ValueError, match="switch off below"):
        design_circuit(p, 35.0, 40.0)
    with pytest.raises(ValueError, match="exactly one"):
        design_circuit(p, 40.0, 35.0, hysteresis_k=5.0)
    # off at -55 degC needs a feedback resistor between 6.2 k and 6.8 k; rounded down to 6.2 k the output-low
    # pull on the node outweighs the 1 k upper leg even with an open thermistor, so the fan would never stop
    with pytest.raises(ValueError, match="no longer switches"):
        design_circuit(p, 40.0, -55.0)
    # the reference arrangement's hysteresis is bounded: the non-inverting input swings at most between
    # the LED-loaded high level and the output-low level
    p = _parts(feedback_on="reference", action="close-on-rise", sense_fixed=1e3)
    with pytest.raises(ValueError, match="no feedback resistor"):
        design_circuit(p, 45.0, -60.0)


# --- designing for the air temperature ----------------------------------------------------------------

@pytest.mark.parametrize("feedback_on,action,on,off", [
    ("reference", "close-on-rise", 45.0, 41.0), ("sense", "close-on-fall", 5.0, 8.0)])
def test_design_for_the_air_puts_the_air_at_the_wanted_temperatures(feedback_on, action, on, off):
    # Steady self-heating dT = P / delta (dissipation constant, thermistor makers' definition): at the
    # switch-on point the thermistor sits P_on / delta above the air. Designed for the air, the trimmed
    # circuit must switch when the AIR is at `on` exactly, the thermistor P_on / delta above it.
    from atticsim.circuit import air_temperatures

    delta = 1.0e-3  # W/K, an epoxy bead in still air (makers' application pages: 0.5-1 mW/K)
    p = _parts(feedback_on=feedback_on, action=action, sense_fixed=500.0)
    d = design_circuit(p, on, off, self_heating=delta, basis="air")
    th = d.thresholds
    assert d.air_on_c == pytest.approx(on, abs=1e-6)
    assert th.on_c - d.air_on_c == pytest.approx(th.sense_power_on_w / delta, rel=1e-9)
    # the circuit library's own air temperatures of the chosen parts agree
    assert air_temperatures(th, d.params, delta)[0] == pytest.approx(on, abs=1e-6)
    # the hysteresis of the air is at least the one asked (feedback rounded the safe way)
    sign = 1.0 if action == "close-on-rise" else -1.0
    assert (d.air_on_c - d.air_off_c) * sign >= abs(on - off) - 1e-9
    # a 10 k NTC in a divider dissipates mW: the thermistor's thresholds differ from the air's by > 0.1 K,
    # so a design for the thermistor would miss the air by that much
    t = design_circuit(p, on, off, self_heating=delta)
    assert t.thresholds.on_c == pytest.approx(on, abs=1e-6) and abs(t.air_on_c - on) > 0.1


def test_air_and_thermistor_designs_agree_without_self_heating():
    p = _parts(feedback_on="sense", action="close-on-rise", sense_fixed=1e3)
    air = design_circuit(p, 40.0, 35.0, self_heating=lambda power, t_air: 0.0, basis="air")
    th = design_circuit(p, 40.0, 35.0)
    assert air.feedback_exact == pytest.approx(th.feedback_exact, rel=1e-9)
    assert air.sense_trim == pytest.approx(th.sense_trim, rel=1e-9)
    with pytest.raises(ValueError, match="self-heating"):
        design_circuit(p, 40.0, 35.0, basis="air")


def test_design_for_the_air_on_the_demo_circuit():
    # Our demonstration circuit (invented values: 47 k B4100 NTC, 9.1 V rail, 1.5 mW/K): the thermistor
    # dissipates about 0.43 mW at 40 degC, 0.29 K of self-heating (P / delta). Designed for the air, the
    # thermistor's own threshold sits that much above the wanted 40 degC.
    from pathlib import Path

    from atticsim.scenario import load_scenario

    sc = load_scenario(Path(__file__).resolve().parents[2] / "scenarios" / "heron_lane_circuit.toml")
    delta = sc.sensor.dissipation_constant
    d = design_circuit(sc.thermostat.circuit_params(), 40.0, 35.0, self_heating=delta, basis="air")
    assert d.air_on_c == pytest.approx(40.0, abs=1e-6)
    assert d.thresholds.on_c - 40.0 == pytest.approx(d.thresholds.sense_power_on_w / delta, rel=1e-9)
    assert 0.2 < d.thresholds.on_c - 40.0 < 0.4
