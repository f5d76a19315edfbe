"""The scenario keys a fit may adjust: default bounds and scales, ``--bounds`` parsing, and how a fitted value is
written back in the user's own units.

Each fitted key moves on a unit interval u in [0, 1] between its bounds: on a logarithmic scale for quantities
that span decades (air changes, a time constant, an R-value, a mass), linearly for a fraction (absorptance).
The fit works in u, so that one finite-difference step means the same share of every key's range.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from atticsim.calibration.errors import CalibrationError
from atticsim.units import IP_FACTORS, R_IP_TO_SI


@dataclass(frozen=True)
class KeyRule:
    """A key's default range: absolute bounds [SI], or bounds relative to the scenario's value (x low, x high)."""

    kind: str
    unit: str
    what: str
    low: float | None = None
    high: float | None = None
    relative: tuple[float, float] | None = None
    scale: str = "log"


#: Keys with default bounds (common practice, no source: ranges wide enough for any house the tool models,
#: narrow enough to keep the model out of nonsense: a passive attic changes its air 0.1-30 times an hour; a
#: roof absorbs 0.3 (white) to 0.98 (black) of the sun; a thermistor's time constant is seconds to minutes;
#: ceiling insulation R-5 to R-80; a fan's flow and the framing's mass within a factor of three of the estimate).
DEFAULT_KEYS: dict[str, KeyRule] = {
    "vents.passive_ach": KeyRule("dimensionless", "1/h", "passive air changes of the attic per hour", 0.1, 30.0),
    "roof.absorptance": KeyRule("dimensionless", "", "solar absorptance of the roof covering", 0.3, 0.98,
                                scale="linear"),
    "sensor.time_constant": KeyRule("time", "s", "the sensor's time constant in attic air", 2.0, 600.0),
    "ceiling.insulation": KeyRule("r_value", "m2K/W", "R-value of the ceiling insulation",
                                  5.0 * R_IP_TO_SI, 80.0 * R_IP_TO_SI),
    "attic.layer_mixing_ach": KeyRule("dimensionless", "1/h", "exchange between the attic's air layers", 0.1, 50.0),
    "fan.flow": KeyRule("flow", "m3/s", "the fan's flow", relative=(0.3, 3.0)),
    "attic.framing_mass": KeyRule("mass", "kg", "mass of the attic framing", relative=(0.3, 3.0)),
}


@dataclass(frozen=True)
class FitKey:
    """One key being fitted: its bounds and start value [SI], its scale, and words for reports."""

    key: str
    low: float
    high: float
    start: float
    scale: str
    unit: str
    what: str
    kind: str
    written: object = None  # the value as the user's scenario file writes it (for writing back)

    def to_u(self, value: float) -> float:
        """A value [SI] as its place between the bounds (0 at ``low``, 1 at ``high``)."""
        if self.scale == "log":
            return (math.log(value) - math.log(self.low)) / (math.log(self.high) - math.log(self.low))
        return (value - self.low) / (self.high - self.low)

    def from_u(self, u: float) -> float:
        """The value [SI] at place ``u`` between the bounds."""
        if self.scale == "log":
            return math.exp(math.log(self.low) + u * (math.log(self.high) - math.log(self.low)))
        return self.low + u * (self.high - self.low)

    def override(self, value: float) -> str:
        """The ``--set`` text that gives the scenario this value (a bare number is SI)."""
        return f"{self.key}={float(value)!r}"

    def text(self, value: float) -> str:
        """The value as the trade writes it, in the user's own units where the file gave some."""
        return str(format_value(self, value))


def scenario_value(scenario, key: str):
    """The value a validated scenario holds at a dotted key (list items by index); the roof's optics from the
    covering's preset when not given."""
    node = scenario
    for part in key.split("."):
        try:
            node = node[int(part)] if isinstance(node, (list, tuple)) else getattr(node, part)
        except (AttributeError, IndexError, ValueError):
            return None
    if node is None and key in ("roof.absorptance", "roof.emittance"):
        node = scenario.roof.optics()[0][key.split(".")[1]]
    return node


def raw_value(data: dict, key: str):
    """The value a raw scenario dict (the TOML as read, with --set applied) holds at a dotted key, or None."""
    node = data
    for part in key.split("."):
        try:
            node = node[int(part)] if isinstance(node, list) else node[part]
        except (KeyError, IndexError, ValueError, TypeError):
            return None
    return node


def _no_effect(scenario, key: str) -> str | None:
    """Why a key cannot move the model's temperatures with this scenario, or None."""
    if key == "vents.passive_ach" and scenario.vents.openings:
        return "has no effect: the scenario describes its vent openings (fit their net_free_area instead)"
    if key in ("sensor.time_constant", "sensor.dissipation_constant") and scenario.sensor.body is not None:
        return "has no effect: sensor.body sets the sensor's coupling from its correlations"
    if key == "fan.flow" and scenario.fan.flow is None:
        return "the fan is given by its curve, not a rated flow (fit fan.speed_ratio instead)"
    if key in ("attic.layer_mixing_ach", "attic.fan_mixing_ratio", "attic.upper_volume_fraction") \
            and scenario.attic.air_layers == 1:
        return "has no effect: the attic air is one well-mixed node (attic.air_layers = 1)"
    return None


_RANGE = re.compile(r"^\s*([^:]+?)\s*:\s*([^:]+?)\s*$")


def _bound_value(text: str, key: str, base: float, trial) -> float:
    """One end of a --bounds range: ``x0.5`` (times the scenario's value) or a value with or without a unit
    (read through the scenario's own key, so any unit the key takes works)."""
    t = text.strip()
    if t.lower().startswith("x"):
        try:
            factor = float(t[1:])
        except ValueError:
            raise CalibrationError("--bounds", key, f"{text!r} is not a factor such as x0.5") from None
        return factor * base
    return trial(t)


def parse_bounds(texts, base_values: dict, trial) -> dict:
    """``--bounds KEY=LOW:HIGH`` texts -> {key: (low, high)} [SI].

    Parameters
    ----------
    texts : sequence of str
        ``"ceiling.insulation=R-11:R-49"``, ``"fan.flow=x0.5:x2"``, ``"vents.passive_ach=0.5:12"``.
    base_values : dict
        key -> the scenario's value [SI] (for relative ends).
    trial : callable
        trial(key, text) -> the SI value the scenario's key takes for that text (raises CalibrationError).
    """
    out = {}
    for text in texts:
        if "=" not in text:
            raise CalibrationError("--bounds", text, "expected KEY=LOW:HIGH, e.g. vents.passive_ach=0.5:12")
        key, rng = (s.strip() for s in text.split("=", 1))
        m = _RANGE.match(rng)
        if not m:
            raise CalibrationError("--bounds", key, f"{rng!r} is not LOW:HIGH")
        if key not in base_values:
            raise CalibrationError("--bounds", key, "is not one of the keys given to --fit")
        low = _bound_value(m.group(1), key, base_values[key], lambda t, k=key: trial(k, t))
        high = _bound_value(m.group(2), key, base_values[key], lambda t, k=key: trial(k, t))
        out[key] = (low, high)
    return out


def fit_keys(scenario, data: dict, keys, bounds: dict) -> tuple[list[FitKey], list[str]]:
    """The keys to fit with their bounds and start values, checked against the scenario.

    Parameters
    ----------
    scenario : Scenario
        The validated scenario (start values: its own).
    data : dict
        The raw scenario as written (with --set), for writing values back in the user's units.
    keys : sequence of str
        Dotted keys.
    bounds : dict
        key -> (low, high) [SI] given with --bounds (the others take :data:`DEFAULT_KEYS`).

    Returns
    -------
    (list of FitKey, list of str)
        The keys, and notes (a start value moved inside its bounds).
    """
    out, notes = [], []
    if not keys:
        raise CalibrationError("--fit", "", "name at least one scenario key, e.g. --fit vents.passive_ach,roof.absorptance")
    if len(set(keys)) != len(keys):
        raise CalibrationError("--fit", ",".join(keys), "a key is named twice")
    for key in keys:
        value = scenario_value(scenario, key)
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            why = "is not a scenario key with a number" if value is None or isinstance(value, bool) else \
                f"holds {value!r}, not a number"
            raise CalibrationError("--fit", key, why)
        reason = _no_effect(scenario, key)
        if reason:
            raise CalibrationError("--fit", key, reason)
        rule = DEFAULT_KEYS.get(key)
        if key in bounds:
            low, high = bounds[key]
        elif rule is None:
            raise CalibrationError("--fit", key, f"has no default range: give one with --bounds {key}=LOW:HIGH")
        elif rule.relative is not None:
            low, high = rule.relative[0] * value, rule.relative[1] * value
        else:
            low, high = rule.low, rule.high
        scale = rule.scale if rule is not None else ("log" if low > 0 else "linear")
        if not (math.isfinite(low) and math.isfinite(high) and low < high):
            raise CalibrationError("--bounds", key, f"LOW {low:g} must be below HIGH {high:g}")
        if scale == "log" and low <= 0:
            raise CalibrationError("--bounds", key, f"LOW must be above 0 (got {low:g}): the key is fitted on a "
                                   f"logarithmic scale")
        start = float(value)
        if not low <= start <= high:
            moved = min(max(start, low), high)
            notes.append(f"{key}: the scenario's {start:.4g} is outside the bounds {low:.4g}..{high:.4g}; the fit "
                         f"starts from {moved:.4g}")
            start = moved
        kind = rule.kind if rule is not None else "dimensionless"
        out.append(FitKey(key, float(low), float(high), start, scale, rule.unit if rule else "",
                          rule.what if rule else key, kind, raw_value(data, key)))
    return out, notes


def _sig(value: float, digits: int = 4) -> float:
    """A value rounded to ``digits`` significant figures."""
    if value == 0 or not math.isfinite(value):
        return value
    return round(value, digits - 1 - int(math.floor(math.log10(abs(value)))))


def format_value(k: FitKey, value: float):
    """A fitted value as calibrated.toml writes it: in the units the user's file wrote the key in where it had
    a unit (``"R-22.4"``, ``"1050 cfm"``), else a bare SI number; 4 significant figures."""
    written = k.written if isinstance(k.written, str) else ""
    if k.kind == "r_value":
        if re.match(r"^\s*R\s*-?\s*\d", written, re.IGNORECASE) and not written.strip().upper().startswith("RSI"):
            return f"R-{_sig(value / R_IP_TO_SI, 3):g}"
        return f"RSI {_sig(value, 3):g}"
    if k.kind == "flow" and "cfm" in written.lower():
        return f"{_sig(value * IP_FACTORS['flow'][0], 4):g} cfm"
    if k.kind in ("time", "mass", "flow") and written:
        unit = {"time": "s", "mass": "kg", "flow": "m3/s"}[k.kind]
        return f"{_sig(value):g} {unit}"
    return _sig(value)


__all__ = ["DEFAULT_KEYS", "FitKey", "KeyRule", "fit_keys", "format_value", "parse_bounds", "raw_value",
           "scenario_value"]
