"""Input that validates but is probably not what the user meant: a bare number that is absurd in its SI unit
and ordinary in an IP (or other common) unit, a percentage given as a fraction, a fan far from the trade's
sizing, keys that have no effect with the rest of the scenario.

These are warnings, not errors: the scenario runs as given. Each is one sentence naming the key, what the
value was read as, and what to write instead. :func:`atticsim.scenario.load.load_scenario` calls
:func:`plausibility_warnings` and keeps the result on the scenario (``Scenario.input_warnings``).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from atticsim.units import IP_FACTORS

# Conversion factors to SI (NIST SP 811 appendix B): 1 ft = 0.3048 m, 1 in = 0.0254 m, 1 hp = 745.6999 W
# (mechanical horsepower), 1 in. w.c. = 249.0889 Pa.
_FT = 0.3048
_IN = 0.0254
_CFM = _FT**3 / 60.0


@dataclass(frozen=True)
class Check:
    """A key whose bare number is checked.

    Attributes
    ----------
    pattern : str
        Dotted key; ``*`` stands for a list index (``roof.planes.*.area``).
    low, high : float
        Range of ordinary values in the SI unit [SI].
    si_unit : str
        The SI unit as written in the warning.
    what : str
        What the value is, in words ("an attic fan's flow").
    alternatives : tuple of (str, float)
        Units a bare number is often meant in, and the factor that takes a number in that unit to SI.
    written : str
        How the value is written with the first fitting unit (``{v}`` the number, ``{unit}`` the unit).
    """

    pattern: str
    low: float
    high: float
    si_unit: str
    what: str
    alternatives: tuple = ()
    written: str = "{v} {unit}"


#: Ordinary ranges of residential attics and their fans (common practice, no source: generous bounds around
#: what the trade builds; a value outside is not refused, only questioned).
CHECKS = (
    Check("fan.flow", 0.02, 10.0, "m3/s", "an attic fan's flow", (("cfm", _CFM), ("m3/h", 1.0 / 3600.0))),
    Check("fan.curve_flow.*", 0.0, 10.0, "m3/s", "an attic fan's flow", (("cfm", _CFM), ("m3/h", 1.0 / 3600.0))),
    Check("fan.power", 5.0, 3000.0, "W", "an attic fan's power", (("hp", 745.6999), ("kW", 1000.0))),
    Check("fan.diameter", 0.1, 1.5, "m", "a fan's diameter", (("in", _IN), ("mm", 1e-3))),
    Check("fan.height", 0.0, 10.0, "m", "a height in an attic", (("ft", _FT),)),
    Check("attic.floor_area", 10.0, 1000.0, "m2", "a house's attic floor", (("ft2", _FT**2),)),
    Check("attic.volume", 5.0, 5000.0, "m3", "an attic's volume", (("ft3", _FT**3),)),
    Check("attic.framing_area", 5.0, 5000.0, "m2", "the framing's surface", (("ft2", _FT**2),)),
    Check("attic.ridge_height", 0.3, 10.0, "m", "an attic's height", (("ft", _FT),)),
    Check("roof.planes.*.area", 1.0, 1000.0, "m2", "a roof plane", (("ft2", _FT**2),)),
    Check("ceiling.insulation", 0.2, 15.0, "m2K/W", "a ceiling's R-value",
          (("h.ft2.F/Btu", 1.0 / IP_FACTORS["r_value"][0]),), written="R-{v}"),
    Check("ceiling.leakage_area", 1e-4, 1.0, "m2", "a ceiling's leakage area", (("in2", _IN**2), ("cm2", 1e-4))),
    Check("house.envelope_leakage_area", 1e-3, 3.0, "m2", "a house's leakage area",
          (("in2", _IN**2), ("cm2", 1e-4))),
    Check("house.depressurisation_limit", 0.5, 100.0, "Pa", "a pressure limit", (("in_wc", 249.0889),)),
    Check("vents.openings.*.net_free_area", 1e-3, 10.0, "m2", "a vent's net free area",
          (("in2", _IN**2), ("ft2", _FT**2))),
    Check("vents.openings.*.height", 0.0, 10.0, "m", "a height in an attic", (("ft", _FT),)),
)

#: Temperatures given as bare numbers: (pattern, ordinary range [degC]).
TEMPERATURE_CHECKS = (("thermostat.on", (-30.0, 70.0)), ("thermostat.off", (-30.0, 70.0)))

#: Powered attic ventilators are commonly sized at about 0.7 cfm per ft2 of attic floor (common practice,
#: from memory: a ventilation trade association's published guidance, with 10 air changes an hour as a
#: floor and 15 % more for dark or steep roofs). A note is given outside a third to three times that.
SIZING_CFM_PER_FT2 = 0.7
SIZING_SPAN = 3.0

_NUMBER = re.compile(r"^\s*[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?\s*$")


def _bare(value) -> float | None:
    """The number of a bare value (a number, or text that is only a number), else None."""
    if isinstance(value, bool):
        return None
    try:
        if isinstance(value, (int, float)):
            return float(value)
        if isinstance(value, str) and len(value) < 100 and _NUMBER.match(value):
            return float(value)
    except OverflowError:  # an integer too large for a float: no unit makes it ordinary
        return None
    return None


def _walk(raw, parts, prefix=()):
    """(dotted key, value) for every value of ``raw`` at the path ``parts`` (``*`` = every list item)."""
    if not parts:
        yield ".".join(prefix), raw
        return
    head, rest = parts[0], parts[1:]
    if head == "*":
        if isinstance(raw, list):
            for i, item in enumerate(raw):
                yield from _walk(item, rest, prefix + (str(i),))
    elif isinstance(raw, dict) and head in raw:
        yield from _walk(raw[head], rest, prefix + (head,))


def _num(x: float) -> str:
    """A number for a sentence: thousands separated, about four significant figures."""
    if x == 0:
        return "0"
    if abs(x) >= 1000:
        return f"{x:,.0f}"
    return f"{x:.4g}"


def bare_number_warnings(raw: dict) -> list[str]:
    """Warnings for bare numbers that are absurd in their SI unit, naming the unit they were likely meant in."""
    out = []
    for check in CHECKS:
        for key, value in _walk(raw, check.pattern.split(".")):
            v = _bare(value)
            if v is None or not math.isfinite(v) or check.low <= v <= check.high:
                continue
            fits = [(unit, v * f) for unit, f in check.alternatives if check.low <= v * f <= check.high]
            read = f"{key} = {v:g} is read as {_num(v)} {check.si_unit}"
            if key.startswith("fan.") and "flow" in key:
                read += f" ({_num(v / _CFM)} cfm)"
            side = "far beyond" if v > check.high else "far below"
            if fits:
                meant = " or ".join(f"{_num(v)} {u} ({_num(si)} {check.si_unit})" for u, si in fits)
                text = check.written.format(v=f"{v:g}", unit=fits[0][0])
                out.append(f'{read}, {side} {check.what}; if you meant {meant}, write {key} = "{text}".')
            else:
                out.append(f"{read}, {side} the usual {_num(check.low)}-{_num(check.high)} {check.si_unit} "
                           f"for {check.what}; check the value and give its unit.")
    for pattern, (low, high) in TEMPERATURE_CHECKS:
        for key, value in _walk(raw, pattern.split(".")):
            v = _bare(value)
            if v is None or low <= v <= high:
                continue
            as_c = (v - 32.0) * 5.0 / 9.0
            if low <= as_c <= high:
                out.append(f"{key} = {v:g} is read as {v:g} degC; if you meant {_num(v)} degF "
                           f"({as_c:.1f} degC), write {key} = \"{_num(v)} degF\".")
    for key, value in _walk(raw, ["house", "indoor_relative_humidity"]):
        v = _bare(value)
        if v is not None and 0.0 < v <= 1.0:
            out.append(f"{key} = {v:g} is read as {v:g} % relative humidity; if you meant "
                       f"{v * 100:g} %, write {key} = {v * 100:g} (or \"{v * 100:g} %\").")
    return out


def _matches(pattern: str, key: str) -> bool:
    a, b = pattern.split("."), key.split(".")
    return len(a) == len(b) and all(x == y or (x == "*" and y.isdigit()) for x, y in zip(a, b))


def unit_hint(key: str, value) -> str | None:
    """What to write instead, when a bare number refused at ``key`` is ordinary in another unit: ``'if you
    meant 1,200 cfm (0.5663 m3/s), write fan.flow = "1200 cfm"'``; else None. For refusals (a value out of
    bounds), the same advice the warnings give for values inside them."""
    v = _bare(value)
    if v is None or not math.isfinite(v):
        return None
    for check in CHECKS:
        if _matches(check.pattern, key):
            fits = [(unit, v * f) for unit, f in check.alternatives if check.low <= v * f <= check.high]
            if fits:
                meant = " or ".join(f"{_num(v)} {u} ({_num(si)} {check.si_unit})" for u, si in fits)
                return f'if you meant {meant}, write {key} = "{check.written.format(v=f"{v:g}", unit=fits[0][0])}"'
    for pattern, (low, high) in TEMPERATURE_CHECKS:
        if _matches(pattern, key) and low <= (v - 32.0) * 5.0 / 9.0 <= high:
            return f'if you meant {_num(v)} degF ({(v - 32.0) * 5.0 / 9.0:.1f} degC), write {key} = "{_num(v)} degF"'
    return None


def sizing_notes(scenario) -> list[str]:
    """A note when the fan's flow per attic floor area is far from the trade's usual sizing."""
    fan = scenario.fan
    if not fan.enabled:
        return []
    flow_cfm = fan.rated_flow * (fan.speed_ratio if fan.curve_flow is not None else 1.0) / _CFM
    area_ft2 = scenario.attic.floor_area / _FT**2
    ratio = flow_cfm / area_ft2
    if SIZING_CFM_PER_FT2 / SIZING_SPAN <= ratio <= SIZING_CFM_PER_FT2 * SIZING_SPAN:
        return []
    usual = SIZING_CFM_PER_FT2 * area_ft2
    return [f"The fan moves {_num(flow_cfm)} cfm for {_num(area_ft2)} ft2 of attic floor ({_num(ratio)} cfm per ft2); "
            f"attic fans are usually sized near {SIZING_CFM_PER_FT2:g} cfm per ft2 (about {_num(usual)} cfm here; "
            f"common practice, from memory), so check the fan's flow and the floor area."]


def effect_notes(scenario, raw: dict) -> list[str]:
    """Keys given that have no effect with the rest of the scenario."""
    out = []
    fan = scenario.fan
    fan_raw = raw.get("fan", {}) if isinstance(raw.get("fan"), dict) else {}
    if "speed_ratio" in fan_raw and fan.speed_ratio != 1.0 and fan.curve_flow is None:
        out.append(f"fan.speed_ratio = {fan.speed_ratio:g} has no effect without the fan's curve (curve_pressure, "
                   f"curve_flow); give fan.flow and fan.power at that speed instead.")
    if "flow" in fan_raw and scenario.vents.openings:
        out.append("fan.flow is not used when vents.openings are described (the fan's curve sets its flow "
                   "against the vents); remove it or vary the curve instead.")
    return out


def plausibility_warnings(scenario, raw: dict) -> list[str]:
    """Every plausibility warning for a validated scenario and the raw dict it was read from.

    Parameters
    ----------
    scenario : Scenario
        The validated scenario (SI).
    raw : dict
        The TOML content as read, with ``--set`` overrides applied (to tell bare numbers from values with
        units).

    Returns
    -------
    list of str
        One sentence each; empty when nothing looks wrong.
    """
    return bare_number_warnings(raw) + sizing_notes(scenario) + effect_notes(scenario, raw)
