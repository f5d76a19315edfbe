"""Mains-side checks worked by hand: capacitive dropper, discharge, triac loss, ratings."""

import math

import pytest

from atticsim.circuit.mains import (
    MAINS_CAUTION, MainsParams, check_mains, discharge_voltage, dropper_current, dropper_dc_current,
    triac_conduction_loss)


def test_dropper_current_by_hand():
    # capacitive reactance X_C = 1/(2 pi f C), I = V / X_C (any circuit-theory text, AC Ohm's law)
    assert dropper_current(120.0, 60.0, 1e-6) == pytest.approx(120.0 * 2 * math.pi * 60.0 * 1e-6, rel=1e-12)
    # trade fact (common practice, no source): 1 uF on 120 V / 60 Hz gives about 45 mA
    assert dropper_current(120.0, 60.0, 1e-6) == pytest.approx(0.045, abs=0.001)
    # worked by hand: 0.47 uF on 230 V / 50 Hz -> 230 * 2 pi * 50 * 0.47e-6 = 33.96 mA
    assert dropper_current(230.0, 50.0, 0.47e-6) == pytest.approx(0.03396, abs=1e-5)


def test_demo_dropper_at_high_line_by_hand():
    # Our own worked case, the demo circuit's 0.56 uF dropper at the +10 % high line of a 120 V / 60 Hz supply:
    # X_C = 1 / (2 pi 60 Hz 0.56 uF) = 1 / 2.11115e-4 S = 4736.8 ohm; I = 132 V / 4736.8 ohm = 27.87 mA
    x_c = 1.0 / (2 * math.pi * 60.0 * 0.56e-6)
    assert x_c == pytest.approx(4736.8, abs=0.1)
    assert dropper_current(132.0, 60.0, 0.56e-6) == pytest.approx(0.02787, abs=1e-5)
    # its bleed resistor: 820 k x 0.56 uF = 0.459 s; from the high-line peak 132 sqrt 2 = 186.7 V it falls in
    # 1 s to 186.7 exp(-1 / 0.4592) = 21.15 V, under the 34 V of IEC 60335-1 cl. 22.5
    assert discharge_voltage(132.0 * math.sqrt(2), 820e3, 0.56e-6) == pytest.approx(21.15, abs=0.01)


def test_dropper_dc_current_by_hand():
    # charge balance: each half cycle the capacitor swings between -+(V_pk - V_z - 2 V_d), carrying
    # 2 C (V_pk - V_z - 2 V_d) through the bridge; two half cycles per period -> I = 4 f C (...)
    # (capacitive power supply application notes). 120 V, 60 Hz, 1 uF, 12 V zener, 1 V diodes:
    want = 4 * 60.0 * 1e-6 * (120.0 * math.sqrt(2) - 12.0 - 2.0)
    assert want == pytest.approx(0.03737, abs=1e-5)
    assert dropper_dc_current(120.0, 60.0, 1e-6, 12.0, 1.0) == pytest.approx(want, rel=1e-12)
    # with no zener and ideal diodes it is the full-wave average of the capacitor's sine current,
    # 2 sqrt(2)/pi = 0.9003 of its rms value (mean of a rectified sine, any circuit-theory text)
    assert dropper_dc_current(120.0, 60.0, 1e-6, 0.0, 0.0) == pytest.approx(
        0.9003 * dropper_current(120.0, 60.0, 1e-6), rel=1e-4)


def test_discharge_by_hand_against_iec_60335_1_cl_22_5():
    # RC discharge V(t) = V_pk exp(-t/RC): 240 V peak 339.4 V, 0.47 uF, 1 MOhm: tau = 0.47 s,
    # V(1 s) = 339.41 * exp(-1/0.47) = 40.43 V, over the 34 V of IEC 60335-1 cl. 22.5
    assert discharge_voltage(240.0 * math.sqrt(2), 1e6, 0.47e-6) == pytest.approx(40.43, abs=0.01)
    m = MainsParams(line_voltage=240.0, frequency=50, dropper_capacitance=0.47e-6, dropper_tolerance=0.0,
                    zener_voltage=12.0, bleed_resistor=1e6, fan_current=1.0)
    r = check_mains(m, 0.012)
    assert r.discharge_voltage_1s == pytest.approx(40.43, abs=0.01)
    # the largest resistor meeting 34 V after 1 s: R = 1 / (C ln(V_pk/34)) = 1/(0.47e-6 * 2.3009) = 924.7 kOhm
    assert r.bleed_resistor_max == pytest.approx(1 / (0.47e-6 * math.log(339.41 / 34.0)), rel=1e-4)
    assert any("IEC 60335-1 cl. 22.5" in f and "too large" in f for f in r.findings)
    # 680 kOhm passes: 339.41 * exp(-1/(0.68e6 * 0.47e-6)) = 14.9 V
    r = check_mains(MainsParams(**{**m.__dict__, "bleed_resistor": 680e3}), 0.012)
    assert r.discharge_voltage_1s == pytest.approx(339.41 * math.exp(-1 / 0.3196), rel=1e-4)
    assert any("meets IEC 60335-1" in f for f in r.findings)


def test_triac_loss_and_heat_sink_by_hand():
    # P = V_T0 I_avg + r_T I_rms^2, I_avg = 0.9003 I_rms (triac power application notes):
    # 1.5 A, 0.85 V, 45 mOhm -> 0.85 * 0.9003 * 1.5 + 0.045 * 2.25 = 1.2491 W
    assert triac_conduction_loss(1.5, 0.85, 0.045) == pytest.approx(1.2491, abs=1e-4)
    m = MainsParams(line_voltage=120.0, frequency=60, dropper_capacitance=1e-6, zener_voltage=12.0,
                    bleed_resistor=470e3, fan_current=1.5)
    r = check_mains(m, 0.012)
    # free air: 60 degC + 1.2491 W * 60 K/W = 134.9 degC > 115 degC (125 degC less a 10 K margin)
    assert r.triac_junction_free_air_c == pytest.approx(60 + 1.2491 * 60, abs=0.01)
    # sink: (115 - 60)/1.2491 - 2.0 (junction-case) - 0.5 (pad) = 41.53 K/W
    assert r.heatsink_rth_needed == pytest.approx((115 - 60) / 1.2491 - 2.5, abs=0.01)


def test_supply_margin_and_zener_power():
    m = MainsParams(line_voltage=120.0, frequency=60, dropper_capacitance=1e-6, zener_voltage=12.0,
                    bleed_resistor=470e3, fan_current=1.0)
    r = check_mains(m, 0.015)
    # low line 108 V, 0.9 uF: 4 * 60 * 0.9e-6 * (108 sqrt 2 - 14) = 29.97 mA; load 15 + 1 + 2 mA
    assert r.dc_available_low == pytest.approx(4 * 60 * 0.9e-6 * (108 * math.sqrt(2) - 14), rel=1e-9)
    assert r.supply_margin == pytest.approx(r.dc_available_low - 0.018, rel=1e-9)
    # high line 132 V, 1.1 uF, load off: 12 V * 4 * 60 * 1.1e-6 * (132 sqrt 2 - 14) = 0.547 W
    assert r.zener_power == pytest.approx(12 * 4 * 60 * 1.1e-6 * (132 * math.sqrt(2) - 14), rel=1e-9)
    weak = check_mains(m, 0.030)
    assert any("supply too weak" in f for f in weak.findings)


def test_usual_240v_parts_and_fuse_rule():
    # trade fact (common practice, no source): for 240 V the usual parts are a 0.5 uF, 400 V dropper and a
    # 400 V bridge: both above the +10 % high-line peak, 264 sqrt 2 = 373 V
    m = MainsParams(line_voltage=240.0, frequency=50, dropper_capacitance=0.5e-6, zener_voltage=12.0,
                    bleed_resistor=680e3, fan_current=0.8, capacitor_voltage_rating=400.0,
                    bridge_voltage_rating=400.0)
    r = check_mains(m, 0.012)
    assert r.peak_voltage_high == pytest.approx(264 * math.sqrt(2), rel=1e-12)
    assert not any("below the high-line peak" in f for f in r.findings)
    low = check_mains(MainsParams(**{**m.__dict__, "capacitor_voltage_rating": 250.0}), 0.012)
    assert any("dropper capacitor rated 250 V" in f for f in low.findings)
    # trade fact: fuse the triac side at no more than the triac's rating
    big = check_mains(MainsParams(**{**m.__dict__, "fuse_rating": 10.0}), 0.012)
    assert any("no more than the triac's rating" in f for f in big.findings)
    # suggested fuse: the smallest IEC 60127 rating at or above 1.25 x 0.8 A = 1.0 A
    assert r.fuse_suggested == 1.0
    assert r.caution == MAINS_CAUTION and "qualified person" in MAINS_CAUTION and "local" in MAINS_CAUTION
    assert any("snubber" in f for f in r.findings)


def test_bad_input_raises():
    base = dict(line_voltage=230.0, frequency=50, dropper_capacitance=0.47e-6, zener_voltage=12.0,
                bleed_resistor=470e3, fan_current=1.0)
    with pytest.raises(ValueError, match="frequency"):
        MainsParams(**{**base, "frequency": 55})
    with pytest.raises(ValueError, match="line_voltage"):
        MainsParams(**{**base, "line_voltage": 400.0})
    with pytest.raises(ValueError, match="dropper_capacitance"):
        MainsParams(**{**base, "dropper_capacitance": 0.0})
    with pytest.raises(ValueError, match="circuit supply current"):
        check_mains(MainsParams(**base), -0.01)
