"""Tolerance analysis of the thermostat circuit's switching temperatures: worst case and Monte Carlo.

Varied: every fixed resistor by its tolerance class, the trimmer setting, the thermistor's R25 and Beta,
the rail voltage and the comparator's input offset. The LED and output_low stay nominal (they move the
thresholds only through the small feedback current). All evaluations run vectorised through the same
closed-form node solution as `switching_temperatures`.

Worst case: every corner of the tolerance box (2^k evaluations for k varied quantities), which bounds the
thresholds exactly when they are monotonic in each quantity, as they are in this circuit.
Monte Carlo: each quantity normal with sigma = tolerance/3, clipped at the tolerance (a tolerance class read
as a +-3 sigma limit; common practice, no source), seeded so that a run is reproducible.
"""

from __future__ import annotations

import itertools
import numbers
from dataclasses import dataclass

import numpy as np

from atticsim.circuit.comparator import (
    CircuitParams, Thresholds, _led, _threshold_resistances, switching_temperatures)
from atticsim.circuit.thermistor import ToleratedThermistor


@dataclass(frozen=True)
class Tolerances:
    """Tolerances of the circuit's parts (relative unless stated).

    Parameters
    ----------
    resistor : float
        Tolerance class of the fixed resistors [-]. Default 0.01 (1 % metal film).
    trim : float
        Uncertainty of the trimmer setting [-]. Default 0 (set by measurement).
    r25 : float
        Thermistor R25 tolerance [-]. Default 0.01.
    beta : float
        Thermistor Beta tolerance [-]. Default 0.01.
    rail : float
        Rail (zener) voltage tolerance [-]. Default 0.05 (common zener tolerance class).
    offset : float
        Comparator input offset, maximum magnitude [V]. Default 0.005 (typical datasheet maximum).
    """

    resistor: float = 0.01
    trim: float = 0.0
    r25: float = 0.01
    beta: float = 0.01
    rail: float = 0.05
    offset: float = 0.005

    def __post_init__(self):
        require_fractions(self, ("resistor", "trim", "r25", "beta", "rail"))
        if not (isinstance(self.offset, numbers.Real) and 0.0 <= self.offset < 1.0):
            raise ValueError(f"comparator offset tolerance must be between 0 and 1 V (got {self.offset!r})")


def require_fractions(tolerances, names, what: str = "") -> None:
    """Refuse a tolerance that is not a fraction from 0 to 0.5 (of its part's value), naming it."""
    for name in names:
        v = getattr(tolerances, name)
        if not (isinstance(v, numbers.Real) and 0.0 <= v < 0.5):
            raise ValueError(f"{what}{name} tolerance must be a fraction between 0 and 0.5 (got {v!r})")


@dataclass(frozen=True)
class ToleranceResult:
    """Spread of the switching temperatures.

    Attributes
    ----------
    nominal : Thresholds
        Nominal switching point.
    on_worst_c, off_worst_c : tuple of float
        (lowest, highest) switch-on / switch-off temperature over all corners [degC].
    hysteresis_worst_k : tuple of float
        (smallest, largest) hysteresis over all corners [K].
    on_band_c, off_band_c : tuple of float
        Monte-Carlo (5 %, 95 %) percentiles [degC].
    hysteresis_band_k : tuple of float
        Monte-Carlo (5 %, 95 %) percentiles of the hysteresis [K].
    samples : int
        Monte-Carlo sample count.
    seed : int
        Random seed used.
    never_switch : int
        Corners plus samples at which the circuit cannot switch (excluded from the figures above).
    """

    nominal: Thresholds
    on_worst_c: tuple
    off_worst_c: tuple
    hysteresis_worst_k: tuple
    on_band_c: tuple
    off_band_c: tuple
    hysteresis_band_k: tuple
    samples: int
    seed: int
    never_switch: int


#: The varied quantities, in a fixed order.
_QUANTITIES = ("reference_upper", "reference_lower", "sense_fixed", "sense_trim", "feedback", "led_resistor",
               "r25", "beta", "rail", "offset")


def _spans(params, tol):
    """Tolerance of each quantity in _QUANTITIES, relative except 'offset' (absolute [V])."""
    res = tol.resistor
    return {"reference_upper": res, "reference_lower": res, "sense_fixed": res,
            "sense_trim": tol.trim if params.sense_trim > 0.0 else 0.0,
            "feedback": res if np.isfinite(params.feedback) else 0.0, "led_resistor": res,
            "r25": tol.r25, "beta": tol.beta, "rail": tol.rail, "offset": tol.offset}


def _evaluate(params, dev):
    """Switch-on and switch-off temperatures [degC] for arrays of deviations dev[name] (relative, offset in V)."""
    i_s, n_vt = _led(params)
    scale = {k: 1.0 + dev[k] for k in _QUANTITIES if k != "offset"}
    k = _threshold_resistances(
        params.rail * scale["rail"], params.reference_upper * scale["reference_upper"],
        params.reference_lower * scale["reference_lower"],
        params.sense_fixed * scale["sense_fixed"] + params.sense_trim * scale["sense_trim"],
        params.feedback * scale["feedback"], params.led_resistor * scale["led_resistor"], i_s, n_vt,
        params.output_low, params.input_offset + dev["offset"], params.feedback_on, params.position)
    th = ToleratedThermistor(params.thermistor, scale["r25"], scale["beta"])
    ok = np.isfinite(k["r_on"]) & np.isfinite(k["r_off"])
    # where the circuit cannot switch, convert a harmless stand-in (R25) and blank the result below
    r25 = params.thermistor.r25
    on = np.asarray(th.temperature(np.where(ok, k["r_on"], r25)), dtype=float)
    off = np.asarray(th.temperature(np.where(ok, k["r_off"], r25)), dtype=float)
    # a sample whose feedback came out with the wrong sign counts as not switching properly
    sign = 1.0 if params.action == "close-on-rise" else -1.0
    bad = ~ok | ((on - off) * sign < 0.0)
    return np.where(bad, np.nan, on), np.where(bad, np.nan, off)


def worst_case(params, tolerances=Tolerances()):
    """Extreme switching temperatures over every corner of the tolerance box.

    Parameters
    ----------
    params : CircuitParams
        The nominal circuit.
    tolerances : Tolerances
        Part tolerances.

    Returns
    -------
    tuple
        ((on_min, on_max) [degC], (off_min, off_max) [degC], (hyst_min, hyst_max) [K], corners that never switch).
    """
    on, off = _evaluate(params, corner_deviations(_spans(params, tolerances)))
    return extremes(on), extremes(off), extremes(np.abs(on - off)), int(np.isnan(on).sum())


def corner_deviations(spans):
    """Deviations at every corner of a tolerance box.

    Parameters
    ----------
    spans : dict
        Quantity name -> tolerance (relative or absolute, as the caller reads it); zero spans stay nominal.

    Returns
    -------
    dict
        Quantity name -> array of deviations (+-span), one entry per corner (2^k corners for k non-zero spans).
    """
    varied = [q for q, s in spans.items() if s > 0.0]
    signs = np.array(list(itertools.product((-1.0, 1.0), repeat=len(varied)))).reshape(2 ** len(varied), len(varied))
    dev = {q: np.zeros(signs.shape[0]) for q in spans}
    for j, q in enumerate(varied):
        dev[q] = signs[:, j] * spans[q]
    return dev


def random_deviations(spans, samples, seed):
    """Monte-Carlo deviations: each quantity normal with sigma = span/3, clipped at +-span.

    A tolerance class read as a +-3 sigma limit (common practice, no source). One draw per quantity in the
    order of ``spans`` (zero spans included), so that a seed gives the same circuits run after run.

    Parameters
    ----------
    spans : dict
        Quantity name -> tolerance.
    samples : int
        Number of random circuits (at least 20).
    seed : int
        Seed of the random generator.

    Returns
    -------
    dict
        Quantity name -> array of ``samples`` deviations.
    """
    if not (isinstance(samples, int) and samples >= 20):
        raise ValueError(f"Monte-Carlo sample count must be an integer of at least 20 (got {samples!r})")
    rng = np.random.default_rng(seed)
    return {q: np.clip(rng.standard_normal(samples), -3.0, 3.0) * (s / 3.0) for q, s in spans.items()}


def extremes(x):
    """(min, max) of the finite values of x (NaN, NaN when there are none)."""
    x = x[np.isfinite(x)]
    return (float(x.min()), float(x.max())) if x.size else (float("nan"), float("nan"))


def band(x):
    """(5 %, 95 %) percentiles of the finite values of x (NaN, NaN when there are none)."""
    x = x[np.isfinite(x)]
    return tuple(float(v) for v in np.percentile(x, [5.0, 95.0])) if x.size else (float("nan"), float("nan"))




def monte_carlo(params, tolerances=Tolerances(), samples=2000, seed=0):
    """Monte-Carlo 5-95 % band of the switching temperatures.

    Parameters
    ----------
    params : CircuitParams
        The nominal circuit.
    tolerances : Tolerances
        Part tolerances (each read as +-3 sigma of a normal distribution, clipped there).
    samples : int
        Number of random circuits.
    seed : int
        Seed of the random generator (same seed, same result).

    Returns
    -------
    tuple
        ((on_5, on_95) [degC], (off_5, off_95) [degC], (hyst_5, hyst_95) [K], samples that never switch).
    """
    on, off = _evaluate(params, random_deviations(_spans(params, tolerances), samples, seed))
    return band(on), band(off), band(np.abs(on - off)), int(np.isnan(on).sum())


def tolerance_analysis(params, tolerances=Tolerances(), samples=2000, seed=0):
    """Worst case and Monte-Carlo band of the switching temperatures.

    Parameters
    ----------
    params : CircuitParams
        The nominal circuit.
    tolerances : Tolerances
        Part tolerances.
    samples : int
        Monte-Carlo sample count.
    seed : int
        Random seed.

    Returns
    -------
    ToleranceResult
        Nominal thresholds, worst-case ranges and 5-95 % bands.
    """
    if not isinstance(params, CircuitParams):
        raise ValueError("tolerance analysis needs a CircuitParams")
    nominal = switching_temperatures(params)
    on_w, off_w, hyst_w, bad_w = worst_case(params, tolerances)
    on_b, off_b, hyst_b, bad_b = monte_carlo(params, tolerances, samples, seed)
    return ToleranceResult(nominal=nominal, on_worst_c=on_w, off_worst_c=off_w, hysteresis_worst_k=hyst_w,
                           on_band_c=on_b, off_band_c=off_b, hysteresis_band_k=hyst_b, samples=samples,
                           seed=seed, never_switch=bad_w + bad_b)
