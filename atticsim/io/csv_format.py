"""The project's own weather file: the "atticsim weather CSV" (reader and writer).

Layout::

    # atticsim weather CSV
    # site: Invented Plains
    # latitude: 35.0
    # longitude: -97.0
    # altitude_m: 350
    # utc_offset_h: -6
    # invented: yes
    # note: made-up weather for the demo; not a real climate
    time,temp_air_c,temp_dew_c,relative_humidity_pct,wind_speed_m_s,ghi_w_m2,dni_w_m2,dhi_w_m2,...
    2025-07-01T00:00:00-06:00,24.1,18.0,68.6,2.5,0,0,0,...

Header lines start with ``#``.  Metadata lines are ``# key: value`` with the keys
site, latitude [deg N], longitude [deg E], altitude_m [m], utc_offset_h [h] (all
required), invented (yes/no, default no) and note (free text, may repeat).  Other
``#`` lines are comments; a ``# word: ...`` line with an unknown key is an error so
that a misspelt key is not lost.  Then one CSV header row and the data rows.

Columns: time (ISO 8601 with the UTC offset of the site's local standard time),
temp_air_c, temp_dew_c and/or relative_humidity_pct, wind_speed_m_s, ghi_w_m2,
dni_w_m2, dhi_w_m2, and optionally wind_direction_deg, pressure_pa, sky_ir_w_m2,
total_sky_cover_pct and opaque_sky_cover_pct (share of the sky dome covered by any
cloud / by opaque cloud, 0-100 %; the normalised frame holds them as fractions 0-1).
Every value, irradiance included, applies AT its time stamp (instantaneous), so the
reader keeps the stamps as they are.  Any regular step (1 h, 10 min, ...).  An empty
cell is a missing value (a gap, see :func:`~atticsim.io.weather_frame.validate_weather`).
"""

from __future__ import annotations

import csv
import io
import math
import os
import re
from pathlib import Path
from typing import Sequence

import numpy as np
import pandas as pd

from atticsim.io.weather_frame import (
    WeatherError,
    DEFAULT_MAX_GAP_H,
    ValidationReport,
    WEATHER_COLUMNS,
    WeatherMeta,
    site_timezone,
    validate_weather,
)

#: First line the writer puts in every file (recognised by format detection).
SIGNATURE = "# atticsim weather CSV"

#: CSV column name -> normalised column name, in the order the writer uses.
CSV_COLUMNS: dict[str, str] = {
    "temp_air_c": "temp_air",
    "temp_dew_c": "temp_dew",
    "relative_humidity_pct": "relative_humidity",
    "wind_speed_m_s": "wind_speed",
    "ghi_w_m2": "ghi",
    "dni_w_m2": "dni",
    "dhi_w_m2": "dhi",
    "wind_direction_deg": "wind_direction",
    "pressure_pa": "pressure",
    "sky_ir_w_m2": "sky_ir",
    "total_sky_cover_pct": "total_sky_cover",
    "opaque_sky_cover_pct": "opaque_sky_cover",
}
#: CSV columns whose unit differs from the normalised frame's: frame value = CSV value x factor.
CSV_FACTORS: dict[str, float] = {"total_sky_cover_pct": 0.01, "opaque_sky_cover_pct": 0.01}
#: Decimals of a percent written for the sky cover (so that tenths and percents read back exactly).
COVER_DECIMALS = 9
_REQUIRED_CSV = ("temp_air_c", "wind_speed_m_s", "ghi_w_m2", "dni_w_m2", "dhi_w_m2")
# written only when they hold values
_OPTIONAL_WRITTEN = ("wind_direction_deg", "sky_ir_w_m2", "total_sky_cover_pct", "opaque_sky_cover_pct")

#: Header keys: required ones, then optional ones.
HEADER_KEYS_REQUIRED = ("site", "latitude", "longitude", "altitude_m", "utc_offset_h")
HEADER_KEYS_OPTIONAL = ("invented", "note")

_KEY_LINE = re.compile(r"^#\s*([A-Za-z_][A-Za-z0-9_]*)\s*:(.*)$")
_OFFSET = re.compile(r"(Z|[+-]\d{2}:?\d{2})$")


def _parse_header(lines: list[str], where: str) -> tuple[dict[str, str], list[str]]:
    """Collect '# key: value' pairs and notes from the comment lines."""
    keys: dict[str, str] = {}
    notes: list[str] = []
    for line in lines:
        match = _KEY_LINE.match(line.strip())
        if not match:
            continue  # free comment
        key, value = match.group(1).lower(), match.group(2).strip()
        if key not in HEADER_KEYS_REQUIRED + HEADER_KEYS_OPTIONAL:
            known = ", ".join(HEADER_KEYS_REQUIRED + HEADER_KEYS_OPTIONAL)
            raise WeatherError(f"{where}: {key}: unknown header key (known: {known})")
        if key == "note":
            notes.append(value)
            continue
        if key in keys:
            raise WeatherError(f"{where}: {key}: header key given twice")
        if not value:
            raise WeatherError(f"{where}: {key}: header key has no value")
        keys[key] = value
    for key in HEADER_KEYS_REQUIRED:
        if key not in keys:
            raise WeatherError(f"{where}: {key}: required header key missing (write '# {key}: ...')")
    return keys, notes


def _header_number(keys: dict[str, str], key: str, where: str) -> float:
    try:
        value = float(keys[key])
    except ValueError:
        raise WeatherError(f"{where}: {key}: {keys[key]!r} is not a number") from None
    if not math.isfinite(value):
        raise WeatherError(f"{where}: {key}: {keys[key]!r} is not a finite number")
    return value


def _parse_times(texts: list[str], utc_offset: float, where: str) -> pd.DatetimeIndex:
    """Parse ISO 8601 stamps that must all carry the header's UTC offset."""
    series = pd.Series(texts, dtype=object)
    offsets = series.str.extract(_OFFSET.pattern, expand=False)
    if offsets.isna().any():
        row = int(np.flatnonzero(offsets.isna().to_numpy())[0])
        raise WeatherError(
            f"{where}: time: {texts[row]!r} in data row {row + 1} has no UTC offset "
            f"(write e.g. 2025-07-01T00:00:00-06:00)"
        )
    # Each stamp's own offset must equal the header's (fixed-offset local standard time).
    minutes = round(utc_offset * 60.0)
    sign = "-" if minutes < 0 else "+"
    hh, mm = divmod(abs(minutes), 60)
    expected = {f"{sign}{hh:02d}:{mm:02d}", f"{sign}{hh:02d}{mm:02d}"}
    if minutes == 0:
        expected |= {"Z", "-00:00", "-0000"}
    wrong = ~offsets.isin(expected)
    if wrong.any():
        row = int(np.flatnonzero(wrong.to_numpy())[0])
        raise WeatherError(
            f"{where}: time: {texts[row]!r} in data row {row + 1} has UTC offset {offsets.iloc[row]}, but the "
            f"header says utc_offset_h: {utc_offset:g} (one fixed offset of local standard time is required)"
        )
    try:
        stamps = pd.to_datetime(series, format="ISO8601", utc=True)
    except (TypeError, ValueError) as exc:
        first = str(exc).splitlines()[0].split(". You might")[0] if str(exc) else type(exc).__name__
        raise WeatherError(f"{where}: time: cannot read the time stamps as ISO 8601 ({first})") from None
    return pd.DatetimeIndex(stamps).tz_convert(site_timezone(utc_offset))


def _check_percent(values: np.ndarray, index: pd.DatetimeIndex, name: str, where: str) -> None:
    """Refuse a percentage outside 0..100 in the file's own unit (a share of the sky dome)."""
    with np.errstate(invalid="ignore"):
        bad = np.flatnonzero((values < 0.0) | (values > 100.0))
    if bad.size:
        i = int(bad[0])
        raise WeatherError(
            f"{where}: {name}: {values[i]:g} at {index[i].isoformat()} is outside 0..100 % "
            f"(a share of the sky dome); {bad.size} value(s) out of range"
        )


def read_weather_csv(
    path: str | os.PathLike,
    *,
    year: int | None = None,
    max_gap_h: float = DEFAULT_MAX_GAP_H,
) -> tuple[pd.DataFrame, WeatherMeta, ValidationReport]:
    """Read an atticsim weather CSV into the normalised weather frame.

    Values are instantaneous at their stamps, so the stamps are kept unchanged.

    Parameters
    ----------
    path : str or path-like
        The CSV file.
    year : int, optional
        Dated weather is not moved to another year: if given, the data must start in
        this year (otherwise ValueError).
    max_gap_h : float
        Longest missing duration that is interpolated [h].

    Returns
    -------
    frame : pandas.DataFrame
        Normalised weather frame (see :mod:`atticsim.io.weather_frame`).
    meta : WeatherMeta
        Site metadata from the header, ``source_format="atticsim-csv"``.
    report : ValidationReport
        Repairs made and notes.
    """
    where = os.fspath(path)
    try:
        text = Path(path).read_text(encoding="utf-8-sig")  # a spreadsheet's byte-order mark is not content
    except FileNotFoundError:
        raise WeatherError(f"{where}: file: not found") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise WeatherError(f"{where}: file: cannot be read as UTF-8 text ({exc})") from None

    lines = text.splitlines()
    comment_lines: list[str] = []
    start = None
    for i, line in enumerate(lines):
        stripped = line.strip()
        if not stripped:
            continue
        if stripped.startswith("#"):
            comment_lines.append(stripped)
            continue
        start = i
        break
    if start is None:
        raise WeatherError(f"{where}: time: no CSV header row and no data rows after the '#' lines")
    keys, notes = _parse_header(comment_lines, where)

    invented_text = keys.get("invented", "no").strip().lower()
    if invented_text not in ("yes", "no"):
        raise WeatherError(f"{where}: invented: {keys['invented']!r} must be yes or no")
    meta = WeatherMeta(
        name=keys["site"],
        latitude=_header_number(keys, "latitude", where),
        longitude=_header_number(keys, "longitude", where),
        altitude=_header_number(keys, "altitude_m", where),
        utc_offset=_header_number(keys, "utc_offset_h", where),
        source_format="atticsim-csv",
        invented=invented_text == "yes",
        path=where,
        file_notes=tuple(notes),
    )

    rows = list(csv.reader(io.StringIO("\n".join(line for line in lines[start:] if line.strip()))))
    header = [h.strip() for h in rows[0]]
    body = rows[1:]
    if not header or header[0] != "time":
        raise WeatherError(f"{where}: time: the first column of the CSV header row must be 'time', found {header[:1]}")
    seen: set[str] = set()
    for name in header[1:]:
        if name not in CSV_COLUMNS:
            raise WeatherError(f"{where}: {name}: unknown column (known: time, {', '.join(CSV_COLUMNS)})")
        if name in seen:
            raise WeatherError(f"{where}: {name}: column given twice")
        seen.add(name)
    for name in _REQUIRED_CSV:
        if name not in seen:
            raise WeatherError(f"{where}: {name}: required column missing")
    if "temp_dew_c" not in seen and "relative_humidity_pct" not in seen:
        raise WeatherError(f"{where}: temp_dew_c: required column missing (give temp_dew_c or relative_humidity_pct)")
    if not body:
        raise WeatherError(f"{where}: time: no data rows")
    for row_no, row in enumerate(body, start=1):
        if len(row) != len(header):
            raise WeatherError(
                f"{where}: time: data row {row_no} has {len(row)} fields, the header row has {len(header)}"
            )

    index = _parse_times([r[0].strip() for r in body], meta.utc_offset, where)
    data: dict[str, np.ndarray] = {}
    for j, name in enumerate(header[1:], start=1):
        cells = pd.Series([r[j].strip() for r in body], dtype=object)
        empty = cells.eq("") | cells.str.lower().eq("nan")
        values = pd.to_numeric(cells.where(~empty, None), errors="coerce").to_numpy(dtype=float)
        bad = np.flatnonzero(np.isnan(values) & ~empty.to_numpy())
        if bad.size:
            i = int(bad[0])
            raise WeatherError(f"{where}: {name}: {cells.iloc[i]!r} at {index[i].isoformat()} is not a number")
        if name in CSV_FACTORS:
            _check_percent(values, index, name, where)
            values = values * CSV_FACTORS[name]
        data[CSV_COLUMNS[name]] = values
    raw = pd.DataFrame(data, index=index)

    if year is not None and int(raw.index[0].year) != int(year):
        raise WeatherError(
            f"{where}: year: --year {year} lays a typical year on a calendar year, but this file holds dated "
            f"weather starting in {raw.index[0].year}; leave --year out (or give {raw.index[0].year})"
        )
    labels = {norm: name for name, norm in CSV_COLUMNS.items()}
    frame, report = validate_weather(raw, meta, max_gap_h=max_gap_h, labels=labels)
    if meta.invented:
        report.notes.append("invented weather (the header says invented: yes), not a real climate")
    return frame, meta, report


def write_weather_csv(
    frame: pd.DataFrame,
    meta,
    path: str | os.PathLike,
    *,
    notes: Sequence[str] | None = None,
) -> Path:
    """Write a normalised weather frame as an atticsim weather CSV.

    The frame is checked first (columns, tz-aware index in the site's fixed offset,
    sorted, unique, regular, physical limits) so the writer never produces a file the
    reader refuses; values are written unchanged (NaN as an empty cell) with full float
    precision, so reading the file back gives the same frame (sky cover is written in percent
    to :data:`COVER_DECIMALS` decimals).  wind_direction_deg, sky_ir_w_m2 and the sky cover
    columns are written only when they hold values; a frame may lack the sky cover columns.

    Parameters
    ----------
    frame : pandas.DataFrame
        Normalised weather frame (all of :data:`~atticsim.io.weather_frame.WEATHER_COLUMNS`).
    meta : WeatherMeta or object with the same attributes
        Site written to the header: name, latitude [deg N], longitude [deg E],
        altitude [m], utc_offset [h], invented (bool, default False).
    path : str or path-like
        Output file; its folder must exist.
    notes : sequence of str, optional
        ``# note:`` lines; default ``meta.file_notes`` (if the object has it).

    Returns
    -------
    pathlib.Path
        The written file.
    """
    where = os.fspath(path)
    try:
        site = WeatherMeta(
            name=str(meta.name),
            latitude=float(meta.latitude),
            longitude=float(meta.longitude),
            altitude=float(meta.altitude),
            utc_offset=float(meta.utc_offset),
            source_format="atticsim-csv",
            invented=bool(getattr(meta, "invented", False)),
            path=where,
            file_notes=tuple(str(n) for n in (notes if notes is not None else getattr(meta, "file_notes", ()))),
        )
    except AttributeError as exc:
        raise WeatherError(f"{where}: meta: {exc}") from None
    frame = frame.assign(**{c: np.nan for c in ("total_sky_cover", "opaque_sky_cover") if c not in frame.columns})
    missing = [c for c in WEATHER_COLUMNS if c not in frame.columns]
    if missing:
        raise WeatherError(f"{where}: {missing[0]}: required column missing from the frame to write")
    extra = [c for c in frame.columns if c not in WEATHER_COLUMNS]
    if extra:
        raise WeatherError(f"{where}: {extra[0]}: unknown column in the frame to write")
    for text in (site.name, *site.file_notes):
        if "\n" in text or "\r" in text:
            raise WeatherError(f"{where}: site/note: header text must be one line, got {text!r}")
    # Refuse what the reader would refuse (time base, offset, limits); nothing is changed in the output.
    validate_weather(frame, site)

    columns = ["temp_air_c", "temp_dew_c", "relative_humidity_pct", "wind_speed_m_s",
               "ghi_w_m2", "dni_w_m2", "dhi_w_m2", "wind_direction_deg", "pressure_pa", "sky_ir_w_m2",
               "total_sky_cover_pct", "opaque_sky_cover_pct"]
    columns = [c for c in columns if c not in _OPTIONAL_WRITTEN or frame[CSV_COLUMNS[c]].notna().any()]
    out = pd.DataFrame({c: frame[CSV_COLUMNS[c]].to_numpy(dtype=float) for c in columns})
    for c in CSV_FACTORS:
        if c in out:
            out[c] = np.round(out[c] / CSV_FACTORS[c], COVER_DECIMALS)
    out.insert(0, "time", [t.isoformat() for t in frame.index.tz_convert(site.tz)])

    header = [
        SIGNATURE,
        f"# site: {site.name}",
        f"# latitude: {site.latitude!r}",
        f"# longitude: {site.longitude!r}",
        f"# altitude_m: {site.altitude!r}",
        f"# utc_offset_h: {site.utc_offset!r}",
        f"# invented: {'yes' if site.invented else 'no'}",
        *(f"# note: {n}" for n in site.file_notes),
    ]
    target = Path(path)
    with target.open("w", encoding="utf-8", newline="") as handle:
        handle.write("\n".join(header) + "\n")
        out.to_csv(handle, index=False, na_rep="", lineterminator="\n")
    return target


__all__ = ["CSV_COLUMNS", "CSV_FACTORS", "SIGNATURE", "read_weather_csv", "write_weather_csv"]
