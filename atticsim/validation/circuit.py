"""Validation cases: the thermostat circuit (comparator thresholds against ngspice, closed forms, mains side)."""

from __future__ import annotations

import math
from functools import lru_cache

from atticsim.validation.registry import Comparison, NotRun, case

_APP_NOTE = ("semiconductor makers' application notes on comparators with hysteresis: G = 1/R1 + 1/R2 + 1/RH, "
             "V_H = (Vcc/R1 + V_OH/RH)/G, V_L = (Vcc/R1 + V_OL/RH)/G; worked by hand")
_APP_INPUTS = ("12 V rail, R1 4.7 k (rail to +), R2 10 k (+ to ground), RH 100 k (output to +), ideal output "
               "(atticsim's model with a 1 mOhm pull-up and 0 V output low)")


def _app_note_thresholds():
    from atticsim.circuit.comparator import CircuitParams, switching_temperatures
    from atticsim.circuit.thermistor import Thermistor

    p = CircuitParams(rail=12.0, reference_upper=4.7e3, reference_lower=10e3, sense_fixed=10e3, sense_trim=0.0,
                      feedback=100e3, led_resistor=1e-3, led_forward=1e-6, output_low=0.0,
                      thermistor=Thermistor.from_beta(10e3, 3950.0), feedback_on="reference",
                      action="close-on-rise")
    return switching_temperatures(p)


@case(group="circuit", name="Comparator with hysteresis: upper threshold", source=_APP_NOTE, unit="V",
      tolerance=1e-3, digits=4, inputs=_APP_INPUTS + ": V_H = 8.2821 V")
def comparator_upper():
    g = 1 / 4.7e3 + 1 / 10e3 + 1 / 100e3
    return Comparison(_app_note_thresholds().v_plus_on, (12 / 4.7e3 + 12 / 100e3) / g)


@case(group="circuit", name="Comparator with hysteresis: lower threshold", source=_APP_NOTE, unit="V",
      tolerance=1e-3, digits=4, inputs=_APP_INPUTS + ": V_L = 7.9103 V")
def comparator_lower():
    g = 1 / 4.7e3 + 1 / 10e3 + 1 / 100e3
    return Comparison(_app_note_thresholds().v_plus_off, (12 / 4.7e3) / g)


@case(group="circuit", name="NTC resistance at 50 degC (beta equation)",
      source="beta equation R = R25 exp(B (1/T - 1/298.15)), thermistor makers' application notes; worked by "
             "hand", unit="ohm", tolerance=0.05, digits=1,
      inputs="10 kOhm at 25 degC, B = 3950 K: 10000 exp(3950 (1/323.15 - 1/298.15)) = 3588.2 ohm")
def ntc_beta():
    from atticsim.circuit.thermistor import Thermistor

    return Comparison(float(Thermistor.from_beta(10e3, 3950.0).resistance(50.0)),
                      10e3 * math.exp(3950.0 * (1 / 323.15 - 1 / 298.15)))


@case(group="circuit", name="NTC temperature at 10 kOhm (Steinhart-Hart)",
      source="Steinhart & Hart (1968), Deep-Sea Research 15: 1/T = A + B ln R + C (ln R)^3, with the widely "
             "published coefficients of 10 kOhm (at 25 degC) thermistors", unit="degC", tolerance=0.01, digits=3,
      inputs="A 1.129148e-3, B 2.34125e-4, C 8.76741e-8 (as published), R = 10000 ohm")
def ntc_steinhart_hart():
    from atticsim.circuit.thermistor import Thermistor

    th = Thermistor.from_steinhart_hart(1.129148e-3, 2.34125e-4, 8.76741e-8)
    return Comparison(float(th.temperature(10e3)), 25.0)


@case(group="circuit", name="Capacitive dropper current",
      source="I = V 2 pi f C (capacitor reactance, any circuits text); worked by hand", unit="mA",
      tolerance=0.005, digits=2, inputs="1 uF across 120 V, 60 Hz: 120 x 2 pi x 60 x 1e-6 = 45.24 mA")
def dropper():
    from atticsim.circuit.mains import dropper_current

    return Comparison(1e3 * dropper_current(120.0, 60.0, 1e-6), 1e3 * 120.0 * 2 * math.pi * 60.0 * 1e-6)


@case(group="circuit", name="Dropper's bleed resistor: voltage left 1 s after unplugging",
      source="RC discharge V = V_pk exp(-t/RC), against the limit of IEC 60335-1 cl. 22.5 (34 V after 1 s); "
             "worked by hand", unit="V", tolerance=0.01, digits=2,
      inputs="0.56 uF with 820 kOhm, unplugged at the peak of 120 V: 169.71 exp(-1 / 0.4592) = 19.23 V "
             "(under the 34 V limit)")
def bleed():
    from atticsim.circuit.mains import discharge_voltage

    peak = 120.0 * math.sqrt(2.0)
    return Comparison(discharge_voltage(peak, 820e3, 0.56e-6), peak * math.exp(-1.0 / (820e3 * 0.56e-6)))


@lru_cache(maxsize=None)
def _ngspice(name):
    from atticsim.validation.ngspice import ngspice_path, reference_circuits, run_ngspice

    if ngspice_path() is None:
        raise NotRun("ngspice not found")
    return run_ngspice(reference_circuits()[name])


def _ngspice_case(name, which, words):
    def run():
        from atticsim.circuit.comparator import switching_temperatures
        from atticsim.validation.ngspice import reference_circuits

        p = reference_circuits()[name]
        ours = switching_temperatures(p)
        t_on, t_off = _ngspice(name)
        # the fan comes on when warm with a switch closing on rise and when cold with one closing on fall
        if (t_on > t_off) != (p.action == "close-on-rise"):
            raise RuntimeError(f"ngspice's thresholds ({t_on:.3f}, {t_off:.3f} degC) contradict {p.action}")
        return Comparison(ours.on_c if which == "on" else ours.off_c, t_on if which == "on" else t_off)

    run.__name__ = f"ngspice_{name.replace('-', '_')}_{which}"
    switch = "switch-on" if which == "on" else "switch-off"
    case(group="circuit", name=f"Thermostat circuit, {words}: {switch} temperature",
         source="ngspice (run here): transient sweep of the same circuit, the thermistor temperature at the "
                "output's crossing", unit="degC", tolerance=0.02, digits=3,
         inputs=f"circuit '{name}' (invented values, ours): 12 V rail, 10 kOhm NTC, 1 k LED pull-up, {words}; "
                "swept -10 -> 70 -> -10 degC in 2 s")(run)


for _name, _words in (("sense-heat", "feedback on the sense divider, closes on rise"),
                      ("sense-cold", "feedback on the sense divider, closes on fall, +2 mV offset"),
                      ("reference-heat", "feedback on the reference divider, closes on rise"),
                      ("reference-cold", "feedback on the reference divider, closes on fall, -3 mV offset"),
                      ("reference-heat-steinhart-hart", "Steinhart-Hart NTC, feedback on the reference, "
                                                        "closes on rise")):
    for _which in ("on", "off"):
        _ngspice_case(_name, _which, _words)
