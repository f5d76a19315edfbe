"""The measured file: a data logger's time-stamped readings of one attic, checked and put on the weather's clock.

Layout (a CSV file, like the project's weather CSV)::

    # atticsim logger CSV
    # house: Heron Lane bungalow (fictional)
    # logger: two-channel USB logger, probes at mid-attic and beside the thermostat's sensor
    # invented: yes
    # note: anything worth keeping with the data
    time,attic_air_c,sensor_c,fan_on,outdoor_c
    2025-07-01T00:00:00-06:00,27.41,27.62,0,25.10

Header lines start with ``#``; ``# key: value`` lines take the keys :data:`HEADER_KEYS` (``utc_offset_h``: the
offset of the logger's clock from UTC [h], for stamps written without one); other ``#`` lines are comments;
a ``# word: ...`` line with an unknown key is an error, so that a misspelt key is not lost.

Columns: ``time`` (ISO 8601, with its UTC offset or with the offset given by ``utc_offset_h`` or
``--utc-offset``), at least one of :data:`TEMPERATURE_COLUMNS` (in degC, or degF with ``_f`` in place of ``_c``),
optionally ``fan_on`` (0/1, or off/on: the fan's state at the stamp) and ``outdoor_c`` (``outdoor_f``). Values
are instantaneous at their stamps; an empty cell is a missing reading. The log's clock must be the weather's
(the site's standard time, one fixed offset) unless the user confirms another with ``--utc-offset``: the readings
are then moved onto the weather's clock.
"""

from __future__ import annotations

import csv
import io
import math
import os
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from atticsim.calibration.errors import CalibrationError
from atticsim.io.weather_frame import format_time, site_timezone

#: First line of a logger file written by atticsim (the demo's); not required from a user's file.
SIGNATURE = "# atticsim logger CSV"

#: Measured temperature columns the fit compares with the model, and what the model gives for each.
TEMPERATURE_COLUMNS: dict[str, str] = {
    "sensor_c": "the thermostat's sensor (the model's sensor node: the thermistor with its lag and self-heating)",
    "attic_air_c": "attic air, the volume mean (a probe at mid-height)",
    "attic_upper_air_c": "the upper attic air (a probe near the ridge)",
    "attic_lower_air_c": "the lower attic air (a probe just above the insulation)",
    "deck_c": "the underside of one roof plane's deck (--deck-plane; the scenario's first plane by default)",
}
#: The outdoor air (optional: compared with the weather, or the weather itself with ``--weather log``).
OUTDOOR = "outdoor_c"
#: The fan's state (optional: the model's fan then follows it during the fit).
FAN = "fan_on"
#: Every column a logger file may have (besides ``time``), in their degC names.
COLUMNS = (*TEMPERATURE_COLUMNS, OUTDOOR, FAN)

#: Readings outside these ranges [degC] are refused: no attic, deck or outdoor air reaches them (common
#: practice, no source: outdoor air has not been recorded above about 57 degC, and attic air and roof decks in
#: field studies stay well below 95 and 110 degC; a reading beyond is a broken probe or a wrong unit).
RANGES: dict[str, tuple[float, float]] = {
    "sensor_c": (-60.0, 95.0), "attic_air_c": (-60.0, 95.0), "attic_upper_air_c": (-60.0, 95.0),
    "attic_lower_air_c": (-60.0, 95.0), "deck_c": (-60.0, 110.0), OUTDOOR: (-60.0, 60.0),
}

HEADER_KEYS = ("house", "site", "logger", "invented", "note", "utc_offset_h")

#: Longest stretch without readings (of any column) that is accepted by default [s].
DEFAULT_MAX_GAP_S = 3600.0

_KEY_LINE = re.compile(r"^#\s*([A-Za-z_][A-Za-z0-9_]*)\s*:(.*)$")
_OFFSET = re.compile(r"(Z|[+-]\d{2}:?\d{2})$")
_FAN_WORDS = {"0": False, "1": True, "off": False, "on": True, "0.0": False, "1.0": True}


@dataclass
class MeasuredLog:
    """A checked logger file on the weather's clock.

    Attributes
    ----------
    path : str
        The file.
    frame : pandas.DataFrame
        The readings [degC] under their degC names (:data:`TEMPERATURE_COLUMNS`, ``outdoor_c``), NaN where a
        reading is missing; tz-aware index on the weather's clock.
    fan : pandas.Series or None
        The fan's logged state (bool) at each stamp where it was logged.
    step_s : float
        The logger's sampling step (the median interval) [s].
    labels : dict
        degC name -> the column as the file names it (``attic_air_f``...), for messages.
    header : dict
        The ``# key: value`` lines (notes as a list).
    clock_offset_h : float
        The offset of the logger's clock from UTC [h].
    notes : list of str
        What reading the file decided (clock moved, columns converted).
    """

    path: str
    frame: pd.DataFrame
    fan: pd.Series | None
    step_s: float
    labels: dict
    header: dict
    clock_offset_h: float
    notes: list = field(default_factory=list)

    @property
    def temperature_columns(self) -> list[str]:
        """The measured temperature columns the fit can compare with the model, in file order."""
        return [c for c in self.frame.columns if c in TEMPERATURE_COLUMNS]

    @property
    def start(self) -> pd.Timestamp:
        return self.frame.index[0]

    @property
    def end(self) -> pd.Timestamp:
        return self.frame.index[-1]

    @property
    def days(self) -> float:
        """The span of the log [d]."""
        return (self.end - self.start).total_seconds() / 86400.0

    def fan_switches(self):
        """The logged fan state as (instants, states): the first state from the first stamp, then each change
        at the midpoint between the two stamps that bracket it (the logger saw the state only at its stamps,
        so the switch is known to within half a step either side). None without a fan column."""
        if self.fan is None:
            return None
        times, states = self.fan.index, self.fan.to_numpy(dtype=bool)
        instants, out = [times[0]], [bool(states[0])]
        for i in np.flatnonzero(states[1:] != states[:-1]) + 1:
            instants.append(times[i - 1] + (times[i] - times[i - 1]) / 2)
            out.append(bool(states[i]))
        return instants, out

    def fan_run_seconds(self, since=None) -> float:
        """Seconds the logged fan ran (from the midpoints of :meth:`fan_switches` to the log's end), from ``since``
        (a timestamp; default the log's start)."""
        sw = self.fan_switches()
        if sw is None:
            return float("nan")
        instants, states = sw
        since = self.start if since is None else since
        edges = list(instants[1:]) + [self.end]
        return float(sum(max((b - max(a, since)).total_seconds(), 0.0)
                         for a, b, s in zip(instants, edges, states) if s))


def _header(lines: list[str], where: str) -> dict:
    """``# key: value`` pairs of the comment lines (notes as a list)."""
    out: dict = {"note": []}
    for line in lines:
        m = _KEY_LINE.match(line.strip())
        if not m:
            continue
        key, value = m.group(1).lower(), m.group(2).strip()
        if key not in HEADER_KEYS:
            raise CalibrationError(where, key, f"unknown header key (known: {', '.join(HEADER_KEYS)})")
        if key == "note":
            out["note"].append(value)
        elif key in out:
            raise CalibrationError(where, key, "header key given twice")
        else:
            out[key] = value
    if "utc_offset_h" in out:
        try:
            out["utc_offset_h"] = float(out["utc_offset_h"])
        except ValueError:
            raise CalibrationError(where, "utc_offset_h", f"{out['utc_offset_h']!r} is not a number of hours") from None
        if not (math.isfinite(out["utc_offset_h"]) and -12.0 <= out["utc_offset_h"] <= 14.0):
            raise CalibrationError(where, "utc_offset_h", "must be between -12 and +14 h")
    return out


def _offset_hours(text: str) -> float:
    if text == "Z":
        return 0.0
    sign = -1.0 if text[0] == "-" else 1.0
    digits = text[1:].replace(":", "")
    return sign * (int(digits[:2]) + int(digits[2:]) / 60.0)


def _clock(texts: list[str], where: str, header_offset, option_offset, weather_offset):
    """Parse the stamps; return (index on the weather's clock, the logger clock's offset [h], notes)."""
    series = pd.Series(texts, dtype=object)
    offsets = series.str.extract(_OFFSET.pattern, expand=False)
    have = offsets.notna().to_numpy()
    notes = []
    if have.all():
        distinct = pd.unique(offsets.map(_offset_hours))
        if len(distinct) > 1:
            row = int(np.flatnonzero(offsets.map(_offset_hours).to_numpy() != distinct[0])[0])
            raise CalibrationError(where, "time", f"{texts[row]!r} in data row {row + 1} changes the UTC offset "
                                   f"(from {offsets.iloc[0]} to {offsets.iloc[row]}): a logger clock that follows "
                                   f"daylight-saving time; write every stamp in one offset")
        clock = float(distinct[0])
        for name, given in (("utc_offset_h", header_offset), ("--utc-offset", option_offset)):
            if given is not None and abs(given - clock) > 1e-9:
                raise CalibrationError(where if name == "utc_offset_h" else "--utc-offset", "time",
                                       f"{given:+g} h, but the stamps carry UTC offset {offsets.iloc[0]}")
        try:
            stamps = pd.DatetimeIndex(pd.to_datetime(series, format="ISO8601", utc=True))
        except (TypeError, ValueError) as exc:
            raise CalibrationError(where, "time", f"cannot read the stamps as ISO 8601 ({exc})") from None
    elif not have.any():
        clock = option_offset if option_offset is not None else header_offset
        if clock is None:
            raise CalibrationError(where, "time", f"{texts[0]!r} has no UTC offset: give the stamps one "
                                   f"(2025-07-01T14:05:00-06:00), write '# utc_offset_h: -6' in the header, or "
                                   f"pass --utc-offset with the logger clock's offset from UTC")
        try:
            naive = pd.DatetimeIndex(pd.to_datetime(series, format="ISO8601"))
        except (TypeError, ValueError) as exc:
            raise CalibrationError(where, "time", f"cannot read the stamps as ISO 8601 ({exc})") from None
        stamps = naive.tz_localize(site_timezone(clock))
    else:
        row = int(np.flatnonzero(~have)[0])
        raise CalibrationError(where, "time", f"{texts[row]!r} in data row {row + 1} has no UTC offset while "
                               f"other stamps have one; write every stamp the same way")
    if weather_offset is not None and abs(clock - weather_offset) > 1e-9:
        confirmed = option_offset is not None and abs(option_offset - clock) < 1e-9
        if not confirmed:
            raise CalibrationError(where, "time", f"the log's clock is on UTC{clock:+g} h, the weather's on "
                                   f"UTC{weather_offset:+g} h (the site's standard time): a logger on daylight-saving "
                                   f"time or in another zone? Pass --utc-offset {clock:g} to confirm the logger's "
                                   f"clock, and its readings are moved onto the weather's")
        notes.append(f"the log's clock (UTC{clock:+g} h) moved onto the weather's (UTC{weather_offset:+g} h)")
    target = site_timezone(weather_offset if weather_offset is not None else clock)
    return stamps.tz_convert(target), clock, notes


def _duration(seconds: float) -> str:
    """A duration as a person reads it: "20 min", "2.83 h", "3.5 d"."""
    if seconds < 3600.0:
        return f"{seconds / 60.0:.3g} min"
    return f"{seconds / 3600.0:.3g} h" if seconds < 3 * 86400.0 else f"{seconds / 86400.0:.3g} d"


def _seconds(index: pd.DatetimeIndex) -> np.ndarray:
    """The stamps as seconds since the epoch (floats)."""
    return index.asi8 / {"s": 1.0, "ms": 1e3, "us": 1e6, "ns": 1e9}[index.unit]


def _check_order(index: pd.DatetimeIndex, where: str, max_gap_s: float) -> float:
    """Sorted, unique stamps with no gap above ``max_gap_s``; returns the median step [s]."""
    if len(index) < 2:
        raise CalibrationError(where, "time", f"{len(index)} data row(s): too short to fit")
    steps = np.diff(_seconds(index))
    dup = np.flatnonzero(steps == 0)
    if dup.size:
        raise CalibrationError(where, "time", f"duplicated stamp {format_time(index[dup[0] + 1])} "
                               f"(data row {dup[0] + 2})")
    back = np.flatnonzero(steps < 0)
    if back.size:
        i = back[0] + 1
        raise CalibrationError(where, "time", f"stamps not sorted: {format_time(index[i])} (data row {i + 1}) "
                               f"follows {format_time(index[i - 1])}")
    gap = np.flatnonzero(steps > max_gap_s)
    if gap.size:
        i = gap[0]
        raise CalibrationError(where, "time", f"gap of {_duration(steps[i])} without "
                               f"readings from {format_time(index[i])} (longest accepted "
                               f"{_duration(max_gap_s)}: split the log there, or "
                               f"pass --max-gap)")
    return float(np.median(steps))


def _column_gaps(values: np.ndarray, index: pd.DatetimeIndex, where: str, label: str, max_gap_s: float) -> None:
    """A column's stretch without readings (between two readings it has) longer than ``max_gap_s``."""
    ok = np.flatnonzero(np.isfinite(values))
    if ok.size == 0:
        raise CalibrationError(where, label, "column has no readings")
    seconds = _seconds(index)
    t = seconds[ok]
    spans = np.diff(t)
    long_ = np.flatnonzero(spans > max_gap_s)
    if long_.size:
        i = ok[long_[0]]
        raise CalibrationError(where, label, f"no readings for {_duration(spans[long_[0]])} "
                               f"from {format_time(index[i])} (longest accepted "
                               f"{_duration(max_gap_s)}; --max-gap)")
    for a, b in ((seconds[0], t[0]), (t[-1], seconds[-1])):
        if b - a > max_gap_s:
            raise CalibrationError(where, label, f"no readings for the first or last "
                                   f"{_duration(b - a)} of the log; trim the "
                                   f"log to where the column has readings")


def _numbers(cells: list[str], index, where: str, label: str) -> np.ndarray:
    s = pd.Series(cells, dtype=object)
    empty = s.eq("") | s.str.lower().eq("nan")
    values = pd.to_numeric(s.where(~empty, None), errors="coerce").to_numpy(dtype=float)
    bad = np.flatnonzero((np.isnan(values) & ~empty.to_numpy()) | np.isinf(values))
    if bad.size:
        i = int(bad[0])
        raise CalibrationError(where, label, f"{cells[i]!r} at {format_time(index[i])} is not a number")
    return values


def _check_range(values: np.ndarray, index, where: str, name: str, label: str) -> None:
    low, high = RANGES[name]
    fahrenheit = label.endswith("_f")
    conv = (lambda c: c * 9.0 / 5.0 + 32.0) if fahrenheit else (lambda c: c)  # noqa: E731
    unit = "°F" if fahrenheit else "°C"
    with np.errstate(invalid="ignore"):
        bad = np.flatnonzero((values < low) | (values > high))
    if bad.size:
        i = int(bad[0])
        v = conv(values[i])
        side = f"below {conv(low):g}" if values[i] < low else f"above {conv(high):g}"
        raise CalibrationError(where, label, f"{v:g} {unit} at {format_time(index[i])} is {side} {unit}, outside any "
                               f"attic's range (a broken probe, or a wrong unit: _c is °C, _f °F); "
                               f"{bad.size} reading(s) out of range")


def read_measured(path, *, utc_offset: float | None = None, weather_utc_offset: float | None = None,
                  max_gap_s: float = DEFAULT_MAX_GAP_S) -> MeasuredLog:
    """Read and check a logger file (see the module docstring).

    Parameters
    ----------
    path : str or path-like
        The CSV file.
    utc_offset : float, optional
        The logger clock's offset from UTC [h] (``--utc-offset``): for stamps without an offset, or to confirm
        a clock other than the weather's.
    weather_utc_offset : float, optional
        The weather's offset (the site's standard time) [h]; the log is put on that clock.
    max_gap_s : float
        Longest stretch without readings accepted [s] (in the rows, and in each column).

    Returns
    -------
    MeasuredLog

    Raises
    ------
    CalibrationError
        One line naming the file, the column and the reason: no time column, stamps without an offset, another
        clock than the weather's, unsorted or duplicated stamps, gaps, unknown columns, text in number columns,
        readings outside any physical range, no temperature column.
    """
    where = os.fspath(path)
    try:
        text = Path(path).read_text(encoding="utf-8-sig")
    except FileNotFoundError:
        raise CalibrationError(where, "file", "not found") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise CalibrationError(where, "file", f"cannot be read as UTF-8 text ({exc})") from None
    lines = text.splitlines()
    comments, start = [], None
    for i, line in enumerate(lines):
        s = line.strip()
        if not s:
            continue
        if s.startswith("#"):
            comments.append(s)
            continue
        start = i
        break
    if start is None:
        raise CalibrationError(where, "time", "no CSV header row and no data rows after the '#' lines")
    header = _header(comments, where)
    rows = list(csv.reader(io.StringIO("\n".join(line for line in lines[start:] if line.strip()))))
    names = [h.strip() for h in rows[0]]
    body = rows[1:]
    if "time" not in names:
        raise CalibrationError(where, "time", f"no time column (the header row is {','.join(names)[:80]!r})")
    labels, seen = {}, set()
    for name in names:
        if name == "time":
            continue
        si = name[:-2] + "_c" if name.endswith("_f") else name
        if si not in COLUMNS or (name.endswith("_f") and si == FAN):
            known = ", ".join(["time", *COLUMNS])
            raise CalibrationError(where, name, f"unknown column (known: {known}; °F as _f in place of _c)")
        if si in seen:
            raise CalibrationError(where, name, f"column given twice ({labels[si]} and {name})")
        seen.add(si)
        labels[si] = name
    if not any(c in seen for c in TEMPERATURE_COLUMNS):
        raise CalibrationError(where, "columns", f"no measured temperature column: give at least one of "
                               f"{', '.join(TEMPERATURE_COLUMNS)} (or _f for °F)")
    if not body:
        raise CalibrationError(where, "time", "no data rows")
    for n, row in enumerate(body, start=1):
        if len(row) != len(names):
            raise CalibrationError(where, "time", f"data row {n} has {len(row)} fields, the header row {len(names)}")
    j_time = names.index("time")
    texts = [r[j_time].strip() for r in body]
    index, clock, notes = _clock(texts, where, header.get("utc_offset_h"), utc_offset, weather_utc_offset)
    step = _check_order(index, where, max_gap_s)
    data, fan = {}, None
    for j, name in enumerate(names):
        if name == "time":
            continue
        si = name[:-2] + "_c" if name.endswith("_f") else name
        cells = [r[j].strip() for r in body]
        if si == FAN:
            words = pd.Series(cells, dtype=object).str.lower()
            known = words.isin(list(_FAN_WORDS)) | words.eq("")
            if not known.all():
                i = int(np.flatnonzero(~known.to_numpy())[0])
                raise CalibrationError(where, name, f"{cells[i]!r} at {format_time(index[i])} is not a fan state "
                                       f"(0 or 1, off or on)")
            given = words.ne("").to_numpy()
            _column_gaps(np.where(given, 1.0, np.nan), index, where, name, max_gap_s)
            fan = pd.Series([_FAN_WORDS[w] for w in words[given]], index=index[given], name=FAN)
            continue
        values = _numbers(cells, index, where, name)
        if name.endswith("_f"):
            values = (values - 32.0) * 5.0 / 9.0  # the Fahrenheit scale's definition
        _check_range(values, index, where, si, name)
        _column_gaps(values, index, where, name, max_gap_s)
        data[si] = values
    frame = pd.DataFrame(data, index=pd.DatetimeIndex(index, name="time"))
    converted = [labels[c] for c in frame.columns if labels[c].endswith("_f")]
    if converted:
        notes.append(f"read {', '.join(converted)} in °F")
    if header.get("invented", "").lower() in ("yes", "true"):
        notes.append("invented readings (the header says invented: yes), not a measured attic")
    return MeasuredLog(where, frame, fan, step, labels, header, clock, notes)


__all__ = ["COLUMNS", "FAN", "MeasuredLog", "OUTDOOR", "RANGES", "SIGNATURE", "TEMPERATURE_COLUMNS",
           "read_measured"]
