"""Thermostat controllers as blocks with a discrete state (fan on/off) that switches on events.

A controller tells the event loop which sensor temperature ends the present state and in which
direction the sensor must cross it. The switching itself is exact: the loop finds the crossing
instant by root finding on the integrator's dense output.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class HysteresisController:
    """An ideal comparator with hysteresis.

    ``action="close-on-rise"``: the fan switches on when the sensor rises to ``on`` and off when it falls
    to ``off`` (off < on). ``action="close-on-fall"``: on when the sensor falls to ``on``, off when it
    rises to ``off`` (on < off).

    Parameters
    ----------
    action : {"close-on-rise", "close-on-fall"}
    on, off : float
        Switching sensor temperatures [degC].
    """

    action: str
    on: float
    off: float

    def __post_init__(self):
        if self.action not in ("close-on-rise", "close-on-fall"):
            raise ValueError(f"action must be 'close-on-rise' or 'close-on-fall', got {self.action!r}")
        if self.action == "close-on-rise" and not self.off < self.on:
            raise ValueError("a switch that closes on rise needs off < on")
        if self.action == "close-on-fall" and not self.on < self.off:
            raise ValueError("a switch that closes on fall needs on < off")

    @property
    def rises(self) -> bool:
        """True when the switch closes (fan on) on a rising temperature."""
        return self.action == "close-on-rise"

    def initial_state(self, sensor_temp: float) -> bool:
        """Fan state at the start: on only if the sensor is already beyond the switch-on point."""
        return sensor_temp >= self.on if self.rises else sensor_temp <= self.on

    def next_switch(self, fan_on: bool) -> tuple[float, int]:
        """(sensor temperature, crossing direction +1 rising / -1 falling) that ends the present state."""
        sign = 1 if self.rises else -1
        return (self.off, -sign) if fan_on else (self.on, sign)


def controller_from_scenario(scenario) -> HysteresisController:
    """The controller a scenario's ``[thermostat]`` table describes.

    For a circuit thermostat the switching points are the circuit's exact thermistor temperatures
    (node equations solved by :func:`atticsim.circuit.switching_temperatures`); the sensor node is the
    thermistor, so self-heating is in the sensor's temperature, not in the thresholds.
    """
    th = scenario.thermostat
    if th.kind == "circuit":
        t = th.thresholds()
        return HysteresisController(action=th.action, on=t.on_c, off=t.off_c)
    return HysteresisController(action=th.action, on=th.on, off=th.off)
