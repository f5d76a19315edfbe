"""The ``[thermostat]`` table: ready-made setpoints, or the circuit built from parts.

``kind = "setpoints"``: an ideal comparator with hysteresis given by ``on``/``off`` sensor temperatures.
``kind = "circuit"``: the NTC divider, reference divider, comparator with positive feedback and the
opto-triac driver's LED as its pull-up, described by component values in ``[thermostat.circuit]``
(optionally ``[thermostat.tolerances]``, ``[thermostat.mains]`` and an RC timer stage,
``[thermostat.timer]``); the simulation then switches at the circuit's real thresholds and heats the
sensor by its divider power.

Both kinds take time rules (``start_delay``, ``run_on``, ``min_run``, ``min_rest``); a circuit's timer
stage sets the rules it implements. :func:`time_rules` gives the rules a scenario's controller applies.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Annotated, Literal

from pydantic import AfterValidator, BeforeValidator, Field, field_validator, model_validator

from atticsim.scenario.fields import StrictModel
from atticsim.scenario.fields import quantity as _q
from atticsim.units import to_si


Temperature = Annotated[float, _q("temperature")]
Voltage = Annotated[float, _q("voltage")]
Resistance = Annotated[float, _q("resistance")]
Current = Annotated[float, _q("current")]
Capacitance = Annotated[float, _q("capacitance")]
Frequency = Annotated[float, _q("frequency")]
Plain = Annotated[float, _q("dimensionless")]

def _ratio(value):
    """A fraction written as a ratio ("2/3") or anything :func:`to_si` reads as a plain number."""
    if isinstance(value, str) and value.count("/") == 1:
        num, den = (part.strip() for part in value.split("/"))
        try:
            return float(num) / float(den)
        except (ValueError, ZeroDivisionError):
            raise ValueError(f"expected a fraction such as 0.5 or '2/3', got {value!r}") from None
    return to_si(value, "dimensionless")


Ratio = Annotated[float, BeforeValidator(_ratio)]

#: Longest time rule [s]: a day.
RULE_MAX_S = 86400.0


def _rule_span(value: float) -> float:
    if not (math.isfinite(value) and 0.0 <= value <= RULE_MAX_S):
        raise ValueError(f"a time rule lasts from 0 to one day (86400 s); got {value:g} s")
    return value


#: A time rule [s]: "3 min", "90 s", a bare number in seconds; 0 to a day.
RuleDuration = Annotated[float, _q("time"), AfterValidator(_rule_span)]


class _Model(StrictModel):
    """A thermostat table: unknown keys refused, frozen, no inf or nan, no true/false for a number."""


#: Resistances a circuit may hold [ohm]: from a milliohm to a gigaohm (physical sense for parts on a board).
_R = dict(gt=1e-3, le=1e9)
#: The narrowest hysteresis a thermostat may have [K]: below it the switch would chatter on the sensor's noise,
#: and the figures print as 0.00 K (a design rule of this project, no source).
MIN_HYSTERESIS_K = 0.01


#: The switch's action in the trade's words: it closes (fan on) on a rising temperature (the fan runs
#: when warm) or on a falling one (the fan runs when cold).
Action = Literal["close-on-rise", "close-on-fall"]


#: The time rules, in the order of TimeRules.
RULES = ("start_delay", "run_on", "min_run", "min_rest")


@dataclass(frozen=True)
class TimeRules:
    """The time rules a controller applies on top of the thermostat's call [s] (0: no rule).

    The thermostat *calls* for the fan between its switch-on and switch-off points: for a switch that
    closes on rise, from the moment the sensor rises to ``on`` until it falls to ``off``; for one that
    closes on fall, from the moment it falls to ``on`` until it rises to ``off``. The rules act on that
    call, the same for both actions:

    - ``start_delay``: the call must stand continuously this long before the fan starts; a call that
      ends sooner starts nothing (the delay begins again at the next call).
    - ``run_on``: after the call ends the fan keeps running this long; a call that returns meanwhile
      keeps it running (the run-on begins again when that call ends).
    - ``min_run``: once started, the fan runs at least this long, measured from its start.
    - ``min_rest``: once stopped, the fan stays off at least this long, measured from its stop.

    They run side by side: the fan starts at the first instant when the call has stood ``start_delay``
    and the fan has rested ``min_rest``; it stops at the first instant when the call has been gone
    ``run_on`` and the fan has run ``min_run``.
    """

    start_delay: float = 0.0
    run_on: float = 0.0
    min_run: float = 0.0
    min_rest: float = 0.0

    def any(self) -> bool:
        """True when at least one rule is set."""
        return any(getattr(self, k) > 0.0 for k in RULES)


class _Thermostat(_Model):
    """What both kinds share: the switch's action and the time rules."""

    action: Action = Field("close-on-rise", description="close-on-rise: fan on when warm; close-on-fall: "
                                                        "fan on when cold")
    start_delay: RuleDuration = Field(0.0, description="s; the thermostat must call for the fan continuously this "
                                                       "long before the fan starts (0: at once)")
    run_on: RuleDuration = Field(0.0, description="s; the fan keeps running this long after the thermostat "
                                                  "releases (0: stops at once)")
    min_run: RuleDuration = Field(0.0, description="s; once started, the fan runs at least this long (0: no minimum)")
    min_rest: RuleDuration = Field(0.0, description="s; once stopped, the fan stays off at least this long "
                                                    "(0: no minimum)")

    def time_rules(self) -> TimeRules:
        """The time rules this thermostat applies (see :class:`TimeRules`)."""
        return TimeRules(**{k: getattr(self, k) for k in RULES})

    def time_rule_sources(self) -> dict:
        """Rule name -> the key that sets it, for every rule that is set."""
        return {k: f"thermostat.{k}" for k in RULES if getattr(self, k) > 0.0}


class SetpointThermostat(_Thermostat):
    """An ideal comparator with hysteresis, given as switch-on and switch-off sensor temperatures."""

    kind: Literal["setpoints"]
    on: Temperature = Field(ge=-40.0, le=120.0, description="degC")
    off: Temperature = Field(ge=-40.0, le=120.0, description="degC")

    @model_validator(mode="before")
    @classmethod
    def _no_timer_stage(cls, data):
        if isinstance(data, dict) and "timer" in data:
            raise ValueError('[thermostat.timer] is a stage of a circuit thermostat (kind = "circuit"); with '
                             "setpoints give the rules themselves: start_delay, run_on, min_run, min_rest")
        return data

    @model_validator(mode="after")
    def _order(self):
        # a hysteresis under MIN_HYSTERESIS_K chatters unless a start delay, minimum run or minimum rest
        # paces the switch; with one of those, off = on is a valid (timer-only) design
        timed = self.start_delay > 0.0 or self.min_run > 0.0 or self.min_rest > 0.0
        if abs(self.on - self.off) < MIN_HYSTERESIS_K and not timed:
            raise ValueError(f"on {self.on:g} degC and off {self.off:g} degC leave a hysteresis under "
                             f"{MIN_HYSTERESIS_K:g} K and no start_delay, min_run or min_rest paces the switch; "
                             "it would chatter: set them apart or add a time rule")
        if self.action == "close-on-rise" and not self.off <= self.on:
            raise ValueError(f"a switch that closes on rise needs off < on (got on {self.on:g} degC, "
                             f"off {self.off:g} degC)")
        if self.action == "close-on-fall" and not self.on <= self.off:
            raise ValueError(f"a switch that closes on fall needs on < off (got on {self.on:g} degC, "
                             f"off {self.off:g} degC)")
        return self

    def switch_points(self) -> tuple[float, float]:
        """(on, off): the sensor temperatures at which the switch calls for the fan and releases it [degC]."""
        return self.on, self.off

    def sensor_heating(self, sensor):
        """Power heating the sensor [W]: the scenario's constant ``sensor.self_heating``."""
        return sensor.self_heating

    def triac_heat(self):
        """The triac's conduction loss [W] this thermostat knows of: None (no mains side described)."""
        return None


class CircuitValues(_Model):
    """Component values of the thermostat circuit (``[thermostat.circuit]``)."""

    rail: Voltage = Field(gt=0.0, le=40.0, description="V, regulated supply")
    reference_upper: Resistance = Field(**_R, description="ohm, reference divider to the rail")
    reference_lower: Resistance = Field(**_R, description="ohm, reference divider to ground")
    sense_fixed: Resistance = Field(**_R, description="ohm, fixed resistor in the sense divider")
    sense_trim: Resistance = Field(0.0, ge=0.0, le=1e9, description="ohm, trimmer setting in series with it")
    feedback: Resistance = Field(**_R, description="ohm, output to the non-inverting input")
    led_resistor: Resistance = Field(**_R, description="ohm, in series with the opto-triac driver's LED")
    led_forward: Voltage = Field(1.2, gt=0.5, le=4.0, description="V, LED forward voltage at led_current")
    led_current: Current = Field(0.010, gt=0.0, le=0.1)
    led_ideality: Plain = Field(2.0, ge=1.0, le=4.0)
    output_low: Voltage = Field(0.2, ge=0.0, le=2.0, description="V, comparator output when sinking")
    input_offset: Voltage = Field(0.0, ge=-0.05, le=0.05)
    thermistor_r25: Resistance | None = Field(None, **_R, description="ohm at 25 degC")
    thermistor_beta: Plain | None = Field(None, gt=500.0, lt=10000.0, description="K")
    thermistor_steinhart_hart: list[float] | None = Field(None, min_length=3, max_length=3)
    thermistor_table: list[tuple[Annotated[float, _q("temperature"), Field(ge=-60.0, le=200.0)],
                                 Annotated[float, _q("resistance"), Field(**_R)]]] | None = Field(
        None, min_length=3, max_length=500, description="[[temp degC, R ohm], ...]")
    feedback_on: Literal["sense", "reference"] = "sense"
    thermistor_position: Literal["lower", "upper"] | None = None
    sink_guaranteed: Current = Field(0.006, gt=0.0, le=1.0, description="A, comparator's guaranteed sink current")
    trigger_current: Current = Field(0.010, gt=0.0, le=1.0,
                                     description="A, opto-triac driver's trigger current (max)")

    @model_validator(mode="after")
    def _one_thermistor(self):
        given = [self.thermistor_beta is not None or self.thermistor_r25 is not None,
                 self.thermistor_steinhart_hart is not None, self.thermistor_table is not None]
        if sum(given) != 1:
            raise ValueError("describe the thermistor once: thermistor_r25 with thermistor_beta, or "
                             "thermistor_steinhart_hart = [A, B, C], or thermistor_table")
        if given[0] and (self.thermistor_r25 is None or self.thermistor_beta is None):
            raise ValueError("thermistor_r25 and thermistor_beta go together")
        return self

    def thermistor(self):
        """The thermistor model (atticsim.circuit.Thermistor)."""
        from atticsim.circuit import Thermistor

        if self.thermistor_beta is not None:
            return Thermistor.from_beta(self.thermistor_r25, self.thermistor_beta)
        if self.thermistor_steinhart_hart is not None:
            return Thermistor.from_steinhart_hart(*self.thermistor_steinhart_hart)
        temps, res = zip(*self.thermistor_table)
        return Thermistor.from_table(list(temps), list(res))


class CircuitTolerances(_Model):
    """Part tolerances for the worst-case and Monte-Carlo threshold bands (``[thermostat.tolerances]``)."""

    resistor: Plain = Field(0.01, ge=0.0, lt=0.5, description="fraction, e.g. 0.01 for 1 %")
    trim: Plain = Field(0.0, ge=0.0, lt=0.5)
    r25: Plain = Field(0.01, ge=0.0, lt=0.5)
    beta: Plain = Field(0.01, ge=0.0, lt=0.5)
    rail: Plain = Field(0.05, ge=0.0, lt=0.5)
    offset: Voltage = Field(0.005, ge=0.0, lt=1.0, description="V, comparator offset (max)")
    samples: int = Field(2000, ge=100, le=200000)
    seed: int = Field(0, ge=0, le=2**32 - 1)


class MainsSide(_Model):
    """The mains side: capacitive dropper supply, triac and fan current (``[thermostat.mains]``)."""

    line_voltage: Voltage = Field(ge=90.0, le=264.0, description="V rms")
    frequency: Frequency = Field(description="Hz, 50 or 60")
    dropper_capacitance: Capacitance = Field(gt=0.0, le=1e-4, description="F")
    zener_voltage: Voltage = Field(gt=0.0, le=100.0, description="V")
    bleed_resistor: Resistance = Field(**_R, description="ohm")
    fan_current: Current = Field(gt=0.0, le=100.0, description="A rms, fan motor running current")
    series_resistor: Resistance = Field(100.0, **_R, description="ohm")
    fan_start_multiple: Plain = Field(6.0, ge=1.0, le=12.0)
    triac_current_rating: Current = Field(8.0, gt=0.0, le=1000.0, description="A rms")
    fuse_rating: Current | None = Field(None, gt=0.0, le=1000.0, description="A")
    capacitor_voltage_rating: Voltage | None = Field(None, gt=0.0, le=10000.0, description="V")
    bridge_voltage_rating: Voltage | None = Field(None, gt=0.0, le=10000.0, description="V")

    @model_validator(mode="after")
    def _freq(self):
        if self.frequency not in (50.0, 60.0):
            raise ValueError(f"frequency: must be 50 or 60 Hz (got {self.frequency:g} Hz)")
        return self

    def mains_params(self):
        """The circuit library's MainsParams."""
        from atticsim.circuit import MainsParams

        return MainsParams(**{k: v for k, v in self.model_dump().items() if v is not None})


class TimerStage(_Model):
    """An RC timer stage between the comparator and the driver, or a monostable after the comparator
    (``[thermostat.timer]``; see :mod:`atticsim.circuit.timer`)."""

    wiring: Literal["delay-start", "delay-stop", "delay-both", "minimum-run"] = Field(
        description="delay-start: the call waits R C ln(...) (diode across R: release at once); delay-stop: "
                    "the fan runs on after the release (diode the other way: start at once); delay-both: no "
                    "diode, both; minimum-run: a monostable the call triggers, holding the fan on")
    resistance: Resistance = Field(gt=0.0, le=1e9, description="ohm, timing resistance (the whole charging path)")
    capacitance: Capacitance = Field(gt=0.0, le=1.0, description="F, timing capacitor")
    threshold: Ratio = Field(gt=0.0, lt=1.0, description="fraction of the supply at which the following stage "
                                                        "switches (a divider's ratio; a timer IC's 2/3)")
    supply: Voltage | None = Field(None, gt=0.0, le=40.0, description="V, the stage's supply (default circuit.rail)")
    on_call: Literal["charges", "discharges"] = Field(
        "charges", description="what the capacitor does while the thermostat calls (input delays)")
    capacitor: Literal["electrolytic", "film", "ceramic"] = "electrolytic"
    resistor_tolerance: Plain = Field(0.05, ge=0.0, lt=0.5, description="fraction")
    capacitor_tolerance: Plain | None = Field(None, ge=0.0, lt=0.5,
                                              description="fraction (default by capacitor: 0.20, 0.05, 0.10)")
    threshold_tolerance: Plain = Field(0.02, ge=0.0, lt=0.5, description="fraction of the threshold")
    input_current: Current = Field(25e-9, ge=0.0, le=1e-3,
                                   description="A into the timing node from the following stage's input (default: "
                                               "a dual open-collector comparator's typical 25 nA, from memory)")
    leakage_current: Current | None = Field(None, ge=0.0, le=0.01,
                                            description="A, capacitor leakage at the supply voltage (measured)")

    @model_validator(mode="after")
    def _monostable_charges(self):
        if self.wiring == "minimum-run" and self.on_call != "charges":
            raise ValueError('on_call applies to the input delays: a monostable\'s capacitor always charges '
                             'after the trigger (leave on_call out with wiring = "minimum-run")')
        return self

    def params(self, rail: float):
        """The circuit library's TimerParams (supply defaulting to ``rail``)."""
        from atticsim.circuit.timer import TimerParams

        return TimerParams(wiring=self.wiring, resistance=self.resistance, capacitance=self.capacitance,
                           threshold=self.threshold, supply=self.supply or rail, on_call=self.on_call,
                           input_current=self.input_current, leakage_current=self.leakage_current,
                           capacitor=self.capacitor)

    def tolerances(self):
        """The circuit library's TimerTolerances."""
        from atticsim.circuit.timer import CAPACITOR_TOLERANCE, TimerTolerances

        cap = CAPACITOR_TOLERANCE[self.capacitor] if self.capacitor_tolerance is None else self.capacitor_tolerance
        return TimerTolerances(resistor=self.resistor_tolerance, capacitor=cap, threshold=self.threshold_tolerance)


class CircuitThermostat(_Thermostat):
    """The thermostat built from parts."""

    kind: Literal["circuit"]
    circuit: CircuitValues
    tolerances: CircuitTolerances = CircuitTolerances()
    mains: MainsSide | None = None
    timer: TimerStage | None = None

    @field_validator("timer")
    @classmethod
    def _timer_switches(cls, timer, info):
        circuit = info.data.get("circuit")
        if timer is None or circuit is None:
            return timer
        from atticsim.circuit.timer import stuck_words

        p = timer.params(circuit.rail)
        never = stuck_words(p)
        if never:
            raise ValueError(f"with {p.input_current * 1e9:.0f} nA of input current and {(p.leakage_current or 0) * 1e6:.2g} "
                             f"uA of leakage at the timing node the capacitor never crosses its {p.threshold_v:.2f} V "
                             f"threshold through {p.resistance:.3g} ohm: the fan would {never}")
        return timer

    @model_validator(mode="after")
    def _timer_or_rule(self):
        from atticsim.circuit.timer import RULE_WORDS, TIMER_RULES

        if self.timer is None:
            return self
        for rule in TIMER_RULES[self.timer.wiring]:
            if rule in self.model_fields_set:
                raise ValueError(
                    f'thermostat.timer (wiring "{self.timer.wiring}") and thermostat.{rule} both set the '
                    f"{RULE_WORDS[rule]}: the circuit is what the house will have, so give one of them "
                    f"(remove thermostat.{rule}, or the timer)")
        return self

    def timer_params(self):
        """The timer stage's TimerParams, or None without ``[thermostat.timer]``."""
        return None if self.timer is None else self.timer.params(self.circuit.rail)

    def time_rules(self) -> TimeRules:
        """The time rules: the ``thermostat.*`` keys, with the timer stage's delays for the rules it implements
        (with its input and leakage currents, from a settled capacitor)."""
        rules = super().time_rules()
        if self.timer is None:
            return rules
        from dataclasses import replace

        from atticsim.circuit.timer import timer_delays

        return replace(rules, **timer_delays(self.timer_params()))

    def time_rule_sources(self) -> dict:
        """Rule name -> the key that sets it, for every rule that is set."""
        out = super().time_rule_sources()
        if self.timer is not None:
            from atticsim.circuit.timer import TIMER_RULES

            out.update({k: "thermostat.timer" for k in TIMER_RULES[self.timer.wiring]})
        return {k: out[k] for k in RULES if k in out}

    @model_validator(mode="after")
    def _switches(self):
        from atticsim.circuit import switching_temperatures

        try:
            th = switching_temperatures(self.circuit_params())  # raises ValueError with the reason
        except ArithmeticError as exc:  # values so far apart that the circuit's equations overflow
            raise ValueError(f"circuit: the values cannot be solved for switching temperatures ({exc})") from None
        if not (-40.0 <= th.on_c <= 120.0 and -40.0 <= th.off_c <= 120.0):
            raise ValueError(f"the circuit switches at {th.on_c:.1f} / {th.off_c:.1f} degC, outside -40..120 degC")
        if abs(th.on_c - th.off_c) < MIN_HYSTERESIS_K:
            raise ValueError(f"circuit: the circuit switches ON at {th.on_c:.3f} degC and OFF at {th.off_c:.3f} degC, "
                             f"a hysteresis of {abs(th.on_c - th.off_c):.2g} K (under {MIN_HYSTERESIS_K:g} K): the fan "
                             f"would chatter; a smaller thermostat.circuit.feedback widens it")
        return self

    def circuit_params(self):
        """The circuit library's CircuitParams for these values."""
        from atticsim.circuit import CircuitParams

        c = self.circuit
        return CircuitParams(
            rail=c.rail, reference_upper=c.reference_upper, reference_lower=c.reference_lower,
            sense_fixed=c.sense_fixed, sense_trim=c.sense_trim, feedback=c.feedback,
            led_resistor=c.led_resistor, led_forward=c.led_forward, thermistor=c.thermistor(),
            led_current=c.led_current, led_ideality=c.led_ideality, output_low=c.output_low,
            input_offset=c.input_offset, feedback_on=c.feedback_on, thermistor_position=c.thermistor_position,
            action=self.action, sink_guaranteed=c.sink_guaranteed, trigger_current=c.trigger_current)

    def switch_points(self) -> tuple[float, float]:
        """(on, off): the thermistor temperatures at which the circuit switches [degC] (its node equations,
        :func:`atticsim.circuit.switching_temperatures`; self-heating is in the sensor's temperature)."""
        t = self.thresholds()
        return t.on_c, t.off_c

    def sensor_heating(self, sensor):
        """Power heating the sensor: the divider's dissipation at the thermistor's temperature and the
        comparator's state [W] (a function of (temperature, fan state); atticsim.circuit)."""
        from atticsim.circuit import thermistor_power_function

        return thermistor_power_function(self.circuit_params())

    def triac_heat(self):
        """The triac's conduction loss while the fan runs [W] from the mains side, P = V_T0 I_avg + r_T I_rms^2
        (atticsim.circuit.mains), or None without a mains side."""
        if self.mains is None:
            return None
        from atticsim.circuit.mains import triac_conduction_loss

        m = self.mains.mains_params()
        return float(triac_conduction_loss(m.fan_current, m.triac_v_t0, m.triac_r_t))

    def thresholds(self):
        """Switching thermistor temperatures of the circuit (atticsim.circuit.Thresholds)."""
        from atticsim.circuit import switching_temperatures

        return switching_temperatures(self.circuit_params())

    def tolerance_spec(self):
        """The circuit library's Tolerances."""
        from atticsim.circuit import Tolerances

        t = self.tolerances
        return Tolerances(resistor=t.resistor, trim=t.trim, r25=t.r25, beta=t.beta, rail=t.rail, offset=t.offset)


def time_rules(scenario) -> TimeRules:
    """The time rules a scenario's controller applies [s]: its ``thermostat.*`` keys and, for a circuit
    thermostat, its timer stage's delays (plain floats; no compiled code).

    Parameters
    ----------
    scenario : Scenario
        A validated scenario (or its ``thermostat``).

    Returns
    -------
    TimeRules
    """
    return getattr(scenario, "thermostat", scenario).time_rules()
