"""Units at the edges: parse user quantities to SI floats and format SI values for display.

Everything inside atticsim is an SI float. This module is the one place where strings such as
``"1200 cfm"``, ``"38 degC"``, ``"R-38"`` or ``"6/12"`` become numbers, and where SI numbers become
IP figures for people who read °F, CFM and Btu. pint is imported lazily, only when a string with a
unit has to be parsed, so that the solver and ``atticsim --help`` never pay for it.

A bare number (no unit) is taken in the SI unit of its kind (listed in :data:`KINDS`).
"""

from __future__ import annotations

import math
import re
from functools import lru_cache

from atticsim.errors import InputError, short_repr

#: Quantity kinds understood by :func:`to_si`: kind -> (SI unit as pint spells it, human description).
KINDS: dict[str, tuple[str, str]] = {
    "length": ("m", "a length"),
    "area": ("m**2", "an area"),
    "volume": ("m**3", "a volume"),
    "flow": ("m**3/s", "a volume flow"),
    "power": ("W", "a power"),
    "energy": ("J", "an energy"),
    "temperature": ("degC", "a temperature"),
    "temperature_difference": ("K", "a temperature difference"),
    "time": ("s", "a time"),
    "angle": ("deg", "an angle"),
    "pressure": ("Pa", "a pressure"),
    "mass": ("kg", "a mass"),
    "density": ("kg/m**3", "a density"),
    "conductivity": ("W/(m*K)", "a thermal conductivity"),
    "specific_heat": ("J/(kg*K)", "a specific heat capacity"),
    "r_value": ("m**2*K/W", "a thermal resistance per area (R-value)"),
    "conductance": ("W/K", "a thermal conductance"),
    "heat_capacity": ("J/K", "a heat capacity"),
    "velocity": ("m/s", "a speed"),
    "voltage": ("V", "a voltage"),
    "resistance": ("ohm", "a resistance"),
    "current": ("A", "a current"),
    "capacitance": ("F", "a capacitance"),
    "frequency": ("Hz", "a frequency"),
    "dimensionless": ("dimensionless", "a plain number"),
    "percent": ("percent", "a percentage"),
}

# 1 ft^2.degF.h/Btu_IT in m^2.K/W: (0.3048^2 m^2)(5/9 K)(3600 s) / 1055.05585262 J
# (Btu_IT by definition, NIST SP 811 appendix B).
R_IP_TO_SI = 0.3048**2 * (5.0 / 9.0) * 3600.0 / 1055.05585262

_NUMBER = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"
_R_VALUE = re.compile(rf"^\s*(RSI|R)\s*-?\s*({_NUMBER})\s*$", re.IGNORECASE)
_PITCH = re.compile(rf"^\s*({_NUMBER})\s*[/:]\s*12\s*(?:pitch)?\s*$", re.IGNORECASE)
_SPLIT = re.compile(rf"^\s*({_NUMBER})\s*(.*?)\s*$")


#: Longest text read as a quantity, and longest unit in it (characters): a guard against pasted junk
#: (and against the regular expressions' and pint's parser's work on it).
MAX_TEXT = 100
MAX_UNIT = 60
# an exponent in a unit: a small plain number (m**2, m^-1, s**0.5), never a chain (10**10**10 would take
# pint's parser hours to evaluate) nor an expression
_POWER = re.compile(r"\*\*|\^")
_SMALL_EXPONENT = re.compile(r"\s*[-+]?\d(?:\.\d{1,3})?(?!\s*(?:\d|\.|\*\*|\^|\())")


class UnitError(InputError):
    """A quantity whose unit is missing, unknown or of the wrong kind, or whose number is not finite."""


@lru_cache(maxsize=1)
def registry():
    """The project's pint UnitRegistry (created once, on first use).

    Adds ``cfm``/``CFM`` (pint would read bare ``cfm`` as centi-fermi), ``in_wc``/``inH2O`` for inches of
    water column, and ``ach`` is deliberately *not* defined (an air-change rate needs a volume).
    """
    import pint

    folder = _pint_cache_folder(pint)
    try:
        ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True, cache_folder=folder)
    except Exception:  # noqa: BLE001 - any failure of the cache (damaged, stale, unreadable) means: no cache
        ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    ureg.define("cubic_foot_per_minute = foot**3/minute = cfm = CFM")
    ureg.define("inch_water_column = 249.0889 * pascal = in_wc = inWC = in_w_c")
    return ureg


def _pint_cache_folder(pint):
    """pint's parse cache in atticsim's own cache folder, keyed by this install and by pint's own files (its
    entries hold paths into the environment that wrote them), or None (no disk cache) when there is none.
    Never pint's user-wide ``:auto:`` folder, which every environment with the same pint version shares."""
    import hashlib
    from pathlib import Path

    from atticsim.jitcache import folder

    base = folder()
    if base is None:
        return None
    tag = hashlib.sha1(f"{Path(pint.__file__).resolve()}|{pint.__version__}".encode()).hexdigest()[:12]
    path = base.parent / f"pint-{tag}"
    try:
        path.mkdir(parents=True, exist_ok=True)
    except OSError:
        return None
    return path


def to_si(value, kind: str) -> float:
    """Convert a user value to an SI float of the given kind.

    Parameters
    ----------
    value : float, int or str
        A bare number (taken in the SI unit of ``kind``) or a string with a unit, e.g. ``"1200 cfm"``,
        ``"100 degF"``, ``"R-38"`` (IP R-value), ``"RSI 6.7"``, ``"6/12"`` (roof pitch, angles only).
    kind : str
        One of :data:`KINDS`.

    Returns
    -------
    float
        The value in the SI unit of ``kind`` (degrees Celsius for temperatures, degrees for angles).

    Raises
    ------
    UnitError
        If the value cannot be read as a quantity of that kind.
    """
    if kind not in KINDS:
        raise KeyError(f"unknown quantity kind {kind!r}")
    if isinstance(value, bool):
        raise UnitError(f"expected {KINDS[kind][1]}, got a true/false value")
    if isinstance(value, (int, float)):
        return _finite(value, value)
    if not isinstance(value, str):
        raise UnitError(f"expected {KINDS[kind][1]}, got {short_repr(value)}")
    text = value.strip()
    if len(text) > MAX_TEXT:
        raise UnitError(f"expected {KINDS[kind][1]} such as '{_example(kind)}', got a text of {len(text)} "
                        f"characters (at most {MAX_TEXT})")
    if kind == "r_value":
        m = _R_VALUE.match(text)
        if m:
            number = _finite(float(m.group(2)), value)
            # "R-38" is the North American trade R-value in ft2.degF.h/Btu; "RSI 6.7" is already SI.
            return number if m.group(1).upper() == "RSI" else number * R_IP_TO_SI
    if kind == "angle":
        m = _PITCH.match(text)
        if m:
            # Roof pitch "rise/12": angle = atan(rise/12) (common practice, carpentry).
            return math.degrees(math.atan(_finite(float(m.group(1)), value) / 12.0))
    m = _SPLIT.match(text)
    if not m:
        raise UnitError(f"expected {KINDS[kind][1]} such as '{_example(kind)}', got {short_repr(value)}")
    number, unit = _finite(float(m.group(1)), value), m.group(2)
    if not unit:
        return number
    return _finite(_convert(number, unit, kind, value), value)


def _finite(number, original) -> float:
    """``number`` as a finite float, else UnitError (inf, nan, 1e400, an integer too large for a float)."""
    try:
        x = float(number)
    except OverflowError:
        raise UnitError(f"{short_repr(original)} is too large a number") from None
    if not math.isfinite(x):
        raise UnitError(f"{short_repr(original)} is not a finite number")
    return x


def _convert(number: float, unit: str, kind: str, original) -> float:
    # Trade shorthand "ft2", "m3/s" -> "ft**2", "m**3/s".
    unit = re.sub(r"(?<=[A-Za-z])([23])(?![\d.])", r"**\1", unit)
    if len(unit) > MAX_UNIT:
        raise UnitError(f"the unit of {short_repr(original)} is longer than {MAX_UNIT} characters")
    if any(not _SMALL_EXPONENT.match(unit, p.end()) for p in _POWER.finditer(unit)):
        raise UnitError(f"unknown unit {short_repr(unit)} in {short_repr(original)} (an exponent in a unit is a "
                        f"small plain number: m**2, m^-1)")
    outcome, value = _pint_convert(number, unit, kind)
    if outcome == "unknown":
        raise UnitError(f"unknown unit {short_repr(unit)} in {short_repr(original)}")
    if outcome == "dimension":
        raise UnitError(f"expected {KINDS[kind][1]} such as '{_example(kind)}', got {short_repr(original)} "
                        f"(unit {short_repr(unit)})")
    return value


@lru_cache(maxsize=4096)
def _pint_convert(number: float, unit: str, kind: str) -> tuple:
    """("ok", value in the SI unit of kind), ("unknown", None) or ("dimension", None). Kept per number,
    unit and kind: a study's points repeat the same scenario values, and pint parses each unit anew
    (planning a 1000-point study spent some 1.9 s, 0.09 ms a value, in these conversions)."""
    import pint

    ureg = registry()
    target = KINDS[kind][0]
    try:
        q = ureg.Quantity(number, unit)
    except Exception:  # noqa: BLE001 - pint's parser raises many kinds (TokenError for an unbalanced
        return "unknown", None  # bracket, ZeroDivisionError for "m/0", RecursionError...): not a unit
    try:
        if kind == "temperature_difference":
            unit_str = str(q.units)
            # A difference written in an absolute scale ("5 degC", "9 degF") means a difference.
            if unit_str in ("degree_Celsius", "degree_Fahrenheit"):
                delta = {"degree_Celsius": 1.0, "degree_Fahrenheit": 5.0 / 9.0}[unit_str]
                return "ok", number * delta
        return "ok", float(q.to(target).magnitude)
    except pint.errors.DimensionalityError:
        return "dimension", None
    except Exception:  # noqa: BLE001 - an offset unit in a product, an overflow: not a quantity of this kind
        return "unknown", None


def _example(kind: str) -> str:
    return {
        "length": "3.2 m", "area": "120 m2", "volume": "180 m3", "flow": "1200 cfm",
        "power": "180 W", "energy": "1.5 kWh", "temperature": "38 degC", "temperature_difference": "4 K",
        "time": "5 min", "angle": "6/12", "pressure": "0.1 in_wc", "mass": "900 kg",
        "density": "500 kg/m3", "conductivity": "0.12 W/(m*K)", "specific_heat": "1880 J/(kg*K)",
        "r_value": "R-38", "conductance": "0.0015 W/K", "heat_capacity": "400 J/K", "velocity": "3 m/s", "voltage": "12 V",
        "resistance": "10 kohm", "current": "10 mA", "capacitance": "0.47 uF", "frequency": "60 Hz",
        "dimensionless": "0.9", "percent": "50 %",
    }[kind]


# --- display in IP units (edges only) -------------------------------------------------------------

def c_to_f(temp_c):
    """Temperature [degC] -> [degF] (definition of the Fahrenheit scale)."""
    return temp_c * 9.0 / 5.0 + 32.0


def k_to_delta_f(delta_k):
    """Temperature difference [K] -> [delta degF]."""
    return delta_k * 9.0 / 5.0


#: SI -> IP factors for display: name -> (factor, IP unit label). Sources: NIST SP 811 appendix B.
IP_FACTORS = {
    "flow": (1.0 / (0.3048**3 / 60.0), "cfm"),
    "area": (1.0 / 0.3048**2, "ft2"),
    "length": (1.0 / 0.3048, "ft"),
    "energy_kwh": (3412.14163, "Btu"),  # 1 kWh = 3412.14 Btu_IT
    "pressure": (1.0 / 249.0889, "in. w.c."),
    "r_value": (1.0 / R_IP_TO_SI, "h.ft2.F/Btu"),
    "volume": (1.0 / 0.3048**3, "ft3"),
}


#: More SI -> IP factors for files and figures (NIST SP 811 appendix B): W -> Btu_IT/h, kWh -> kBtu_IT,
#: m/s -> mph, W/m2 -> Btu_IT/(h ft2).
IP_FACTORS.update({
    "power": (3.41214163, "Btu/h"),
    "energy_kbtu": (3.41214163, "kBtu"),
    "velocity": (1.0 / 0.44704, "mph"),
    "irradiance": (3.41214163 * 0.3048**2, "Btu/h.ft2"),
})


def _scale(kind):
    factor = IP_FACTORS[kind][0]
    return lambda v: v * factor


#: Name endings of SI columns and keys -> (ending of the IP companion, conversion), longest ending first.
#: Trade units: degF, delta degF, Btu/h, kBtu (heat and electricity alike, beside the kWh kept in SI),
#: cfm, ft3, ft2, in. w.c., mph, Btu/h.ft2. ``_per_k`` endings (conductances) have no companion.
IP_SUFFIXES = (
    ("_w_m2", "_btu_h_ft2", _scale("irradiance")),
    ("_m3_s", "_cfm", _scale("flow")),
    ("_m3s", "_cfm", _scale("flow")),
    ("_m_s", "_mph", _scale("velocity")),
    ("_kwh", "_kbtu", _scale("energy_kbtu")),
    ("_m3", "_ft3", _scale("volume")),
    ("_m2", "_ft2", _scale("area")),
    ("_pa", "_in_wc", _scale("pressure")),
    ("_w", "_btu_h", _scale("power")),
    ("_c", "_f", c_to_f),
    ("_k", "_delta_f", k_to_delta_f),
)


def ip_companion(name: str):
    """(IP name, conversion) for an SI column or key named by its unit ending, or None.

    ``attic_air_c`` -> ``attic_air_f`` (degF), ``fan_flow_m3_s`` -> ``fan_flow_cfm``, ``ceiling_heat_gain_w``
    -> ``ceiling_heat_gain_btu_h``, ``fan_energy_kwh`` -> ``fan_energy_kbtu``.
    """
    if name.endswith("_per_k"):
        return None
    for si, ip, convert in IP_SUFFIXES:
        if name.endswith(si) and len(name) > len(si):
            return name[: -len(si)] + ip, convert
    return None


def ip_text(value: float, kind: str) -> str:
    """An SI value of ``kind`` in the trade's IP unit, for messages (``"98.43 ft"``, ``"R-199"``, ``"212 degF"``);
    empty for kinds without one."""
    if kind == "temperature":
        return f"{c_to_f(value):.4g} degF"
    if kind == "r_value":
        return f"R-{value * IP_FACTORS['r_value'][0]:.3g}"
    if kind in IP_FACTORS:
        factor, label = IP_FACTORS[kind]
        x = value * factor
        return f"{x:,.0f} {label}" if 1000 <= abs(x) < 1e12 else f"{x:.4g} {label}"
    return ""
