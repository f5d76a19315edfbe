"""Weather file format detection (from content, not only the extension) and the one entry point.

:func:`read_weather` is what the rest of atticsim calls for every weather file: it
looks at the first lines of the file, picks the reader, and returns the normalised
weather frame, the site metadata and the validation report.

Signatures looked for (first lines of the file):

* atticsim weather CSV: first non-blank line starts with ``#`` and a CSV header row
  starting with ``time,`` follows the ``#`` lines;
* EPW: first line starts with ``LOCATION,`` (EPW weather file);
* TMY3: second line starts with ``Date (MM/DD/YYYY),Time (HH:MM)`` (NREL TMY3 user's manual);
* TMY2: first line is the fixed-width station header (WBAN number, city, state, time
  zone, N/S latitude, E/W longitude, elevation) and the second is a data record that
  starts with a blank and the year/month/day/hour digits (NREL TMY2 user's manual, Tables 3-1, 3-2).
"""

from __future__ import annotations

import os
import re
from pathlib import Path

import pandas as pd

from atticsim.errors import one_line, raised_by_atticsim
from atticsim.io.csv_format import read_weather_csv
from atticsim.io.typical_year import read_epw, read_tmy2, read_tmy3
from atticsim.io.weather_frame import DEFAULT_MAX_GAP_H, ValidationReport, WeatherError, WeatherMeta

#: Reader per format name.
READERS = {
    "atticsim-csv": read_weather_csv,
    "tmy3": read_tmy3,
    "tmy2": read_tmy2,
    "epw": read_epw,
}

#: File extensions the formats usually carry (lower case), for the "extension lies" note.
USUAL_EXTENSIONS = {
    "atticsim-csv": (".csv",),
    "tmy3": (".csv",),
    "tmy2": (".tm2", ".tmy2"),
    "epw": (".epw",),
}

_TMY2_HEADER = re.compile(
    r"^\s*\d{5}\s+.*\s[A-Z]{2}\s+[+-]?\d{1,2}(\.\d+)?\s+[NS]\s*\d{1,2}\s+\d{1,2}\s+[EW]\s*\d{1,3}\s+\d{1,2}\s+-?\d+\s*$"
)
_TMY2_RECORD = re.compile(r"^ \d{8}")


def _first_lines(path: str, count: int = 60) -> list[str]:
    import stat

    try:
        if not stat.S_ISREG(os.stat(path).st_mode):  # a device (/dev/zero), a pipe: never read to its end
            if stat.S_ISDIR(os.stat(path).st_mode):
                raise IsADirectoryError(path)
            raise WeatherError(f"{path}: file: not a regular file (a device or a pipe); give a weather file")
        with open(path, encoding="latin-1") as handle:
            lines = handle.read(256 * 1024).splitlines()[:count]
        if lines and lines[0].startswith("\xef\xbb\xbf"):  # a UTF-8 byte-order mark, read as latin-1
            lines[0] = lines[0][3:]
        return lines
    except FileNotFoundError:
        raise WeatherError(f"{path}: file: not found") from None
    except IsADirectoryError:
        raise WeatherError(f"{path}: file: is a folder, not a weather file") from None
    except OSError as exc:
        raise WeatherError(f"{path}: file: cannot be read ({exc})") from None


def detect_format(path: str | os.PathLike) -> str:
    """Name the weather format of a file from its content.

    Parameters
    ----------
    path : str or path-like
        The weather file.

    Returns
    -------
    str
        ``"atticsim-csv"``, ``"epw"``, ``"tmy3"`` or ``"tmy2"``.
    """
    where = os.fspath(path)
    lines = _first_lines(where)
    content = [line for line in lines if line.strip()]
    if not content:
        raise WeatherError(f"{where}: format: the file is empty")
    first = content[0].lstrip("\ufeff")
    if first.startswith("#"):
        for line in content:
            if not line.lstrip().startswith("#"):
                if line.strip().split(",")[0].strip() == "time":
                    return "atticsim-csv"
                break
    if first.upper().startswith("LOCATION,"):
        return "epw"
    if len(lines) > 1 and lines[1].lstrip("\ufeff").startswith("Date (MM/DD/YYYY),Time (HH:MM)"):
        return "tmy3"
    if len(lines[0]) < 300 and _TMY2_HEADER.match(lines[0]) and len(lines) > 1 and _TMY2_RECORD.match(lines[1]):
        return "tmy2"
    shown = first[:60] + ("..." if len(first) > 60 else "")
    raise WeatherError(
        f"{where}: format: not recognised as an atticsim weather CSV, EPW, TMY3 or TMY2 file "
        f"(first line: {shown!r})"
    )


def read_weather(
    path: str | os.PathLike, year: int | None = None, *, max_gap_h: float = DEFAULT_MAX_GAP_H
) -> tuple[pd.DataFrame, WeatherMeta, ValidationReport]:
    """Read any supported weather file into the normalised weather frame.

    Parameters
    ----------
    path : str or path-like
        Weather file: atticsim weather CSV, EPW, TMY3 or TMY2 (format detected from content).
    year : int, optional
        Calendar year to lay a typical year on (TMY3, TMY2, EPW).  For an atticsim CSV
        (dated weather) it must be None or the year the data start in.
    max_gap_h : float
        Longest missing duration that is interpolated [h]; longer gaps raise ValueError.

    Returns
    -------
    frame : pandas.DataFrame
        Normalised weather frame (see :mod:`atticsim.io.weather_frame`).
    meta : WeatherMeta
        Site metadata (coordinates, UTC offset, altitude, format, invented flag).
    report : ValidationReport
        Repairs made (counted) and notes.
    """
    where = os.fspath(path)
    fmt = detect_format(where)
    if fmt != "atticsim-csv":
        with open(where, "rb") as handle:
            if handle.read(3) == b"\xef\xbb\xbf":
                raise WeatherError(f"{where}: format: the {fmt.upper()} file starts with a byte-order mark (an "
                                   f"editor added it); save it again as plain text without one")
    try:
        frame, meta, report = READERS[fmt](where, year=year, max_gap_h=max_gap_h)
    except WeatherError:
        raise
    except RecursionError:
        raise WeatherError(f"{where}: format: the {fmt} file is nested or repeated too deeply to read") from None
    except Exception as exc:  # noqa: BLE001
        # A library's parser (pvlib, pandas, csv) choking on a damaged file: the file is bad, say so in one line.
        # An exception from atticsim's own code is a bug and goes on as it is.
        if raised_by_atticsim(exc) or not isinstance(exc, (ValueError, TypeError, IndexError, KeyError,
                                                           UnicodeError, OverflowError, AttributeError)):
            raise
        raise WeatherError(f"{where}: format: cannot be read as {fmt.upper() if fmt != 'atticsim-csv' else fmt} "
                           f"({type(exc).__name__}: {one_line(str(exc), 160)}); the file is damaged or not "
                           f"{fmt}") from None
    suffix = Path(where).suffix.lower()
    if suffix and suffix not in USUAL_EXTENSIONS[fmt]:
        report.notes.append(f"content is {fmt} although the file name ends in {suffix}: read as {fmt}")
    return frame, meta, report


__all__ = ["READERS", "detect_format", "read_weather"]
