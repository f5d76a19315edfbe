"""What a study varies and which points it runs: ``--vary`` texts, study TOML files, grid and Latin-hypercube
sampling, and the per-point scenario overrides (including derived parameters such as a hysteresis width).

A varied *axis* is one scenario key and its values::

    thermostat.on=36:44:2degC        range START:STOP:STEP, STOP included when it falls on the grid
    fan.flow=1000,1200,1500cfm       comma list, the unit written once at the end
    weather.sky_model=berdahl-martin,swinbank       text values (TOML syntax if it parses, else plain text)
    thermostat.hysteresis=1:6:1K     derived: off = on - width (closes on rise) or on + width (closes on fall)
    fan.speed_ratio=0.6:1:0.2        derived for a fan without a curve: flow ~ N, power ~ N^3 (fan laws)

A point that varies ``fan.flow`` but not ``fan.power`` gets the base fan's watts per m3/s times its flow (a
bigger fan of the same kind is never free; :func:`scaled_fan_power`).

Any scenario key can vary: a point is a list of ``"dotted.key=value"`` overrides handed to
:func:`atticsim.scenario.load_scenario`, which validates it like ``--set``.

Every error here is a :class:`StudyError` (a ``ValueError``) whose text is one line naming the option or
file key and the reason.
"""

from __future__ import annotations

import itertools
import math
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from atticsim.errors import InputError, short_repr
from atticsim.scenario.load import toml_string

#: Default starts-per-hour limit for small fan motors. Common practice, from memory: motor makers' guidance
#: for small single-phase induction motors allows roughly 6 starts per hour (a start draws several times the
#: running current and heats the winding; frequent starts shorten insulation and capacitor life). Not taken
#: from a standard; set your motor maker's figure with --starts-limit.
DEFAULT_STARTS_PER_HOUR = 6.0

#: Default comfort limit of attic air for the degree-hour figure [degC]. 38 degC (100 degF) is a round
#: figure chosen for this project (common practice, no source); set it with --comfort-limit.
DEFAULT_COMFORT_LIMIT_C = 38.0

#: Short cycles a point may have and still be recommended (none: a recommended setting should not hunt).
DEFAULT_SHORT_CYCLES_ALLOWED = 0

#: Heat figures within this fraction of the lowest tie [-] (1 %: closer than the model's own accuracy for
#: attic air, common practice, no source); set it with --heat-tolerance.
DEFAULT_HEAT_TOLERANCE = 0.01

#: Heat figures the recommendation can minimise: name -> column of the points table.
HEAT_METRICS = {"degree-hours": "degree_hours_above_limit", "ceiling-gain": "ceiling_heat_gain_kwh"}

#: Largest number of values one range may produce (a guard against a mistyped STEP).
MAX_AXIS_VALUES = 10000

#: Most points one study may hold, checked before any point is drawn (a 100 x 100 grid is 10,000; on two
#: cores a 92-day point takes about 0.1-0.3 s, so this is hours of work). Planning holds each point's
#: validated scenario in memory.
MAX_STUDY_POINTS = 20000

_NUM = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"
_NUMERIC = re.compile(rf"^\s*({_NUM})((?:\s*[:,]\s*{_NUM})*)\s*(.*?)\s*$")
_KEY = re.compile(r"^[A-Za-z_][\w-]*(?:\.[\w-]+)*$")


class StudyError(InputError):
    """Bad study input; ``str(err)`` is one line naming the option (or file and key) and the reason."""


# --- axes ---------------------------------------------------------------------------------------------

@dataclass(frozen=True)
class Value:
    """One value of an axis.

    Attributes
    ----------
    display : str
        The value as the user gave it, with its unit ("36 degC", "1200 cfm", "swinbank").
    literal : str
        The value as TOML text for an override (``'"36 degC"'``, ``'3'``, ``'true'``).
    number : float or None
        The number in the given unit (None for text or true/false values).
    """

    display: str
    literal: str
    number: float | None = None


@dataclass(frozen=True)
class Axis:
    """A varied key and its values.

    Attributes
    ----------
    key : str
        Dotted scenario key (or a derived key from :data:`DERIVED`).
    values : tuple of Value
        Grid values (for a range: START, START+STEP, ... up to STOP).
    unit : str
        Unit appended to every numeric value ("" for none).
    start, stop, step : float or None
        The range as given (None for a list); Latin-hypercube sampling draws from [start, stop].
    text : str
        The axis as written (for messages and the study record).
    """

    key: str
    values: tuple[Value, ...]
    unit: str = ""
    start: float | None = None
    stop: float | None = None
    step: float | None = None
    text: str = ""

    @property
    def is_range(self) -> bool:
        return self.start is not None

    def describe(self) -> dict:
        """The axis as a JSON-friendly dict (for study.json)."""
        d = {"key": self.key, "text": self.text, "unit": self.unit}
        if self.is_range:
            d.update(start=self.start, stop=self.stop, step=self.step)
        d["values"] = [v.display for v in self.values]
        return d


def _fmt(x: float) -> str:
    """A float as short text that round-trips at 10 significant digits (36.0 -> "36", 0.1*3 -> "0.3")."""
    text = f"{x:.10g}"
    return "0" if text in ("-0", "+0") else text


def _numeric_value(number: float, unit: str) -> Value:
    text = _fmt(number)
    if unit:
        display = f"{text} {unit}"
        return Value(display, toml_string(display), float(text))
    return Value(text, text, float(text))


def range_values(start: float, stop: float, step: float, where: str) -> list[float]:
    """Values START, START+STEP, ... up to STOP, STOP included when it falls on the grid.

    Parameters
    ----------
    start, stop, step : float
        Range ends and step in one unit; the step's sign must point from start to stop.
    where : str
        Name of the option or key, for error messages.
    """
    if not all(math.isfinite(v) for v in (start, stop, step)):
        raise StudyError(f"{where}: START, STOP and STEP must be finite numbers")
    if step == 0.0:
        raise StudyError(f"{where}: STEP must not be zero")
    if start == stop:
        return [start]
    if (stop - start) * step < 0:
        raise StudyError(f"{where}: STEP {_fmt(step)} goes away from STOP {_fmt(stop)} "
                         f"(START {_fmt(start)}); flip its sign")
    # A relative allowance so that 0.1:0.5:0.1 includes 0.5 despite binary rounding.
    n = int(math.floor((stop - start) / step * (1.0 + 1e-12) + 1e-9)) + 1
    if n > MAX_AXIS_VALUES:
        raise StudyError(f"{where}: the range makes {n} values (more than {MAX_AXIS_VALUES}); check STEP")
    return [float(_fmt(start + i * step)) for i in range(n)]


class _NotToml(Exception):
    pass


def _text_values(raw: str, where: str, strict: bool = False) -> list[Value]:
    """Comma-separated non-numeric values: a TOML array if it parses (text, true/false, dates), else plain
    words (``strict``: raise _NotToml instead)."""
    try:
        items = tomllib.loads(f"v = [{raw}]")["v"]
    except (ValueError, RecursionError):  # TOMLDecodeError, or an integer too long to read
        if strict:
            raise _NotToml from None
        items = [part.strip() for part in raw.split(",")]
        if any(not part for part in items):
            raise StudyError(f"{where}: empty value in the list {raw!r}") from None
    out = []
    for item in items:
        if isinstance(item, bool):
            out.append(Value("true" if item else "false", "true" if item else "false"))
        elif isinstance(item, (int, float)):
            out.append(_numeric_value(float(item), ""))
        elif isinstance(item, str):
            out.append(Value(item, toml_string(item)))
        elif hasattr(item, "isoformat"):  # TOML date or date-time, e.g. weather.start=2025-07-01,2025-08-01
            out.append(Value(item.isoformat(), item.isoformat()))
        else:
            raise StudyError(f"{where}: unsupported value {short_repr(item)} (use numbers, text, dates or true/false)")
    return out


def parse_vary(text: str, option: str = "--vary") -> Axis:
    """Parse one ``KEY=START:STOP:STEP[unit]`` or ``KEY=a,b,c[unit]`` text into an :class:`Axis`.

    Parameters
    ----------
    text : str
        The option's value, e.g. ``"thermostat.on=36:44:2degC"``.
    option : str
        Option name used in error messages.

    Returns
    -------
    Axis

    Raises
    ------
    StudyError
        One line naming the option, the text and the reason.
    """
    where = f"{option} {short_repr(text) if len(text) > 60 else text}"
    if len(text) > 5000:
        raise StudyError(f"{where}: longer than 5000 characters; give a range START:STOP:STEP or fewer values")
    if "=" not in text:
        raise StudyError(f"{where}: expected KEY=START:STOP:STEP[unit] or KEY=a,b,c[unit]")
    key, raw = (s.strip() for s in text.split("=", 1))
    if not key or not _KEY.match(key):
        raise StudyError(f"{where}: {key!r} is not a dotted scenario key such as thermostat.on")
    if not raw:
        raise StudyError(f"{where}: no values after '='")
    if ":" in raw and any(part.strip().lower().lstrip("+-").startswith(("inf", "nan")) for part in raw.split(":")):
        raise StudyError(f"{where}: START, STOP and STEP must be finite numbers")
    m = _NUMERIC.match(raw)
    if m and (not m.group(3) or not re.search(r"[:,]", m.group(3))):
        first, rest, unit = m.group(1), m.group(2), m.group(3)
        numbers = [float(first)] + [float(x) for x in re.findall(_NUM, rest)]
        seps = set(re.findall(r"[:,]", rest))
        if seps == {":", ","}:
            raise StudyError(f"{where}: mix of ':' and ','; use START:STOP:STEP or a,b,c")
        if ":" in seps:
            if len(numbers) == 2:
                return Axis(key, (), unit, numbers[0], numbers[1], None, text)
            if len(numbers) != 3:
                raise StudyError(f"{where}: a range is START:STOP:STEP (got {len(numbers)} numbers)")
            values = range_values(*numbers, where=where)
            return Axis(key, tuple(_numeric_value(v, unit) for v in values), unit, numbers[0], numbers[1],
                        numbers[2], text)
        return Axis(key, tuple(_numeric_value(v, unit) for v in numbers), unit, text=text)
    try:
        values = _text_values(raw, where, strict=m is not None)
    except _NotToml:
        raise StudyError(f"{where}: write the unit once, at the end (e.g. {key}=1000,1200,1500cfm)") from None
    return Axis(key, tuple(values), "", text=text)


def axis_from_table(table: dict, where: str) -> Axis:
    """Build an :class:`Axis` from a study file's ``[[vary]]`` table.

    The table holds ``key``, then either ``start``/``stop``/``step`` or ``values``, and an optional
    ``unit`` appended to every number.
    """
    allowed = {"key", "start", "stop", "step", "values", "unit"}
    unknown = sorted(set(table) - allowed)
    if unknown:
        raise StudyError(f"{where}.{unknown[0]}: unknown key{_did_you_mean(unknown[0], allowed)} "
                         f"(allowed: {', '.join(sorted(allowed))})")
    key = table.get("key")
    if not isinstance(key, str) or not _KEY.match(key):
        raise StudyError(f"{where}.key: required, a dotted scenario key such as \"thermostat.on\"")
    unit = table.get("unit", "")
    if not isinstance(unit, str):
        raise StudyError(f"{where}.unit: must be text such as \"degC\"")
    unit = unit.strip()
    has_range = any(k in table for k in ("start", "stop", "step"))
    if has_range == ("values" in table):
        raise StudyError(f"{where}: give either start/stop/step or values")
    text = f"{key}=" + (f"{table.get('start')}:{table.get('stop')}:{table.get('step')}" if has_range
                        else ",".join(str(v) for v in table["values"] or [])) + unit
    if has_range:
        nums = []
        for name in ("start", "stop"):
            v = table.get(name)
            if isinstance(v, bool) or not isinstance(v, (int, float)):
                raise StudyError(f"{where}.{name}: required, a number (the unit goes in 'unit')")
            nums.append(float(v))
        step = table.get("step")
        if step is None:
            return Axis(key, (), unit, nums[0], nums[1], None, text)
        if isinstance(step, bool) or not isinstance(step, (int, float)):
            raise StudyError(f"{where}.step: must be a number")
        values = range_values(nums[0], nums[1], float(step), where)
        return Axis(key, tuple(_numeric_value(v, unit) for v in values), unit, nums[0], nums[1], float(step),
                    text)
    values = table["values"]
    if not isinstance(values, list) or not values:
        raise StudyError(f"{where}.values: must be a non-empty list")
    out = []
    for v in values:
        if isinstance(v, bool):
            if unit:
                raise StudyError(f"{where}.values: true/false values take no unit")
            out.append(Value("true" if v else "false", "true" if v else "false"))
        elif isinstance(v, (int, float)):
            out.append(_numeric_value(float(v), unit))
        elif isinstance(v, str):
            if unit:
                raise StudyError(f"{where}.values: give numbers when a unit is set (got {short_repr(v)})")
            out.append(Value(v, toml_string(v)))
        else:
            raise StudyError(f"{where}.values: unsupported value {short_repr(v)}")
    return Axis(key, tuple(out), unit, text=text)


def _did_you_mean(name: str, known) -> str:
    import difflib

    close = difflib.get_close_matches(str(name), sorted(known), n=1, cutoff=0.6)
    return f" (did you mean {close[0]}?)" if close else ""


# --- sampling -----------------------------------------------------------------------------------------

def latin_hypercube(n_points: int, n_dims: int, seed: int) -> np.ndarray:
    """A Latin-hypercube sample of the unit cube.

    Each dimension is cut into ``n_points`` equal strata and each stratum holds exactly one point, at a
    uniformly random place inside it; strata are paired across dimensions by independent random
    permutations (McKay, Beckman & Conover, Technometrics 21(2), 1979).

    Parameters
    ----------
    n_points : int
        Number of points (and of strata per dimension), >= 1.
    n_dims : int
        Number of dimensions, >= 1.
    seed : int
        Seed of numpy's default generator; the same seed gives the same sample.

    Returns
    -------
    numpy.ndarray
        Shape (n_points, n_dims), values in [0, 1).
    """
    if n_points < 1:
        raise StudyError(f"--points: must be at least 1 (got {n_points})")
    if n_dims < 1:
        raise StudyError("--vary: Latin-hypercube sampling needs at least one varied key")
    rng = np.random.default_rng(seed)
    u = np.empty((n_points, n_dims))
    for d in range(n_dims):
        u[:, d] = (rng.permutation(n_points) + rng.random(n_points)) / n_points
    return u


def grid_points(axes: list[Axis]) -> list[dict[str, Value]]:
    """Every combination of the axes' values (the first axis varies slowest)."""
    for ax in axes:
        if not ax.values:
            raise StudyError(f"--vary {ax.text}: a grid needs START:STOP:STEP or a list of values")
    return [dict(zip((ax.key for ax in axes), combo)) for combo in itertools.product(*(ax.values for ax in axes))]


def lhs_points(axes: list[Axis], n_points: int, seed: int) -> list[dict[str, Value]]:
    """A Latin-hypercube sample of the axes.

    A range axis draws continuous values in [START, STOP] (its STEP is not used; values are rounded to 6
    significant digits); a list axis maps its
    stratum to a list position, floor(u * len(values)), so each value is used n/len times (+-1).
    """
    u = latin_hypercube(n_points, len(axes), seed)
    points = []
    for row in u:
        p = {}
        for ax, x in zip(axes, row):
            if ax.is_range:
                # 6 significant digits: ample for any physical setting, and short to read
                p[ax.key] = _numeric_value(float(f"{ax.start + x * (ax.stop - ax.start):.6g}"), ax.unit)
            else:
                p[ax.key] = ax.values[min(int(x * len(ax.values)), len(ax.values) - 1)]
        points.append(p)
    return points


# --- derived parameters -------------------------------------------------------------------------------

def _hysteresis_overrides(width: Value, point: dict[str, Value], base) -> list[str]:
    """thermostat.hysteresis -> thermostat.off = on - width (a switch closing on rise) or on + width
    (closing on fall).

    ``on`` and ``action`` come from the same point when they vary, else from the base scenario.
    """
    from atticsim.units import UnitError, to_si

    where = "thermostat.hysteresis"
    th = base.thermostat
    if getattr(th, "kind", None) != "setpoints":
        raise StudyError(f"{where}: needs thermostat kind 'setpoints' (the scenario has "
                         f"{getattr(th, 'kind', None)!r})")
    try:
        w = to_si(width.display, "temperature_difference")
        on = to_si(point["thermostat.on"].display, "temperature") if "thermostat.on" in point else th.on
    except UnitError as exc:
        raise StudyError(f"{where}: {exc}") from None
    if not w > 0.0:
        raise StudyError(f"{where}: the width must be greater than 0 K")
    action = point["thermostat.action"].display if "thermostat.action" in point else th.action
    off = on - w if action == "close-on-rise" else on + w
    return [f"thermostat.off={off!r}"]


def _speed_overrides(ratio: Value, point: dict[str, Value], base) -> list[str]:
    """fan.speed_ratio -> the key itself for a fan described by its curve (the airflow model applies the fan
    laws), else the rated flow and power at that speed by the fan laws: Q ~ N, P ~ N^3 (fan affinity laws,
    e.g. ASHRAE Handbook HVAC Systems and Equipment, fans chapter; from memory). The simple airflow form
    does not read the speed ratio, so a study of it on a fan without a curve would change nothing."""
    from atticsim.units import UnitError, to_si

    where = "fan.speed_ratio"
    try:
        n = to_si(ratio.display, "dimensionless")
    except UnitError as exc:
        raise StudyError(f"{where}: {exc}") from None
    if not 0.0 < n <= 2.0:
        raise StudyError(f"{where}: must be greater than 0 and at most 2 (got {ratio.display})")
    fan = base.fan
    if fan.curve_flow is not None:
        return [f"fan.speed_ratio={n!r}"]
    # with their units: derived values are not bare numbers the plausibility checks should question
    return [f'fan.flow="{fan.flow * n!r} m3/s"', f'fan.power="{fan.power * n**3!r} W"']


#: Derived keys: name -> (function(value, point, base_scenario) -> overrides, keys it sets, SI kind).
DERIVED = {
    "thermostat.hysteresis": (_hysteresis_overrides, ("thermostat.off",), "temperature_difference"),
    "fan.speed_ratio": (_speed_overrides, ("fan.flow", "fan.power"), "dimensionless"),
}


def scaled_fan_power(point: dict[str, Value], base) -> list[str]:
    """fan.power for a point that varies fan.flow but not fan.power (nor fan.speed_ratio): the base fan's
    watts per m3/s times the point's flow (a bigger fan of the same kind, common practice, no source: the
    power of fans of one kind and static pressure grows about in proportion to their flow). A bigger fan
    is never free. Empty when the point does not vary fan.flow or sets the power itself."""
    from atticsim.units import UnitError, to_si

    if "fan.flow" not in point or "fan.power" in point or "fan.speed_ratio" in point:
        return []
    base_flow = base.fan.flow if base.fan.flow is not None else base.fan.rated_flow
    try:
        flow = to_si(point["fan.flow"].display, "flow")
    except UnitError as exc:
        raise StudyError(f"fan.flow: {exc}") from None
    if not flow > 0.0:
        return []  # the scenario's own check refuses it, naming the key
    return [f'fan.power="{base.fan.power * flow / base_flow!r} W"']


def point_overrides(point: dict[str, Value], base) -> list[str]:
    """The ``dotted.key=value`` overrides for one point (derived keys resolved against ``base``; the fan's
    power scaled with a varied flow, see :func:`scaled_fan_power`)."""
    out = []
    for key, value in point.items():
        if key in DERIVED:
            out.extend(DERIVED[key][0](value, point, base))
        else:
            out.append(f"{key}={value.literal}")
    return out + scaled_fan_power(point, base)


# --- the study ----------------------------------------------------------------------------------------

@dataclass
class Study:
    """Everything that defines a study (what the CLI options or a study TOML file say).

    Attributes
    ----------
    axes : list of Axis
        The varied keys.
    scenario : str or None
        Scenario TOML path (None: the built-in demo house).
    base_overrides : list of str
        ``--set`` overrides applied to every point before the varied values.
    sample : {"grid", "lhs"}
        Full grid or Latin-hypercube sample.
    points : int or None
        Number of Latin-hypercube points.
    seed : int or None
        Seed of the Latin-hypercube sample (drawn and recorded when not given).
    start, end : str or None
        Period (ISO dates, local standard time); None: the scenario's own.
    months : str or None
        A month range or season instead of dates (``jun-aug``, ``7``, ``summer``...; as ``run --months``),
        in the weather's first year; :func:`resolve_months` turns it into ``start`` and ``end``.
    starts_limit : float
        Starts per hour a motor may make [1/h].
    short_cycles_allowed : int
        Short cycles (complete runs shorter than ``simulation.short_cycle``) a point may have and still
        qualify for the recommendation.
    comfort_limit_c : float
        Attic air temperature above which degree-hours are counted [degC].
    heat_metric : str
        Key of :data:`HEAT_METRICS` minimised by the recommendation.
    heat_tolerance : float
        Heat figures within this fraction of the lowest (or 0.01 in the figure's unit, whichever is larger)
        tie [-].
    source : str
        Where the study came from (file name or "command line").
    """

    axes: list[Axis] = field(default_factory=list)
    scenario: str | None = None
    base_overrides: list[str] = field(default_factory=list)
    sample: str = "grid"
    points: int | None = None
    seed: int | None = None
    start: str | None = None
    end: str | None = None
    months: str | None = None
    starts_limit: float = DEFAULT_STARTS_PER_HOUR
    short_cycles_allowed: int = DEFAULT_SHORT_CYCLES_ALLOWED
    comfort_limit_c: float = DEFAULT_COMFORT_LIMIT_C
    heat_metric: str = "degree-hours"
    heat_tolerance: float = DEFAULT_HEAT_TOLERANCE
    source: str = "command line"

    def check(self) -> None:
        """Raise StudyError for an inconsistent study (no axes, duplicate keys, bad sampling)."""
        if not self.axes:
            raise StudyError("--vary: give at least one KEY=START:STOP:STEP[unit] (or [[vary]] in --study)")
        keys = [ax.key for ax in self.axes]
        dup = sorted({k for k in keys if keys.count(k) > 1})
        if dup:
            raise StudyError(f"--vary {dup[0]}: the key is varied twice")
        for name, (_, sets, _) in DERIVED.items():
            clash = [k for k in sets if name in keys and k in keys]
            if clash:
                raise StudyError(f"--vary {name}: cannot vary together with {clash[0]} (it sets {clash[0]})")
        if not isinstance(self.sample, str) or self.sample not in ("grid", "lhs"):
            raise StudyError(f"--sample: must be grid or lhs (got {short_repr(self.sample)})")
        if self.sample == "lhs":
            if self.points is None or self.points < 1:
                raise StudyError("--points: Latin-hypercube sampling needs --points N (N >= 1)")
            if self.points > MAX_STUDY_POINTS:
                raise StudyError(f"--points: {self.points:,} points, more than the {MAX_STUDY_POINTS:,} a study may "
                                 f"hold; split it into smaller studies")
            for ax in self.axes:
                if not ax.is_range and not ax.values:
                    raise StudyError(f"--vary {ax.text}: no values")
        else:
            if self.points is not None:
                raise StudyError("--points: only used with --sample lhs (a grid has one point per combination)")
            for ax in self.axes:
                if not ax.values:
                    raise StudyError(f"--vary {ax.text}: a grid needs START:STOP:STEP or a list of values")
            total = math.prod(len(ax.values) for ax in self.axes)
            if total > MAX_STUDY_POINTS:
                sizes = " x ".join(f"{len(ax.values):,}" for ax in self.axes)
                raise StudyError(f"--vary: the grid makes {sizes} = {total:,} points, more than the "
                                 f"{MAX_STUDY_POINTS:,} a study may hold; use fewer values (a coarser STEP) or "
                                 f"--sample lhs --points N")
        if self.months is not None:  # (given with dates: refused where both were read, the CLI and the file)
            from atticsim.forcing.build import months_period

            try:
                months_period(str(self.months), 2001)
            except ValueError as exc:
                raise StudyError(str(exc)) from None
        if self.seed is not None and (isinstance(self.seed, bool) or not 0 <= self.seed < 2**32):
            raise StudyError(f"--seed: must be a whole number from 0 to {2**32 - 1} (got {short_repr(self.seed)})")
        if not (math.isfinite(self.starts_limit) and self.starts_limit > 0):
            raise StudyError(f"--starts-limit: must be a positive number of starts per hour "
                             f"(got {self.starts_limit!r})")
        if isinstance(self.short_cycles_allowed, bool) or not isinstance(self.short_cycles_allowed, int) \
                or self.short_cycles_allowed < 0:
            raise StudyError(f"--short-cycles-allowed: must be a whole number, 0 or more "
                             f"(got {self.short_cycles_allowed!r})")
        if not (math.isfinite(self.heat_tolerance) and 0.0 <= self.heat_tolerance < 1.0):
            raise StudyError(f"--heat-tolerance: must be from 0 % to under 100 % (got {self.heat_tolerance!r})")
        if not isinstance(self.heat_metric, str) or self.heat_metric not in HEAT_METRICS:
            raise StudyError(f"--heat-metric: must be one of {', '.join(HEAT_METRICS)} "
                             f"(got {short_repr(self.heat_metric)})")

    def sample_points(self) -> list[dict[str, Value]]:
        """The study's points, each a dict key -> Value in a fixed order."""
        self.check()
        if self.sample == "grid":
            return grid_points(self.axes)
        if self.seed is None:
            self.seed = int(np.random.SeedSequence().entropy % (2**31))
        return lhs_points(self.axes, self.points, self.seed)

    def describe(self) -> dict:
        """The study as a JSON-friendly dict (recorded in study.json)."""
        return {
            "source": self.source, "scenario": self.scenario, "set": list(self.base_overrides),
            "sample": self.sample, "points": self.points, "seed": self.seed,
            "period": {"start": self.start, "end": self.end, "months": self.months},
            "limits": {"starts_per_hour": self.starts_limit, "short_cycles": self.short_cycles_allowed,
                       "comfort_c": self.comfort_limit_c},
            "heat_metric": self.heat_metric, "heat_tolerance": self.heat_tolerance,
            "vary": [ax.describe() for ax in self.axes],
        }


def parse_starts_limit(text, option: str = "--starts-limit") -> float:
    """Parse a starts-per-hour limit: ``6``, ``"6/h"``, ``"6 per hour"``, ``"0.1/min"`` -> starts per hour."""
    if isinstance(text, bool):
        raise StudyError(f"{option}: expected a number of starts per hour such as 6/h, got {text!r}")
    if isinstance(text, (int, float)):
        value = float(text)
    else:
        m = re.match(rf"^\s*({_NUM})\s*(?:(/|per)\s*(h|hr|hour|min|minute))?\s*$", str(text), re.IGNORECASE)
        if not m:
            raise StudyError(f"{option}: expected a number of starts per hour such as 6/h, got {text!r}")
        value = float(m.group(1)) * (60.0 if (m.group(3) or "h").lower().startswith("min") else 1.0)
    if not (math.isfinite(value) and value > 0):
        raise StudyError(f"{option}: must be greater than 0 starts per hour (got {text!r})")
    return value


def parse_short_cycles_allowed(text, option: str = "--short-cycles-allowed") -> int:
    """Parse the short cycles a recommended point may have: a whole number, 0 or more."""
    if isinstance(text, bool):
        raise StudyError(f"{option}: expected a whole number of short cycles such as 0, got {text!r}")
    try:
        value = int(str(text).strip()) if not isinstance(text, int) else text
    except ValueError:
        raise StudyError(f"{option}: expected a whole number of short cycles such as 0, got {text!r}") from None
    if value < 0:
        raise StudyError(f"{option}: must be 0 or more (got {text!r})")
    return value


def parse_heat_tolerance(text, option: str = "--heat-tolerance") -> float:
    """Parse the heat figures' tie tolerance: ``1`` or ``"1 %"`` (a bare number is a percentage) -> fraction."""
    from atticsim.units import UnitError, to_si

    try:
        value = to_si(text, "percent")
    except UnitError as exc:
        raise StudyError(f"{option}: {exc}") from None
    if not (math.isfinite(value) and 0.0 <= value < 100.0):
        raise StudyError(f"{option}: must be from 0 % to under 100 % (got {text!r})")
    return value / 100.0


def parse_comfort_limit(text, option: str = "--comfort-limit") -> float:
    """Parse a comfort limit temperature (``38``, ``"38 degC"``, ``"100 degF"``) -> [degC]."""
    from atticsim.units import UnitError, to_si

    try:
        value = to_si(text, "temperature")
    except UnitError as exc:
        raise StudyError(f"{option}: {exc}") from None
    if not (math.isfinite(value) and -40.0 <= value <= 120.0):
        raise StudyError(f"{option}: must be between -40 and 120 degC (got {text!r})")
    return value


_FILE_KEYS = {"scenario", "set", "period", "sampling", "limits", "recommend", "vary"}


def load_study_file(path: str | Path) -> Study:
    """Read a study TOML file.

    Layout::

        scenario = "../scenarios/house.toml"   # optional, relative to this file; omitted: demo house
        set = ["simulation.spinup_days=1"]      # optional overrides applied to every point
        [period]    start = "2025-07-01"  end = "2025-07-07"   (or months = "jun-aug")
        [sampling]  method = "grid" | "lhs"  points = 50  seed = 1
        [limits]    starts_per_hour = 6  short_cycles = 0  comfort = "38 degC"
        [recommend] heat = "degree-hours" | "ceiling-gain"  heat_tolerance = "1 %"
        [[vary]]    key = "thermostat.on"  start = 36  stop = 44  step = 2  unit = "degC"
        [[vary]]    key = "thermostat.hysteresis"  values = [1, 2, 4]  unit = "K"

    Returns
    -------
    Study
    """
    from atticsim.scenario.load import read_toml

    path = Path(path)
    data = read_toml(path, error=lambda file, key, reason: StudyError(f"{file}: {reason}"))

    def table(name, allowed):
        t = data.get(name, {})
        if not isinstance(t, dict):
            raise StudyError(f"{path}: {name}: must be a table")
        unknown = sorted(set(t) - allowed)
        if unknown:
            raise StudyError(f"{path}: {name}.{unknown[0]}: unknown key{_did_you_mean(unknown[0], allowed)} "
                             f"(allowed: {', '.join(sorted(allowed))})")
        return t

    unknown = sorted(set(data) - _FILE_KEYS)
    if unknown:
        raise StudyError(f"{path}: {unknown[0]}: unknown key{_did_you_mean(unknown[0], _FILE_KEYS)} "
                         f"(allowed: {', '.join(sorted(_FILE_KEYS))})")
    study = Study(source=str(path))
    if "scenario" in data:
        if not isinstance(data["scenario"], str):
            raise StudyError(f"{path}: scenario: must be a file path (text)")
        sc = Path(data["scenario"])
        study.scenario = str(sc if sc.is_absolute() else (path.parent / sc).resolve())
    overrides = data.get("set", [])
    if not isinstance(overrides, list) or not all(isinstance(s, str) for s in overrides):
        raise StudyError(f"{path}: set: must be a list of \"dotted.key=value\" texts")
    study.base_overrides = list(overrides)
    period = table("period", {"start", "end", "months"})
    for name in ("start", "end"):
        v = period.get(name)
        if v is not None:
            setattr(study, name, v.isoformat() if hasattr(v, "isoformat") else str(v))
    if "months" in period:
        if not isinstance(period["months"], (str, int)) or isinstance(period["months"], bool):
            raise StudyError(f'{path}: period.months: a month range or season such as "jun-aug" or "summer"')
        if "start" in period or "end" in period:
            raise StudyError(f"{path}: period.months: give either months or start/end, not both")
        study.months = str(period["months"])
    sampling = table("sampling", {"method", "points", "seed"})
    study.sample = sampling.get("method", "grid")
    for name in ("points", "seed"):
        v = sampling.get(name)
        if v is not None and (isinstance(v, bool) or not isinstance(v, int)):
            raise StudyError(f"{path}: sampling.{name}: must be a whole number")
        setattr(study, name, v)
    limits = table("limits", {"starts_per_hour", "short_cycles", "comfort"})
    if "starts_per_hour" in limits:
        study.starts_limit = parse_starts_limit(limits["starts_per_hour"], f"{path}: limits.starts_per_hour")
    if "short_cycles" in limits:
        study.short_cycles_allowed = parse_short_cycles_allowed(limits["short_cycles"], f"{path}: limits.short_cycles")
    if "comfort" in limits:
        study.comfort_limit_c = parse_comfort_limit(limits["comfort"], f"{path}: limits.comfort")
    rec = table("recommend", {"heat", "heat_tolerance"})
    study.heat_metric = rec.get("heat", study.heat_metric)
    if "heat_tolerance" in rec:
        study.heat_tolerance = parse_heat_tolerance(rec["heat_tolerance"], f"{path}: recommend.heat_tolerance")
    vary = data.get("vary", [])
    if not isinstance(vary, list):
        raise StudyError(f"{path}: vary: must be an array of tables ([[vary]])")
    study.axes = [axis_from_table(t if isinstance(t, dict) else {}, f"{path}: vary.{i}")
                  for i, t in enumerate(vary)]
    return study


def resolve_months(study: Study, weather_frame) -> None:
    """Turn ``study.months`` into ``study.start`` and ``study.end`` in the weather's first year (as ``run``
    does with ``--months``); a study without months is left as it is."""
    if study.months is None:
        return
    from atticsim.forcing.build import months_period

    try:
        study.start, study.end = months_period(study.months, int(weather_frame.index[0].year))
    except ValueError as exc:
        raise StudyError(str(exc)) from None
