"""Readers for the building trade's typical-year weather files: TMY3, TMY2 and EPW.

Parsing is done by :mod:`pvlib.iotools` (``read_tmy3``, ``read_tmy2``, ``read_epw``);
this module takes the file's own month / day / hour fields (not pvlib's index),
converts units to SI, lays the records on the calendar year the user picks and
brings every column to ONE time base.

Time conventions of the three formats (all hourly, local standard time, hour 1..24
is the hour ENDING at that time):

* irradiance (GHI, DNI, DHI) is the energy received during the 60 minutes before the
  stamp [Wh/m^2], i.e. numerically the mean irradiance of that hour [W/m^2]
  (TMY3: Wilcox & Marion 2008, NREL/TP-581-43156, section 1; TMY2: Marion & Urban
  1995, User's Manual for TMY2s, section 3; EPW: Crawley, Hand & Lawrie 1999, Proc. Building Simulation '99,
  weather file format, from memory);
* dry-bulb, dew point, humidity, pressure, wind and total / opaque sky cover (tenths
  of the sky dome) are observed AT the stamp (same sources).

An interval mean belongs to the middle of its interval, so every output row is
stamped at mid-hour: the record for hour-ending 13:00 gives the row 12:30.  The
instantaneous quantities are interpolated linearly to the same mid-hour stamps (the
mean of the hour-end values before and after; wind direction on the circle).  For
the first mid-hour of a full typical year the value "before" is the Dec 31 24:00
record (the typical year is treated as periodic); for a partial file the first value
is held for that half hour.  EPW horizontal infrared radiation is treated as an
instantaneous value too: weather converters compute it from the hour's dry-bulb,
dew point and opaque sky cover (Crawley, Hand & Lawrie 1999, from memory).

Calendar year: typical years mix months from different source years.  The records
are laid on ``year`` (default: the file's year when all records share one, otherwise
:data:`DEFAULT_TYPICAL_YEAR`).  For a leap year without Feb 29 in the file, Feb 28
is repeated as Feb 29; a Feb 29 in the file is dropped for a common year (both
common practice, no source; reported as notes).  The hour-ending 24:00 of Dec 31
becomes Jan 1 00:00 of the next year on the file's time base and 23:30 Dec 31 on the
output time base, so the output index stays inside the year and monotonic.  The data
still cover the whole year, Jan 1 00:00 to Dec 31 24:00: the half hour before the first
stamp and after the last belong to the first and last records
(:func:`~atticsim.io.weather_frame.data_span`; the forcing holds them).

Complete records only: a record cut short (too few characters or fields, an empty
field) and a file that stops before the end of its year (TMY2, TMY3: Dec 31 hour 24;
EPW: the end date of its DATA PERIODS line) are refused in one line naming the file,
the line and the reason.  Missing-value codes inside complete records are gaps, repaired
or refused by :func:`~atticsim.io.weather_frame.validate_weather`.
"""

from __future__ import annotations

import calendar
import os
import re

import numpy as np
import pandas as pd

from atticsim.io.weather_frame import (
    WeatherError,
    DEFAULT_MAX_GAP_H,
    ValidationReport,
    WeatherMeta,
    finish_frame,
    site_timezone,
    validate_weather,
)

#: Calendar year a typical year is laid on when the caller gives none (a common year).
DEFAULT_TYPICAL_YEAR = 2025

#: Columns that are means over the interval ending at the stamp (moved to mid-interval).
INTERVAL_MEAN_COLUMNS = ("ghi", "dni", "dhi")

#: Characters in a TMY2 data record: a blank, then the fields of the TMY2 user's manual (Marion &
#: Urban 1995, Table 3-2, from memory) up to column 142, as pvlib's parser reads them and the shipped
#: file has them.
TMY2_RECORD_LENGTH = 142

#: Fields in an EPW data record (Crawley, Hand & Lawrie 1999, from memory; pvlib names 35 columns).
EPW_RECORD_FIELDS = 35

#: Lines before the first data record.
_HEADER_LINES = {"tmy3": 2, "tmy2": 1, "epw": 8}

# Hecto-pascal (millibar) to pascal.
_HPA = 100.0


def _check_year(year: int | None, where: str) -> None:
    if year is None:
        return
    if isinstance(year, bool) or not isinstance(year, (int, np.integer)) or not 1000 <= int(year) <= 9999:
        raise WeatherError(f"{where}: year: {year!r} is not a four-digit calendar year")


def _read_lines(where: str) -> list[str]:
    try:
        with open(where, encoding="latin-1", newline="") as handle:
            return handle.read().splitlines()
    except FileNotFoundError:
        raise WeatherError(f"{where}: file: not found") from None
    except OSError as exc:
        raise WeatherError(f"{where}: file: cannot be read ({exc})") from None


def _cut_record(where: str, fmt: str, line_no: int, reason: str) -> WeatherError:
    """The one-line error for an incomplete record (line numbers from 1, as an editor shows them)."""
    record = line_no - _HEADER_LINES[fmt]
    return WeatherError(f"{where}: line {line_no}: record {record} {reason}; the file is cut short or damaged "
                      f"(complete records are needed, nothing is patched)")


def _data_lines(lines: list[str], fmt: str) -> list[tuple[int, str]]:
    """(line number, text) of the data records: the lines after the header, trailing blank lines ignored."""
    body = lines[_HEADER_LINES[fmt]:]
    while body and not body[-1].strip():
        body.pop()
    return [(i + _HEADER_LINES[fmt] + 1, text) for i, text in enumerate(body)]


def _check_csv_records(where: str, fmt: str, lines: list[str], n_fields: int, used: dict[int, str]) -> None:
    """Every data record of a CSV-like file has ``n_fields`` fields and no empty field where a value is read.

    ``used`` maps the field positions read (0-based) to their names, for the message.
    """
    import csv

    if len(lines) <= _HEADER_LINES[fmt]:
        raise WeatherError(f"{where}: line {len(lines) + 1}: no data records after the header")
    for line_no, text in _data_lines(lines, fmt):
        fields = next(csv.reader([text]), [])
        if len(fields) < n_fields:
            raise _cut_record(where, fmt, line_no, f"has {len(fields)} fields, {fmt.upper()} records have {n_fields}")
        empty = [name for pos, name in used.items() if not fields[pos].strip()]
        if empty:
            raise _cut_record(where, fmt, line_no, f"has an empty field ({empty[0]})")


def _check_tmy2_records(where: str, lines: list[str]) -> None:
    """Every TMY2 data record is :data:`TMY2_RECORD_LENGTH` characters long."""
    if len(lines) <= _HEADER_LINES["tmy2"]:
        raise WeatherError(f"{where}: line 2: no data records after the header")
    for line_no, text in _data_lines(lines, "tmy2"):
        if len(text) < TMY2_RECORD_LENGTH:
            raise _cut_record(where, "tmy2", line_no,
                              f"is {len(text)} characters long, a TMY2 record is {TMY2_RECORD_LENGTH}")


def _check_span(where: str, fmt: str, months, days, hours, first: tuple[int, int], last: tuple[int, int],
                what: str) -> None:
    """The records run from hour 1 of ``first`` (month, day) to hour 24 of ``last``.

    A file that starts late or stops early is refused (one line naming the record and its line).
    """
    head = _HEADER_LINES[fmt]
    n = len(months)
    if n == 0:
        raise WeatherError(f"{where}: line {head + 1}: no data records could be read (a damaged header line, such "
                           f"as an unclosed quote, may hide them)")

    def stamp(i):
        return f"{int(months[i]):02d}/{int(days[i]):02d} {int(hours[i]):02d}:00"

    if (int(months[0]), int(days[0]), int(hours[0])) != (first[0], first[1], 1):
        raise WeatherError(
            f"{where}: line {head + 1}: the first record is {stamp(0)}, not {first[0]:02d}/{first[1]:02d} "
            f"01:00 ({what}); the file is incomplete (nothing is patched)")
    if (int(months[-1]), int(days[-1]), int(hours[-1])) != (last[0], last[1], 24):
        raise WeatherError(
            f"{where}: line {head + n}: the file stops at record {n} ({stamp(n - 1)}), before "
            f"{last[0]:02d}/{last[1]:02d} 24:00 ({what}); the file is cut short (nothing is patched)")


def _cover_tenths(values: np.ndarray, name: str, where: str, fmt: str, missing) -> np.ndarray:
    """Sky cover in tenths (0..10) as a fraction of the sky dome; ``missing(v)`` marks the missing-value code."""
    v = np.asarray(values, dtype=float).copy()
    v[missing(v)] = np.nan
    with np.errstate(invalid="ignore"):
        bad = np.flatnonzero((v < 0.0) | (v > 10.0))
    if bad.size:
        i = int(bad[0])
        raise WeatherError(f"{where}: line {_HEADER_LINES[fmt] + i + 1}: {name}: {v[i]:g} tenths in record {i + 1} "
                         f"is outside 0..10 (a share of the sky dome)")
    return v / 10.0


def _records_frame(
    years: np.ndarray,
    months: np.ndarray,
    days: np.ndarray,
    hours: np.ndarray,
    values: dict[str, np.ndarray],
    meta: WeatherMeta,
    year: int | None,
    report: ValidationReport,
) -> tuple[pd.DataFrame, bool]:
    """Lay hour-ending records on a calendar year.

    Returns the records indexed by their hour-ending stamps (tz-aware) and whether they
    form one complete year (Jan 1 hour 1 .. Dec 31 hour 24).
    """
    where = meta.path or meta.name
    months = np.asarray(months, dtype=int)
    days = np.asarray(days, dtype=int)
    hours = np.asarray(hours, dtype=int)
    if np.any((hours < 1) | (hours > 24)):
        i = int(np.flatnonzero((hours < 1) | (hours > 24))[0])
        raise WeatherError(f"{where}: hour: {hours[i]} in record {i + 1} is outside 1..24 (hour-ending records)")
    if np.any((months < 1) | (months > 12)):
        i = int(np.flatnonzero((months < 1) | (months > 12))[0])
        raise WeatherError(f"{where}: month: {months[i]} in record {i + 1} is outside 1..12")

    if year is None:
        found = np.unique(np.asarray(years, dtype=int))
        if found.size == 1:
            year = int(found[0])
            report.notes.append(f"records laid on their own year {year}")
        else:
            year = DEFAULT_TYPICAL_YEAR
            report.notes.append(
                f"typical year (records from {found.size} source years) laid on calendar year {year}; "
                f"pass year= to choose another"
            )
    else:
        report.notes.append(f"records laid on calendar year {year}")

    keep = np.ones(len(months), dtype=bool)
    feb29 = (months == 2) & (days == 29)
    if not calendar.isleap(year) and feb29.any():
        keep &= ~feb29
        report.notes.append(f"dropped {int(feb29.sum())} Feb 29 record(s): {year} is not a leap year")
    columns = {k: np.asarray(v, dtype=float)[keep] for k, v in values.items()}
    months, days, hours = months[keep], days[keep], hours[keep]
    feb28 = np.flatnonzero((months == 2) & (days == 28))
    if calendar.isleap(year) and not ((months == 2) & (days == 29)).any() and feb28.size:
        after = feb28[-1] + 1
        if after < len(months) and months[after] == 3:
            order = np.concatenate((np.arange(after), feb28, np.arange(after, len(months))))
            columns = {k: v[order] for k, v in columns.items()}
            days = days[order].copy()
            days[after : after + feb28.size] = 29
            months, hours = months[order], hours[order]
            report.notes.append(f"{year} is a leap year: Feb 28 repeated as Feb 29 ({feb28.size} records)")

    try:
        dates = pd.to_datetime(pd.DataFrame({"year": year, "month": months, "day": days}))
    except (TypeError, ValueError) as exc:
        raise WeatherError(f"{where}: day: invalid calendar date in the records ({exc})") from None
    stamps = pd.DatetimeIndex(dates + pd.to_timedelta(hours, unit="h")).tz_localize(site_timezone(meta.utc_offset))
    records = pd.DataFrame(columns, index=stamps)
    n_year = 8784 if calendar.isleap(year) else 8760
    full = (
        len(records) == n_year
        and (months[0], days[0], hours[0]) == (1, 1, 1)
        and (months[-1], days[-1], hours[-1]) == (12, 31, 24)
    )
    return records, full


def _to_midpoints(records: pd.DataFrame, full_year: bool, report: ValidationReport) -> pd.DataFrame:
    """Move hour-ending records to mid-hour stamps (one time base for all columns)."""
    step = records.index[1] - records.index[0]
    out = pd.DataFrame(index=records.index - step / 2)
    for col in records.columns:
        now = records[col].to_numpy(dtype=float)
        if col in INTERVAL_MEAN_COLUMNS:
            out[col] = now  # mean over the hour ending at the stamp -> its midpoint
            continue
        before = np.empty_like(now)
        before[1:] = now[:-1]
        # Full typical year: the hour-end before Jan 1 01:00 is Dec 31 24:00 (periodic year).
        before[0] = now[-1] if full_year else now[0]
        if col == "wind_direction":
            out[col] = _circular_mean(before, now)
        else:
            # Linear interpolation to the midpoint: common practice, no source.
            out[col] = 0.5 * (before + now)
    if full_year:
        report.notes.append(
            "irradiance (hourly means) stamped at mid-hour; temperature, humidity, wind, pressure, sky cover "
            "and sky long-wave interpolated from the hour-end values to mid-hour (first half hour from Dec 31 "
            "24:00)"
        )
    else:
        report.notes.append(
            "irradiance (hourly means) stamped at mid-hour; temperature, humidity, wind, pressure, sky cover "
            "and sky long-wave interpolated from the hour-end values to mid-hour (first half hour held: partial "
            "year)"
        )
    return out


def _finish(
    records: pd.DataFrame,
    full: bool,
    meta: WeatherMeta,
    max_gap_h: float,
    labels: dict[str, str],
    report: ValidationReport,
) -> tuple[pd.DataFrame, WeatherMeta, ValidationReport]:
    # Validate on the file's own (hour-ending) time base so messages name the file's times.
    checked, report = validate_weather(records, meta, max_gap_h=max_gap_h, labels=labels, report=report)
    frame = _to_midpoints(checked, full, report)
    return finish_frame(frame, meta.path or meta.name), meta, report


def _circular_mean(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Direction halfway between two directions [deg] (angle of the summed unit vectors).

    Same as :func:`~atticsim.io.weather_frame.interpolate_direction` at the midpoint;
    common practice, no source.  NaN where either input is NaN.
    """
    ra, rb = np.radians(a), np.radians(b)
    angle = np.degrees(np.arctan2(np.sin(ra) + np.sin(rb), np.cos(ra) + np.cos(rb)))
    return np.mod(np.round(angle, 6), 360.0)  # rounded to 1e-6 deg: no 224.99999999999997


#: Normalised column -> TMY3 column, as the file's second line names them.
_TMY3_NAMES = {
    "temp_air": "Dry-bulb (C)",
    "temp_dew": "Dew-point (C)",
    "relative_humidity": "RHum (%)",
    "wind_speed": "Wspd (m/s)",
    "wind_direction": "Wdir (degrees)",
    "ghi": "GHI (W/m^2)",
    "dni": "DNI (W/m^2)",
    "dhi": "DHI (W/m^2)",
    "pressure": "Pressure (mbar)",
}
#: Normalised sky-cover column -> TMY3 column (tenths of the sky dome).
_TMY3_COVER = {"total_sky_cover": "TotCld (tenths)", "opaque_sky_cover": "OpqCld (tenths)"}


def read_tmy3(
    path: str | os.PathLike, year: int | None = None, *, max_gap_h: float = DEFAULT_MAX_GAP_H
) -> tuple[pd.DataFrame, WeatherMeta, ValidationReport]:
    """Read an NREL TMY3 CSV file into the normalised weather frame.

    Parsing by :func:`pvlib.iotools.read_tmy3`.  Site from the first line (USAF, name,
    state, UTC offset [h], latitude, longitude, elevation [m]).  Missing values
    (-9900, TMY3 user's manual, from memory) become gaps.  Pressure mbar -> Pa; total and
    opaque sky cover (TotCld, OpqCld, tenths) -> fractions 0-1.  TMY3 has no sky long-wave
    column (sky_ir NaN).  Every record must be complete (as many fields as the column header,
    no empty field where a value is read) and the records must run from Jan 1 01:00 to
    Dec 31 24:00; otherwise ValueError naming the line.

    Parameters
    ----------
    path : str or path-like
        The TMY3 file.
    year : int, optional
        Calendar year to lay the typical year on (see module docstring).
    max_gap_h : float
        Longest missing duration that is interpolated [h].

    Returns
    -------
    frame : pandas.DataFrame
        Normalised weather frame, stamped at mid-hour.
    meta : WeatherMeta
        Site metadata, ``source_format="tmy3"``.
    report : ValidationReport
        Repairs made and notes.
    """
    import pvlib.iotools

    import csv

    where = os.fspath(path)
    _check_year(year, where)
    lines = _read_lines(where)
    header = next(csv.reader(lines[1:2]), [])
    read = set(_TMY3_NAMES.values()) | {"Date (MM/DD/YYYY)", "Time (HH:MM)", *_TMY3_COVER.values()}
    _check_csv_records(where, "tmy3", lines, len(header), {i: h for i, h in enumerate(header) if h in read})
    try:
        data, head = pvlib.iotools.read_tmy3(where, coerce_year=None, map_variables=True)
    except FileNotFoundError:
        raise WeatherError(f"{where}: file: not found") from None
    except Exception as exc:  # pvlib raises assorted errors for malformed files
        raise WeatherError(f"{where}: format: cannot be read as TMY3 ({type(exc).__name__}: {exc})") from None
    meta = WeatherMeta(
        name=", ".join(p for p in (str(head["Name"]).strip().strip('"'), str(head["State"]).strip()) if p),
        latitude=float(head["latitude"]),
        longitude=float(head["longitude"]),
        altitude=float(head["altitude"]),
        utc_offset=float(head["TZ"]),
        source_format="tmy3",
        path=where,
    )
    names = dict(_TMY3_NAMES)
    for col in ("temp_air", "wind_speed", "ghi", "dni", "dhi", "Date (MM/DD/YYYY)", "Time (HH:MM)"):
        if col not in data.columns:
            raise WeatherError(f"{where}: {names.get(col, col)}: required column missing")
    values = {}
    for col in names:
        if col in data.columns:
            v = pd.to_numeric(data[col], errors="coerce").to_numpy(dtype=float, copy=True)
            v[v <= -9900.0] = np.nan  # TMY3 missing-data code -9900 (from memory)
            values[col] = v * _HPA if col == "pressure" else v
    for col, name in _TMY3_COVER.items():
        if name in data.columns:
            # Tenths of the sky dome; missing-data code -9900 as for every TMY3 field (from memory).
            values[col] = _cover_tenths(pd.to_numeric(data[name], errors="coerce").to_numpy(dtype=float), name,
                                        where, "tmy3", lambda v: v <= -9900.0)
            names[col] = name
    try:
        date = data["Date (MM/DD/YYYY)"].astype(str).str.split("/", expand=True).astype(int).to_numpy()
        clock = data["Time (HH:MM)"].astype(str).str.split(":", expand=True).astype(int).to_numpy()
        if date.shape[1] != 3 or clock.shape[1] != 2 or (clock[:, 1] != 0).any():
            raise WeatherError("wrong field count or minutes")
    except (TypeError, ValueError):
        raise WeatherError(
            f"{where}: Date (MM/DD/YYYY) / Time (HH:MM): expected MM/DD/YYYY dates and whole hours HH:00"
        ) from None
    _check_span(where, "tmy3", date[:, 0], date[:, 1], clock[:, 0], (1, 1), (12, 31),
                "a TMY3 file holds a whole year of hourly records")
    report = ValidationReport()
    records, full = _records_frame(
        date[:, 2],
        date[:, 0],
        date[:, 1],
        clock[:, 0],
        values,
        meta,
        year,
        report,
    )
    return _finish(records, full, meta, max_gap_h, names, report)


def read_tmy2(
    path: str | os.PathLike, year: int | None = None, *, max_gap_h: float = DEFAULT_MAX_GAP_H
) -> tuple[pd.DataFrame, WeatherMeta, ValidationReport]:
    """Read an NREL TMY2 fixed-width file into the normalised weather frame.

    Parsing by :func:`pvlib.iotools.read_tmy2`.  Units per the TMY2 user's manual
    (Marion & Urban 1995, Table 3-2): dry-bulb and dew point in tenths of degC, wind
    speed in tenths of m/s, pressure in mbar; converted to SI here.  A field filled
    with 9s (9999 / 999 / 99) is a missing value (TMY2 user's manual, from memory).  Total
    and opaque sky cover (TotCld, OpqCld, tenths) -> fractions 0-1.  No sky long-wave column
    (sky_ir NaN).  Every data record must be :data:`TMY2_RECORD_LENGTH` characters long and
    the records must run from Jan 1 01:00 to Dec 31 24:00; otherwise ValueError naming the line.

    Parameters
    ----------
    path : str or path-like
        The TMY2 file.
    year : int, optional
        Calendar year to lay the typical year on (see module docstring).
    max_gap_h : float
        Longest missing duration that is interpolated [h].

    Returns
    -------
    frame : pandas.DataFrame
        Normalised weather frame, stamped at mid-hour.
    meta : WeatherMeta
        Site metadata, ``source_format="tmy2"``.
    report : ValidationReport
        Repairs made and notes.
    """
    import pvlib.iotools

    where = os.fspath(path)
    _check_year(year, where)
    if not os.path.isfile(where):
        raise WeatherError(f"{where}: file: not found")
    _check_tmy2_records(where, _read_lines(where))
    try:
        data, head = pvlib.iotools.read_tmy2(where)
    except Exception as exc:  # pvlib raises assorted errors for malformed files
        raise WeatherError(f"{where}: format: cannot be read as TMY2 ({type(exc).__name__}: {exc})") from None
    meta = WeatherMeta(
        name=", ".join(p for p in (str(head["City"]).strip(), str(head["State"]).strip()) if p),
        latitude=float(head["latitude"]),
        longitude=float(head["longitude"]),
        altitude=float(head["altitude"]),
        utc_offset=float(head["TZ"]),
        source_format="tmy2",
        path=where,
    )
    # column -> (TMY2 field, scale to SI, all-nines missing code)
    fields = {
        "temp_air": ("DryBulb", 0.1, 9999.0),
        "temp_dew": ("DewPoint", 0.1, 9999.0),
        "relative_humidity": ("RHum", 1.0, 999.0),
        "wind_speed": ("Wspd", 0.1, 999.0),
        "wind_direction": ("Wdir", 1.0, 999.0),
        "ghi": ("GHI", 1.0, 9999.0),
        "dni": ("DNI", 1.0, 9999.0),
        "dhi": ("DHI", 1.0, 9999.0),
        "pressure": ("Pressure", _HPA, 9999.0),
    }
    values = {}
    for col, (name, scale, code) in fields.items():
        v = data[name].to_numpy(dtype=float, copy=True)
        v[v == code] = np.nan
        values[col] = v * scale
    labels = {c: f[0] for c, f in fields.items()}
    for col, name in (("total_sky_cover", "TotCld"), ("opaque_sky_cover", "OpqCld")):
        values[col] = _cover_tenths(data[name].to_numpy(dtype=float), name, where, "tmy2", lambda v: v == 99.0)
        labels[col] = name
    _check_span(where, "tmy2", data["month"].to_numpy(dtype=int), data["day"].to_numpy(dtype=int),
                data["hour"].to_numpy(dtype=int), (1, 1), (12, 31), "a TMY2 file holds a whole year of hourly records")
    report = ValidationReport()
    records, full = _records_frame(
        data["year"].to_numpy(dtype=int) + 1900,
        data["month"].to_numpy(dtype=int),
        data["day"].to_numpy(dtype=int),
        data["hour"].to_numpy(dtype=int),
        values,
        meta,
        year,
        report,
    )
    return _finish(records, full, meta, max_gap_h, labels, report)


def _epw_data_periods(where: str, lines: list[str]) -> tuple[int, tuple[int, int], tuple[int, int]]:
    """Records per hour, first (month, day) and last (month, day) from the EPW 'DATA PERIODS' line.

    The line reads ``DATA PERIODS,<periods>,<records per hour>,<name>,<start weekday>,<start>,<end>``
    (further periods add name, weekday, start and end; Crawley, Hand & Lawrie 1999, from memory);
    dates are ``M/D`` (spaces allowed, a year after a second slash ignored).
    """
    for line in lines[:8]:
        if line.upper().startswith("DATA PERIODS"):
            parts = line.split(",")
            try:
                per_hour = int(parts[2])
            except (IndexError, ValueError):
                raise WeatherError(f"{where}: DATA PERIODS: cannot read the records per hour") from None

            def month_day(text):
                found = re.findall(r"\d+", text)
                if len(found) < 2 or not (1 <= int(found[0]) <= 12 and 1 <= int(found[1]) <= 31):
                    raise WeatherError(f"{where}: DATA PERIODS: {text.strip()!r} is not a start or end date M/D")
                return int(found[0]), int(found[1])

            if len(parts) < 7:
                raise WeatherError(f"{where}: DATA PERIODS: start and end dates missing")
            return per_hour, month_day(parts[5]), month_day(parts[-1])
    raise WeatherError(f"{where}: DATA PERIODS: header line missing (an EPW file has 8 header lines)")


#: EPW field positions (0-based) read here, for the record check (Crawley, Hand & Lawrie 1999, from memory).
_EPW_FIELDS_READ = {0: "year", 1: "month", 2: "day", 3: "hour", 6: "dry bulb temperature",
                    7: "dew point temperature", 8: "relative humidity", 9: "atmospheric station pressure",
                    12: "horizontal infrared radiation intensity", 13: "global horizontal radiation",
                    14: "direct normal radiation", 15: "diffuse horizontal radiation", 20: "wind direction",
                    21: "wind speed", 22: "total sky cover", 23: "opaque sky cover"}


def read_epw(
    path: str | os.PathLike, year: int | None = None, *, max_gap_h: float = DEFAULT_MAX_GAP_H
) -> tuple[pd.DataFrame, WeatherMeta, ValidationReport]:
    """Read an EPW weather file into the normalised weather frame.

    Parsing by :func:`pvlib.iotools.read_epw`.  Site from the LOCATION line (city,
    state, country, source, WMO, latitude, longitude, UTC offset [h], elevation [m]).
    Uses the file's own horizontal infrared radiation as sky_ir.  Missing-value codes
    (Crawley, Hand & Lawrie 1999, Proc. Building Simulation '99, from memory): dry-bulb and dew
    point 99.9, humidity 999, pressure 999999, irradiance and infrared 9999, wind
    direction 999, wind speed 999, total and opaque sky cover 99.  Sky cover (tenths) ->
    fractions 0-1.  Only hourly files (1 record per hour).  Every record must have its 35
    fields (none empty where a value is read) and the records must run from hour 1 of the
    DATA PERIODS start date to hour 24 of its end date; otherwise ValueError naming the line.

    Parameters
    ----------
    path : str or path-like
        The EPW file.
    year : int, optional
        Calendar year to lay the records on (see module docstring).
    max_gap_h : float
        Longest missing duration that is interpolated [h].

    Returns
    -------
    frame : pandas.DataFrame
        Normalised weather frame, stamped at mid-hour.
    meta : WeatherMeta
        Site metadata, ``source_format="epw"``.
    report : ValidationReport
        Repairs made and notes.
    """
    import pvlib.iotools

    where = os.fspath(path)
    _check_year(year, where)
    if not os.path.isfile(where):
        raise WeatherError(f"{where}: file: not found")
    lines = _read_lines(where)
    per_hour, first, last = _epw_data_periods(where, lines)
    if per_hour != 1:
        raise WeatherError(f"{where}: DATA PERIODS: {per_hour} records per hour; only hourly EPW files are supported")
    _check_csv_records(where, "epw", lines, EPW_RECORD_FIELDS, _EPW_FIELDS_READ)
    try:
        data, head = pvlib.iotools.read_epw(where)
    except Exception as exc:  # pvlib raises assorted errors for malformed files
        raise WeatherError(f"{where}: format: cannot be read as EPW ({type(exc).__name__}: {exc})") from None
    meta = WeatherMeta(
        name=", ".join(
            p for p in (str(head.get(k, "")).strip() for k in ("city", "state-prov", "country")) if p and p != "-"
        ),
        latitude=float(head["latitude"]),
        longitude=float(head["longitude"]),
        altitude=float(head["altitude"]),
        utc_offset=float(head["TZ"]),
        source_format="epw",
        path=where,
    )
    # column -> (pvlib name, missing code: values >= code are missing)
    fields = {
        "temp_air": ("temp_air", 99.9),
        "temp_dew": ("temp_dew", 99.9),
        "relative_humidity": ("relative_humidity", 999.0),
        "pressure": ("atmospheric_pressure", 999999.0),
        "sky_ir": ("ghi_infrared", 9999.0),
        "ghi": ("ghi", 9999.0),
        "dni": ("dni", 9999.0),
        "dhi": ("dhi", 9999.0),
        "wind_direction": ("wind_direction", 999.0),
        "wind_speed": ("wind_speed", 999.0),
    }
    values = {}
    for col, (name, code) in fields.items():
        v = pd.to_numeric(data[name], errors="coerce").to_numpy(dtype=float, copy=True)
        v[v >= code] = np.nan
        values[col] = v
    for col, name in (("total_sky_cover", "total_sky_cover"), ("opaque_sky_cover", "opaque_sky_cover")):
        values[col] = _cover_tenths(pd.to_numeric(data[name], errors="coerce").to_numpy(dtype=float),
                                    name.replace("_", " "), where, "epw", lambda v: v >= 99.0)
    _check_span(where, "epw", data["month"].to_numpy(dtype=int), data["day"].to_numpy(dtype=int),
                data["hour"].to_numpy(dtype=int), first, last, "the dates of its DATA PERIODS line")
    report = ValidationReport()
    records, full = _records_frame(
        data["year"].to_numpy(dtype=int),
        data["month"].to_numpy(dtype=int),
        data["day"].to_numpy(dtype=int),
        data["hour"].to_numpy(dtype=int),
        values,
        meta,
        year,
        report,
    )
    labels = {
        "temp_air": "dry bulb temperature",
        "temp_dew": "dew point temperature",
        "relative_humidity": "relative humidity",
        "pressure": "atmospheric station pressure",
        "sky_ir": "horizontal infrared radiation intensity",
        "ghi": "global horizontal radiation",
        "dni": "direct normal radiation",
        "dhi": "diffuse horizontal radiation",
        "wind_direction": "wind direction",
        "wind_speed": "wind speed",
        "total_sky_cover": "total sky cover",
        "opaque_sky_cover": "opaque sky cover",
    }
    return _finish(records, full, meta, max_gap_h, labels, report)


__all__ = ["DEFAULT_TYPICAL_YEAR", "INTERVAL_MEAN_COLUMNS", "read_epw", "read_tmy2", "read_tmy3"]
