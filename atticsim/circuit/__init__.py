"""The thermostat circuit library: NTC thermistor models, the comparator stage with hysteresis, tolerance
analysis, design to standard resistor values, the mains-side checks and the RC timer stage.

Pure functions and small frozen dataclasses over SI floats (temperatures in degC at the interface).
"""

from atticsim.circuit.comparator import (
    CircuitParams, Thresholds, air_temperatures, derived_position, supply_current, switching_temperatures,
    thermistor_power, thermistor_power_function)
from atticsim.circuit.design import Design, design_circuit
from atticsim.circuit.eseries import E12, E24, E96, round_down, round_nearest, round_up, series_values
from atticsim.circuit.mains import MAINS_CAUTION, MainsParams, MainsReport, check_mains
from atticsim.circuit.thermistor import Thermistor, ToleratedThermistor, fit_steinhart_hart
from atticsim.circuit.timer import (
    TIMER_RULES, TimerParams, TimerResult, TimerTolerances, charge_time, crossing_time, discharge_time,
    timer_analysis, timer_delays)
from atticsim.circuit.tolerance import ToleranceResult, Tolerances, tolerance_analysis

__all__ = [
    "CircuitParams", "Thresholds", "air_temperatures", "derived_position", "supply_current",
    "switching_temperatures", "thermistor_power", "thermistor_power_function", "Design", "design_circuit",
    "E12", "E24", "E96", "round_down", "round_nearest", "round_up", "series_values", "MAINS_CAUTION",
    "MainsParams", "MainsReport", "check_mains", "Thermistor", "ToleratedThermistor", "fit_steinhart_hart",
    "ToleranceResult", "Tolerances", "tolerance_analysis", "TIMER_RULES", "TimerParams", "TimerResult",
    "TimerTolerances", "charge_time", "crossing_time", "discharge_time", "timer_analysis", "timer_delays",
]
