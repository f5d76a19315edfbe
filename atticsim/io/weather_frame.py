"""The normalised weather frame every reader returns, its site metadata and its validation.

A weather frame is a :class:`pandas.DataFrame` with

* a time-zone-aware :class:`pandas.DatetimeIndex` named ``"time"`` in the site's
  fixed-offset local standard time (e.g. UTC-06:00), sorted, unique, with one
  regular step (set as the index ``freq``), resolution microseconds;
* exactly the columns of :data:`WEATHER_COLUMNS`, all float64, in SI units (sky cover as a
  fraction of the sky dome, 0-1; relative humidity in percent); the optional ones
  (:data:`OPTIONAL_COLUMNS`) NaN in every row when the source has none;
* in each row the values that apply AT that instant.  Interval means from a file
  (hourly irradiance sums of typical-year files) are stamped at the midpoint of
  their interval by the reader that knows the file's convention.

:func:`validate_weather` turns the raw columns a reader found into such a frame:
it checks the time base, checks physical limits, interpolates short gaps,
derives the missing one of dew point / relative humidity and fills a missing
pressure from the standard atmosphere, and records every change it makes in a
:class:`ValidationReport`.  Anything it will not repair raises
``ValueError("<file>: <column or key>: <reason>")`` on one line.
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass, field
from datetime import timedelta, timezone
from typing import Mapping

import numpy as np
import pandas as pd

from atticsim.errors import InputError
from atticsim.air import (dew_point_from_relative_humidity, relative_humidity_from_dew_point,
                          saturation_vapour_pressure, standard_atmosphere_pressure)

#: Columns of the normalised weather frame, in order, with their units.
WEATHER_COLUMNS: tuple[str, ...] = (
    "temp_air",  # dry-bulb temperature [degC]
    "temp_dew",  # dew-point temperature [degC]
    "relative_humidity",  # relative humidity over liquid water [%]
    "wind_speed",  # wind speed [m/s]
    "wind_direction",  # direction the wind comes from [deg clockwise from north], NaN if absent
    "ghi",  # global horizontal irradiance [W/m^2]
    "dni",  # direct normal irradiance [W/m^2]
    "dhi",  # diffuse horizontal irradiance [W/m^2]
    "pressure",  # station (site) air pressure [Pa]
    "sky_ir",  # downward long-wave irradiance on a horizontal surface [W/m^2], NaN if absent
    "total_sky_cover",  # share of the sky dome covered by any cloud [0-1], NaN if absent
    "opaque_sky_cover",  # share covered by clouds that hide the sky above them [0-1], NaN if absent
)

#: Unit of each column, for messages and documentation.
WEATHER_UNITS: dict[str, str] = {
    "temp_air": "degC",
    "temp_dew": "degC",
    "relative_humidity": "%",
    "wind_speed": "m/s",
    "wind_direction": "deg",
    "ghi": "W/m^2",
    "dni": "W/m^2",
    "dhi": "W/m^2",
    "pressure": "Pa",
    "sky_ir": "W/m^2",
    "total_sky_cover": "1",  # a fraction of the sky dome, 0-1 (files give tenths or percent)
    "opaque_sky_cover": "1",
}

#: Columns a weather source must provide (plus at least one of temp_dew / relative_humidity).
REQUIRED_COLUMNS: tuple[str, ...] = ("temp_air", "wind_speed", "ghi", "dni", "dhi")

#: Optional columns: NaN in every row when the source has none of them.
OPTIONAL_COLUMNS: tuple[str, ...] = ("wind_direction", "sky_ir", "total_sky_cover", "opaque_sky_cover")

#: Accepted values of :attr:`WeatherMeta.source_format`.
SOURCE_FORMATS: tuple[str, ...] = ("tmy3", "tmy2", "epw", "atticsim-csv")

#: Formats whose rows are hourly records stamped at mid-hour: their data span half a step beyond the
#: first and last stamps (see :func:`data_span`).
MID_INTERVAL_FORMATS: tuple[str, ...] = ("tmy3", "tmy2", "epw")

#: Resolution of the time index (the default of pandas 3 and of pvlib's readers).
TIME_UNIT = "us"

#: Longest gap (missing duration) that validation interpolates by default [h].
DEFAULT_MAX_GAP_H = 3.0

# Validation limits.  They are the project's rules; the physical reasons:
# record surface air temperatures -89.2 degC (Vostok, 1983) and 56.7 degC (Death Valley,
# 1913) per the WMO extremes archive (from memory); DNI cannot much exceed the solar
# constant 1361 W/m^2 (Kopp & Lean 2011, from memory); GHI above it occurs briefly under
# cloud enhancement.  Pressure, DHI and sky_ir bounds: common practice, no source.
_ERROR_RANGES: dict[str, tuple[float, float]] = {
    "temp_air": (-90.0, 70.0),
    "temp_dew": (-90.0, 70.0),
    "relative_humidity": (0.0, 103.0),
    "wind_speed": (0.0, 80.0),
    "wind_direction": (0.0, 360.0),
    "ghi": (-5.0, 1500.0),
    "dni": (-5.0, 1400.0),
    "dhi": (-5.0, 1500.0),
    "pressure": (30_000.0, 110_000.0),
    "sky_ir": (0.0, 800.0),
    "total_sky_cover": (0.0, 1.0),  # a share of the sky dome: definition
    "opaque_sky_cover": (0.0, 1.0),
}
#: Small negative irradiance (sensor offset at night) down to this value is set to 0 [W/m^2].
IRRADIANCE_CLIP_W_M2 = -5.0
#: Relative humidity up to this value is set to 100 % [%].
RH_CLIP_PCT = 103.0
#: Dew point above dry-bulb by less than this is set to the dry-bulb [K].
DEW_POINT_CLIP_K = 0.5

# --------------------------------------------------------------------------- metadata


class WeatherError(InputError):
    """A weather file (or frame) that cannot be used; ``str(err)`` is one line naming the file, the column or
    line, and the reason."""


@dataclass(frozen=True)
class WeatherMeta:
    """Site and provenance of a weather source.

    Parameters
    ----------
    name : str
        Site name as the file gives it.
    latitude : float
        Latitude [deg], north positive.
    longitude : float
        Longitude [deg], east positive.
    altitude : float
        Site elevation above sea level [m].
    utc_offset : float
        Offset of the site's local standard time from UTC [h], e.g. -6.0.
    source_format : str
        One of ``"tmy3"``, ``"tmy2"``, ``"epw"``, ``"atticsim-csv"``.
    invented : bool
        True when the weather is made up (demo sites); from the atticsim CSV header.
    path : str or None
        File the weather came from.
    file_notes : tuple of str
        Free-text notes the file carries (the ``# note:`` lines of an atticsim CSV).
    """

    name: str
    latitude: float
    longitude: float
    altitude: float
    utc_offset: float
    source_format: str
    invented: bool = False
    path: str | None = None
    file_notes: tuple[str, ...] = field(default_factory=tuple)

    def __post_init__(self) -> None:
        where = self.path or self.name or "weather"
        checks = (
            ("latitude", self.latitude, -90.0, 90.0),
            ("longitude", self.longitude, -180.0, 180.0),
            # Dead Sea shore about -430 m, highest settlements about 5100 m: common practice.
            ("altitude", self.altitude, -500.0, 9000.0),
            # Civil time zones span UTC-12 .. UTC+14.
            ("utc_offset", self.utc_offset, -12.0, 14.0),
        )
        for key, value, low, high in checks:
            if not (isinstance(value, (int, float)) and math.isfinite(value) and low <= value <= high):
                raise WeatherError(f"{where}: {key}: {value!r} is not a number in {low:g}..{high:g}")
        if self.source_format not in SOURCE_FORMATS:
            raise WeatherError(
                f"{where}: source_format: {self.source_format!r} is not one of {', '.join(SOURCE_FORMATS)}"
            )

    @property
    def tz(self) -> timezone:
        """Fixed-offset time zone of the site's local standard time."""
        return site_timezone(self.utc_offset)


@dataclass
class ValidationReport:
    """What validation changed (repairs, each counted) and what it wants the user to know (notes)."""

    repairs: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)

    def lines(self) -> list[str]:
        """All entries as printable lines, repairs first."""
        return [f"repaired: {r}" for r in self.repairs] + [f"note: {n}" for n in self.notes]

    def __str__(self) -> str:
        return "\n".join(self.lines()) if (self.repairs or self.notes) else "no repairs, no notes"


# --------------------------------------------------------------------------- small helpers


def site_timezone(utc_offset: float) -> timezone:
    """Fixed-offset time zone for a UTC offset [h] (local standard time, no daylight saving)."""
    return timezone(timedelta(hours=float(utc_offset)))


def source_label(meta: WeatherMeta | None, path: str | os.PathLike | None = None) -> str:
    """The '<file>' part of error messages: the path if known, else the site name."""
    if path is not None:
        return os.fspath(path)
    if meta is not None and meta.path:
        return meta.path
    if meta is not None and meta.name:
        return meta.name
    return "weather"


def format_time(stamp: pd.Timestamp) -> str:
    """ISO 8601 text of a time stamp with its UTC offset, e.g. 2025-07-01T13:00:00-05:00."""
    return pd.Timestamp(stamp).isoformat()


def _format_duration(delta: pd.Timedelta, upper: pd.Timedelta | None = None) -> str:
    """'2 h', '10 min' or, with an upper bound, a range in one unit: '1-2 h'."""
    top = (upper if upper is not None else delta).total_seconds()
    scale, unit = (60.0, "min") if top < 3600.0 else (3600.0, "h")
    low = f"{delta.total_seconds() / scale:g}"
    if upper is None or upper == delta:
        return f"{low} {unit}"
    return f"{low}-{upper.total_seconds() / scale:g} {unit}"


def _nan_runs(missing: np.ndarray) -> list[tuple[int, int]]:
    """Runs of True in a boolean array as (start, stop) index pairs, stop exclusive."""
    padded = np.concatenate(([0], missing.astype(np.int8), [0]))
    edges = np.flatnonzero(np.diff(padded))
    return list(zip(edges[0::2].tolist(), edges[1::2].tolist()))


def interpolate_direction(
    x: np.ndarray, xp: np.ndarray, direction: np.ndarray
) -> np.ndarray:
    """Interpolate a direction [deg] on the circle (shortest way round, via unit vectors).

    Parameters
    ----------
    x : array
        Positions to interpolate at.
    xp : array
        Increasing positions of the known values.
    direction : array
        Known directions [deg from north].

    Returns
    -------
    array
        Interpolated directions in [0, 360) [deg].
    """
    # Linear interpolation of the unit vector's components, then its angle: common practice, no source.
    rad = np.radians(direction)
    s = np.interp(x, xp, np.sin(rad))
    c = np.interp(x, xp, np.cos(rad))
    return np.mod(np.round(np.degrees(np.arctan2(s, c)), 6), 360.0)  # 1e-6 deg: no 224.99999999999997


# --------------------------------------------------------------------------- validation


def data_span(frame: pd.DataFrame, meta=None) -> tuple[pd.Timestamp, pd.Timestamp]:
    """First and last instant a weather frame's data cover.

    Rows of instantaneous values (the atticsim CSV, demo and design-day weather) cover their first
    to their last stamp.  Rows of hourly typical-year records (:data:`MID_INTERVAL_FORMATS`) are
    stamped at mid-hour and cover half a step more at each end: a whole typical year covers
    Jan 1 00:00 to Dec 31 24:00 although its first row is stamped 00:30 and its last 23:30.

    Parameters
    ----------
    frame : pandas.DataFrame
        A normalised weather frame (regular step).
    meta : object, optional
        Its metadata; ``meta.source_format`` tells the stamping.

    Returns
    -------
    (pandas.Timestamp, pandas.Timestamp)
        Start and end of the data, tz-aware.
    """
    index = frame.index
    if getattr(meta, "source_format", None) in MID_INTERVAL_FORMATS and len(index) > 1:
        half = (index[1] - index[0]) / 2
        return index[0] - half, index[-1] + half
    return index[0], index[-1]


def check_time_index(index: pd.Index, where: str) -> pd.Timedelta:
    """Check a weather time index: tz-aware, sorted, unique, one regular step.

    Parameters
    ----------
    index : pandas.Index
        The time stamps.
    where : str
        File (or source) name for messages.

    Returns
    -------
    pandas.Timedelta
        The step between rows.
    """
    if not isinstance(index, pd.DatetimeIndex):
        raise WeatherError(f"{where}: time: the index is not made of date-times")
    if index.tz is None:
        raise WeatherError(f"{where}: time: stamps carry no UTC offset (local standard time with offset required)")
    if len(index) < 2:
        raise WeatherError(f"{where}: time: at least 2 rows are needed, found {len(index)}")
    if index.hasnans:
        raise WeatherError(f"{where}: time: missing time stamp in row {int(np.flatnonzero(index.isna())[0]) + 1}")
    steps = np.diff(index.asi8)
    dup = np.flatnonzero(steps == 0)
    if dup.size:
        raise WeatherError(f"{where}: time: duplicated time {format_time(index[dup[0] + 1])}")
    back = np.flatnonzero(steps < 0)
    if back.size:
        i = back[0] + 1
        raise WeatherError(
            f"{where}: time: times not sorted: {format_time(index[i])} follows {format_time(index[i - 1])}"
        )
    bad = np.flatnonzero(steps != steps[0])
    step = index[1] - index[0]
    if bad.size:
        i = bad[0] + 1
        raise WeatherError(
            f"{where}: time: irregular step at {format_time(index[i])}: "
            f"{_format_duration(index[i] - index[i - 1])} after steps of {_format_duration(step)}"
        )
    return step


_UNITS_PER_SECOND = {"s": 1, "ms": 1_000, "us": 1_000_000, "ns": 1_000_000_000}


def check_utc_offset(index: pd.DatetimeIndex, utc_offset: float, where: str) -> None:
    """Check that every stamp carries the site's fixed UTC offset (local standard time, no daylight saving).

    Parameters
    ----------
    index : pandas.DatetimeIndex
        tz-aware time stamps.
    utc_offset : float
        Offset of the site's local standard time from UTC [h].
    where : str
        File (or source) name for messages.
    """
    local = index.tz_localize(None).asi8
    universal = index.tz_convert("UTC").tz_localize(None).asi8
    offsets = local - universal
    expected = round(float(utc_offset) * 3600.0) * _UNITS_PER_SECOND[index.unit]
    wrong = np.flatnonzero(offsets != expected)
    if wrong.size:
        i = int(wrong[0])
        raise WeatherError(
            f"{where}: time: {format_time(index[i])} is not in the site's standard time UTC{utc_offset:+g} h "
            f"(one fixed offset, no daylight saving, is required)"
        )


def _check_limits(
    frame: pd.DataFrame, where: str, labels: Mapping[str, str], report: ValidationReport
) -> None:
    """Raise for values outside the error limits; clip the tolerated small excursions and count them."""
    index = frame.index
    for col, (low, high) in _ERROR_RANGES.items():
        values = frame[col].to_numpy()
        with np.errstate(invalid="ignore"):
            bad = np.flatnonzero((values < low) | (values > high))
        if bad.size:
            i = bad[0]
            unit = WEATHER_UNITS[col]
            v = values[i]
            side = f"below {low:g}" if v < low else f"above {high:g}"
            extra = ""
            if col in ("ghi", "dni", "dhi") and v < low:
                extra = f" (negatives down to {IRRADIANCE_CLIP_W_M2:g} {unit} are set to 0)"
            if col == "relative_humidity" and v > high:
                extra = f" (values up to {RH_CLIP_PCT:g} % are set to 100 %)"
            shown = "" if unit == "1" else f" {unit}"  # a fraction needs no unit
            raise WeatherError(
                f"{where}: {labels.get(col, col)}: {v:g}{shown} at {format_time(index[i])} is {side}{shown}"
                f"{extra}; {bad.size} value(s) out of range"
            )
    for col in ("ghi", "dni", "dhi"):
        values = frame[col].to_numpy()
        with np.errstate(invalid="ignore"):
            small = np.flatnonzero(values < 0.0)
        if small.size:
            frame.iloc[small, frame.columns.get_loc(col)] = 0.0
            report.repairs.append(
                f"set {small.size} value(s) of {col} between {IRRADIANCE_CLIP_W_M2:g} and 0 W/m^2 to 0 "
                f"(first at {format_time(index[small[0]])})"
            )
    values = frame["relative_humidity"].to_numpy()
    with np.errstate(invalid="ignore"):
        over = np.flatnonzero(values > 100.0)
    if over.size:
        frame.iloc[over, frame.columns.get_loc("relative_humidity")] = 100.0
        report.repairs.append(
            f"set {over.size} value(s) of relative_humidity between 100 and {RH_CLIP_PCT:g} % to 100 % "
            f"(first at {format_time(index[over[0]])})"
        )
    _clip_dew_point(frame, where, labels, report)


def _clip_dew_point(
    frame: pd.DataFrame, where: str, labels: Mapping[str, str], report: ValidationReport, after: str = ""
) -> None:
    """Dew point above dry-bulb: by less than DEW_POINT_CLIP_K set to the dry-bulb and counted, else error."""
    index = frame.index
    excess = frame["temp_dew"].to_numpy() - frame["temp_air"].to_numpy()
    with np.errstate(invalid="ignore"):
        worse = np.flatnonzero(excess >= DEW_POINT_CLIP_K)
        slight = np.flatnonzero((excess > 0.0) & (excess < DEW_POINT_CLIP_K))
    if worse.size:
        i = worse[0]
        raise WeatherError(
            f"{where}: {labels.get('temp_dew', 'temp_dew')}: dew point {frame['temp_dew'].iloc[i]:g} degC at "
            f"{format_time(index[i])} is {excess[i]:.2g} K above the dry-bulb {frame['temp_air'].iloc[i]:g} degC"
            f"{after} (up to {DEW_POINT_CLIP_K:g} K is set to the dry-bulb); {worse.size} value(s)"
        )
    if slight.size:
        col = frame.columns.get_loc("temp_dew")
        frame.iloc[slight, col] = frame["temp_air"].to_numpy()[slight]
        report.repairs.append(
            f"set {slight.size} value(s) of temp_dew that exceeded temp_air by less than "
            f"{DEW_POINT_CLIP_K:g} K to temp_air{after} (first at {format_time(index[slight[0]])})"
        )


def _fill_gaps(
    frame: pd.DataFrame,
    col: str,
    where: str,
    label: str,
    step: pd.Timedelta,
    max_gap: pd.Timedelta,
    report: ValidationReport,
) -> None:
    """Interpolate NaN runs of one column no longer than max_gap; raise for longer ones."""
    values = frame[col].to_numpy(dtype=float, copy=True)
    missing = np.isnan(values)
    if not missing.any():
        return
    index = frame.index
    runs = _nan_runs(missing)
    for start, stop in runs:
        if (stop - start) * step > max_gap:
            raise WeatherError(
                f"{where}: {label}: gap of {_format_duration((stop - start) * step)} from "
                f"{format_time(index[start])} is longer than {_format_duration(max_gap)} "
                f"(longest gap that is interpolated)"
            )
    inner = [(a, b) for a, b in runs if a > 0 and b < len(values)]
    edge = [(a, b) for a, b in runs if a == 0 or b == len(values)]
    known = np.flatnonzero(~missing)
    positions = np.flatnonzero(missing)
    if col == "wind_direction":
        values[positions] = interpolate_direction(positions, known, values[known])
    else:
        # Linear interpolation across a gap: common practice, no source.
        values[positions] = np.interp(positions, known, values[known])
    frame[col] = values
    for kind, group in (("interpolated", inner), ("held the nearest value over", edge)):
        if not group:
            continue
        lengths = sorted((b - a) * step for a, b in group)
        span = _format_duration(lengths[0], lengths[-1])
        place = "the start/end" if kind.startswith("held") else ""
        first = format_time(index[group[0][0]])
        noun = "gap" if len(group) == 1 else "gaps"
        report.repairs.append(
            f"{kind} {len(group)} {noun} of {span} in {col}{' at ' + place if place else ''} (first at {first})"
        )


def validate_weather(
    frame: pd.DataFrame,
    meta: WeatherMeta,
    *,
    max_gap_h: float = DEFAULT_MAX_GAP_H,
    labels: Mapping[str, str] | None = None,
    report: ValidationReport | None = None,
) -> tuple[pd.DataFrame, ValidationReport]:
    """Check and repair raw weather columns into the normalised weather frame.

    Steps, in order: the time index (tz-aware, sorted, unique, regular step); the
    columns (unknown -> error; required present); physical limits (errors, or the small
    tolerated excursions clipped and counted); a value missing in one of temp_dew /
    relative_humidity computed from the other (Magnus); gaps interpolated (linear;
    wind direction on the circle) up to ``max_gap_h`` and counted, longer gaps refused;
    a missing humidity column derived; a missing pressure filled from the ISO 2533
    standard atmosphere at the site altitude; absent wind direction / sky long-wave /
    sky cover left NaN.

    Parameters
    ----------
    frame : pandas.DataFrame
        Raw values in SI units with columns named as in :data:`WEATHER_COLUMNS` (a subset),
        indexed by the instants the values apply to.  Not modified.
    meta : WeatherMeta
        Site metadata (altitude for the pressure fill; path or name for messages).
    max_gap_h : float
        Longest missing duration that is interpolated [h].
    labels : mapping, optional
        Column name as the user's file spells it, per normalised column, for messages.
    report : ValidationReport, optional
        Report to append to; a new one if omitted.

    Returns
    -------
    frame : pandas.DataFrame
        The normalised weather frame (see module docstring).
    report : ValidationReport
        Repairs made and notes.
    """
    where = source_label(meta)
    labels = dict(labels or {})
    report = report if report is not None else ValidationReport()
    if not (isinstance(max_gap_h, (int, float)) and math.isfinite(max_gap_h) and max_gap_h >= 0.0):
        raise WeatherError(f"{where}: max_gap_h: {max_gap_h!r} is not a number >= 0")
    if not isinstance(frame, pd.DataFrame):
        raise WeatherError(f"{where}: frame: expected a pandas DataFrame, got {type(frame).__name__}")

    unknown = [c for c in frame.columns if c not in WEATHER_COLUMNS]
    if unknown:
        raise WeatherError(f"{where}: {unknown[0]}: unknown column (known: {', '.join(WEATHER_COLUMNS)})")
    for col in REQUIRED_COLUMNS:
        if col not in frame.columns:
            raise WeatherError(f"{where}: {labels.get(col, col)}: required column missing")
    if "temp_dew" not in frame.columns and "relative_humidity" not in frame.columns:
        raise WeatherError(
            f"{where}: {labels.get('temp_dew', 'temp_dew')}: required column missing "
            f"(give dew point or {labels.get('relative_humidity', 'relative_humidity')})"
        )

    step = check_time_index(frame.index, where)
    check_utc_offset(frame.index, meta.utc_offset, where)
    out = pd.DataFrame(index=frame.index.tz_convert(site_timezone(meta.utc_offset)))
    for col in WEATHER_COLUMNS:
        if col in frame.columns:
            try:
                out[col] = pd.to_numeric(frame[col], errors="raise").astype("float64")
            except (TypeError, ValueError) as exc:
                raise WeatherError(f"{where}: {labels.get(col, col)}: values are not numbers ({exc})") from None
        else:
            out[col] = np.nan
    given = {c for c in WEATHER_COLUMNS if c in frame.columns and out[c].notna().any()}
    for col in REQUIRED_COLUMNS:
        if col not in given:
            raise WeatherError(f"{where}: {labels.get(col, col)}: column has no values")
    if not {"temp_dew", "relative_humidity"} & given:
        raise WeatherError(f"{where}: {labels.get('temp_dew', 'temp_dew')}: neither dew point nor humidity has values")
    infinite = [c for c in WEATHER_COLUMNS if np.isinf(out[c].to_numpy()).any()]
    if infinite:
        col = infinite[0]
        i = int(np.flatnonzero(np.isinf(out[col].to_numpy()))[0])
        raise WeatherError(f"{where}: {labels.get(col, col)}: infinite value at {format_time(out.index[i])}")

    _check_limits(out, where, labels, report)

    # One humidity column from the other where only one is missing (before gap filling).
    if {"temp_dew", "relative_humidity"} <= given:
        t, td, rh = (out[c].to_numpy() for c in ("temp_air", "temp_dew", "relative_humidity"))
        need_td = np.isnan(td) & ~np.isnan(rh) & ~np.isnan(t) & (rh > 0.0)
        need_rh = np.isnan(rh) & ~np.isnan(td) & ~np.isnan(t)
        if need_td.any():
            td = td.copy()
            td[need_td] = dew_point_from_relative_humidity(t[need_td], rh[need_td])
            out["temp_dew"] = td
            report.repairs.append(
                f"computed {int(need_td.sum())} missing value(s) of temp_dew from relative_humidity (Magnus)"
            )
        if need_rh.any():
            rh = rh.copy()
            rh[need_rh] = relative_humidity_from_dew_point(t[need_rh], td[need_rh])
            out["relative_humidity"] = rh
            report.repairs.append(
                f"computed {int(need_rh.sum())} missing value(s) of relative_humidity from temp_dew (Magnus)"
            )

    max_gap = pd.Timedelta(hours=float(max_gap_h))
    for col in WEATHER_COLUMNS:
        if col in given:
            _fill_gaps(out, col, where, labels.get(col, col), step, max_gap, report)
    if "temp_dew" in given:
        # Gaps filled in only one of dry-bulb / dew point can cross: check again.
        _clip_dew_point(out, where, labels, report, after=" after gap filling")

    if "temp_dew" not in given:
        rh = out["relative_humidity"].to_numpy()
        if np.any(rh <= 0.0):
            i = int(np.flatnonzero(rh <= 0.0)[0])
            raise WeatherError(
                f"{where}: {labels.get('relative_humidity', 'relative_humidity')}: 0 % at "
                f"{format_time(out.index[i])} leaves the dew point undefined"
            )
        out["temp_dew"] = np.minimum(
            dew_point_from_relative_humidity(out["temp_air"].to_numpy(), rh), out["temp_air"].to_numpy()
        )
        report.notes.append("temp_dew computed from temp_air and relative_humidity (Magnus, Alduchov & Eskridge 1996)")
    if "relative_humidity" not in given:
        out["relative_humidity"] = relative_humidity_from_dew_point(
            out["temp_air"].to_numpy(), out["temp_dew"].to_numpy()
        )
        report.notes.append("relative_humidity computed from temp_air and temp_dew (Magnus, Alduchov & Eskridge 1996)")
    if "pressure" not in given:
        out["pressure"] = float(standard_atmosphere_pressure(meta.altitude))
        report.notes.append(
            f"no pressure in the source: ISO 2533 standard atmosphere at {meta.altitude:g} m "
            f"({out['pressure'].iloc[0]:.0f} Pa) used"
        )
    for col, what in (("wind_direction", "wind direction"), ("sky_ir", "sky long-wave")):
        if col not in given:
            report.notes.append(f"no {what} in the source: {col} left NaN")
    if not {"total_sky_cover", "opaque_sky_cover"} & given:
        report.notes.append("no sky cover in the source: total_sky_cover and opaque_sky_cover left NaN")

    return finish_frame(out, where), report


def finish_frame(frame: pd.DataFrame, where: str = "weather") -> pd.DataFrame:
    """Put a frame into the normalised layout: columns in order, float64, index named 'time' with its step.

    Parameters
    ----------
    frame : pandas.DataFrame
        Frame holding all of :data:`WEATHER_COLUMNS` on a valid time index.
    where : str
        File (or source) name for messages.

    Returns
    -------
    pandas.DataFrame
        A new frame in the normalised layout.
    """
    missing = [c for c in WEATHER_COLUMNS if c not in frame.columns]
    if missing:
        raise WeatherError(f"{where}: {missing[0]}: required column missing")
    step = check_time_index(frame.index, where)
    index = pd.DatetimeIndex(frame.index.as_unit(TIME_UNIT), name="time")
    index = pd.DatetimeIndex(index, freq=pd.tseries.frequencies.to_offset(step))
    out = pd.DataFrame(
        {c: frame[c].to_numpy(dtype="float64", copy=True) for c in WEATHER_COLUMNS}, index=index
    )
    return out


__all__ = [
    "DEFAULT_MAX_GAP_H",
    "MID_INTERVAL_FORMATS",
    "OPTIONAL_COLUMNS",
    "REQUIRED_COLUMNS",
    "SOURCE_FORMATS",
    "TIME_UNIT",
    "ValidationReport",
    "WEATHER_COLUMNS",
    "WEATHER_UNITS",
    "WeatherMeta",
    "check_time_index",
    "data_span",
    "dew_point_from_relative_humidity",
    "finish_frame",
    "interpolate_direction",
    "relative_humidity_from_dew_point",
    "saturation_vapour_pressure",
    "site_timezone",
    "source_label",
    "standard_atmosphere_pressure",
    "validate_weather",
]
