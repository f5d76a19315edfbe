"""The ``[thermostat]`` table: ready-made setpoints, or the circuit built from parts.

``kind = "setpoints"``: an ideal comparator with hysteresis given by ``on``/``off`` sensor temperatures.
``kind = "circuit"``: the NTC divider, reference divider, comparator with positive feedback and the
opto-triac driver's LED as its pull-up, described by component values in ``[thermostat.circuit]``
(optionally ``[thermostat.tolerances]`` and ``[thermostat.mains]``); the simulation then switches at
the circuit's real thresholds and heats the sensor by its divider power.
"""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import BaseModel, Field, model_validator

from atticsim.scenario.fields import StrictModel
from atticsim.scenario.fields import quantity as _q


Temperature = Annotated[float, _q("temperature")]
Voltage = Annotated[float, _q("voltage")]
Resistance = Annotated[float, _q("resistance")]
Current = Annotated[float, _q("current")]
Capacitance = Annotated[float, _q("capacitance")]
Frequency = Annotated[float, _q("frequency")]
Plain = Annotated[float, _q("dimensionless")]


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


class _Thermostat(_Model):
    """What both kinds share: the switch's action."""

    action: Action = Field("close-on-rise", description="close-on-rise: fan on when warm; close-on-fall: "
                                                        "fan on when cold")


class SetpointThermostat(_Thermostat):
    """An ideal comparator with hysteresis, given as switch-on and switch-off sensor temperatures."""

    kind: Literal["setpoints"]
    on: Temperature = Field(ge=-40.0, le=120.0, description="degC")
    off: Temperature = Field(ge=-40.0, le=120.0, description="degC")

    @model_validator(mode="after")
    def _order(self):
        if abs(self.on - self.off) < MIN_HYSTERESIS_K:
            raise ValueError(f"on {self.on:g} degC and off {self.off:g} degC leave a hysteresis under "
                             f"{MIN_HYSTERESIS_K:g} K; the switch would chatter: set them apart")
        if self.action == "close-on-rise" and not self.off < self.on:
            raise ValueError(f"a switch that closes on rise needs off < on (got on {self.on:g} degC, "
                             f"off {self.off:g} degC)")
        if self.action == "close-on-fall" and not self.on < self.off:
            raise ValueError(f"a switch that closes on fall needs on < off (got on {self.on:g} degC, "
                             f"off {self.off:g} degC)")
        return self


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


class CircuitThermostat(_Thermostat):
    """The thermostat built from parts."""

    kind: Literal["circuit"]
    circuit: CircuitValues
    tolerances: CircuitTolerances = CircuitTolerances()
    mains: MainsSide | None = None

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

    def thresholds(self):
        """Switching thermistor temperatures of the circuit (atticsim.circuit.Thresholds)."""
        from atticsim.circuit import switching_temperatures

        return switching_temperatures(self.circuit_params())

    def tolerance_spec(self):
        """The circuit library's Tolerances."""
        from atticsim.circuit import Tolerances

        t = self.tolerances
        return Tolerances(resistor=t.resistor, trim=t.trim, r25=t.r25, beta=t.beta, rail=t.rail, offset=t.offset)
