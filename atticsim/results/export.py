"""The files a run writes: which file, from which part of the result, and how tables are written.

Tables go through :func:`write_csv` (pyarrow's CSV writer, fed in chunks of rows, so that a year of 1-minute rows
is written in about a second without building its text in memory) or :func:`write_parquet` (the same columns
with their types and time zone). Every number is written to the decimals its unit ending gives it
(:data:`DECIMALS`), in both formats, so a CSV and a Parquet file of one run hold the same numbers.
"""

from __future__ import annotations


from atticsim.results.output import apart, write_json
from atticsim.beside import ahead

#: Decimals written for a column by its unit ending (the first ending that matches; the longer endings come
#: before the ones they end with). Chosen by what the figure means, not by what the solver carries:
#: temperatures to 0.001 K (below the fast solver's error tolerance, 0.005 K, and far below a thermistor's tenths
#: of a kelvin); heat rates to 0.1 W; irradiance to 0.1 W/m2 (field pyranometers read to
#: about 1 W/m2); wind to 0.01 m/s; air flows to 0.1 L/s (0.2 cfm); pressures to 0.001 Pa (field manometers
#: resolve 0.1 Pa; an attic's natural-ventilation pressures are tenths of a pascal). Common practice, no source;
#: the instruments' resolutions are from memory.
DECIMALS = (
    ("_w_m2", 1), ("_btu_h_ft2", 2),
    ("_m3_s", 4), ("_m3s", 4), ("_cfm", 1),
    ("_m_s", 2), ("_mph", 2),
    ("_in_wc", 5), ("_pa", 3),
    ("_btu_h", 1), ("_w", 1),
    ("_delta_f", 3), ("_c", 3), ("_f", 3), ("_k", 3),
)
#: Decimals of any other number (energies in kWh to 0.1 Wh, hours to 0.36 s, shares, percentages).
DEFAULT_DECIMALS = 4
#: Columns written to significant digits instead (a relative residual is read for its order of magnitude).
SIGNIFICANT = {"airflow_mass_residual": 2}
#: Rows converted and written at a time (bounded memory: a chunk's text, not the file's).
CHUNK_ROWS = 8192
#: Rows of a Parquet row group: the demo year written in 8192-row groups took 1.3 s for 56 MB, in 32768-row
#: groups 1.1 s for 48 MB, in 65536-row groups 1.0 s for 44 MB with some 20 MB more resident (measured side by
#: side, with dictionary encoding on every column).
PARQUET_ROWS = 32768


def decimals(name: str) -> int:
    """Decimals a column (or summary key) named ``name`` is written with, by its unit ending
    (:data:`DECIMALS`, else :data:`DEFAULT_DECIMALS`)."""
    for ending, places in DECIMALS:
        if name.endswith(ending) and len(name) > len(ending):
            return places
    return DEFAULT_DECIMALS


def round_significant(values, digits: int):
    """``values`` [any unit] rounded to ``digits`` significant digits (0, NaN and inf kept), each the double
    nearest to its decimal text (an integer mantissa divided or multiplied by an exact power of ten)."""
    import numpy as np

    x = np.asarray(values, dtype=float)
    out = x.copy()
    ok = np.isfinite(x) & (x != 0.0)
    if not ok.any():
        return out
    e = np.floor(np.log10(np.abs(x[ok]))).astype(int) - (digits - 1)
    mant = np.rint(x[ok] / 10.0 ** e.astype(float))
    out[ok] = np.where(e < 0, mant / 10.0 ** (-e).astype(float), mant * 10.0 ** np.maximum(e, 0).astype(float))
    return out


def _offset_text(seconds: int) -> str:
    sign = "-" if seconds < 0 else "+"
    minutes = abs(int(seconds)) // 60
    return f"{sign}{minutes // 60:02d}:{minutes % 60:02d}"


def arrow_times(values, unit: str = "s"):
    """ISO 8601 extended text (``2025-07-01T12:00:00-06:00``) of times, as an Arrow string array.

    Parameters
    ----------
    values : pandas.DatetimeIndex or Series of datetimes
        tz-aware (each written in its own offset) or naive (written without one).
    unit : {"s", "us"}
        Whole seconds, or seconds with six decimals (microseconds); the rest is cut, as strftime cuts it.
    """
    import numpy as np
    import pandas as pd
    import pyarrow as pa
    import pyarrow.compute as pc

    idx = pd.DatetimeIndex(values)
    local = idx.tz_localize(None) if idx.tz is not None else idx
    wall = local.to_numpy().astype(f"datetime64[{unit}]")
    text = pc.replace_substring(pc.cast(pa.array(wall, mask=np.isnat(wall)), pa.string()), " ", "T",
                                max_replacements=1)
    if idx.tz is None or len(idx) == 0:
        return text
    offsets = ((local - idx.tz_convert("UTC").tz_localize(None)).to_numpy() // np.timedelta64(1, "s"))
    kinds, which = np.unique(offsets, return_inverse=True)
    if kinds.size == 1:
        return pc.binary_join_element_wise(text, _offset_text(kinds[0]), "")
    suffix = pa.array(np.array([_offset_text(k) for k in kinds], dtype=object)[which], type=pa.string())
    return pc.binary_join_element_wise(text, suffix, "")


#: Largest number of units of the last decimal written as a fixed-point decimal (18 digits); a column holding a
#: larger one (a model gone wrong, not a measurement) is written as plain doubles instead.
_MAX_UNITS = 1e17


def _decimal_type(places: int):
    """The Arrow type whose values are int64 counts of 10**-places: written as text with exactly ``places``
    decimals (decimal64 from pyarrow 18 on; before it the count goes through decimal128)."""
    import pyarrow as pa

    return pa.decimal64(18, places) if hasattr(pa, "decimal64") else pa.decimal128(38, places)


def _plan(name: str, values):
    """How a whole column is converted, decided once so that every chunk has the same type: ``("time",)``,
    ``("bool",)``, ``("fixed", places)`` (a number to its decimals), ``("significant", digits)``,
    ``("double",)`` (a number too large for 18 digits: a model gone wrong, written as it is) or
    ``("other", arrow type)``."""
    import numpy as np
    import pandas as pd
    import pyarrow as pa

    if pd.api.types.is_datetime64_any_dtype(values):
        return ("time",)
    arr = values.to_numpy() if hasattr(values, "to_numpy") else np.asarray(values)
    if arr.dtype.kind == "b":
        return ("bool",)
    if arr.dtype.kind != "f":
        return ("other", pa.array(values, from_pandas=True).type)
    if name in SIGNIFICANT:
        return ("significant", SIGNIFICANT[name])
    places = decimals(name)
    finite = np.abs(arr[np.isfinite(arr)])
    if finite.size and float(finite.max()) * 10.0 ** places >= _MAX_UNITS:
        return ("double",)
    return ("fixed", places)


def _arrow_column(plan, values, for_text: bool, time_unit: str):
    """A chunk of one column as an Arrow array, by its :func:`_plan`: a number rounded to its decimals once, as a
    count of its last decimal's unit, then written from that count (for text a fixed-point decimal, so that 21.5
    is written 21.500; for Parquet the double nearest to that decimal); times as ISO text for CSV; the rest as
    it is. Missing and infinite numbers become missing values."""
    import numpy as np
    import pyarrow as pa
    import pyarrow.compute as pc

    how = plan[0]
    if how == "time":
        return arrow_times(values, time_unit) if for_text else pa.array(values)
    if how == "other":
        return pa.array(values, type=plan[1], from_pandas=True)
    arr = values.to_numpy() if hasattr(values, "to_numpy") else np.asarray(values)
    if how == "bool":
        return pa.array(np.where(arr, "True", "False"), type=pa.string()) if for_text else pa.array(arr)
    bad = ~np.isfinite(arr)
    mask = bad if bad.any() else None
    if how == "significant":
        return pa.array(round_significant(arr, plan[1]), mask=mask)
    if how == "double":
        return pa.array(arr, mask=mask)
    places = plan[1]
    scaled = arr * 10.0 ** places
    units = np.rint(scaled)
    if mask is not None:
        units[bad] = 0.0
    ties = np.flatnonzero(np.abs(scaled - units) == 0.5)  # the product rounded onto a half: printf decides
    if ties.size:
        units[ties] = [float(format(v, f".{places}f").replace(".", "")) for v in arr[ties]]
    if not for_text:
        return pa.array(units / 10.0 ** places, mask=mask)
    counts = pa.array(units.astype(np.int64), mask=mask)
    kind = _decimal_type(places)
    if kind.bit_width == 64:
        return counts.view(kind)
    return pc.cast(counts, pa.decimal128(38, 0)).view(kind)


def _table_columns(frame, index: bool):
    """(names, columns) of a frame, its index first when ``index``."""
    names, cols = [], []
    if index:
        names.append(frame.index.name or "index")
        cols.append(frame.index)
    for name in frame.columns:
        names.append(str(name))
        cols.append(frame[name])
    return names, cols


def _batches(frame, index: bool, for_text: bool, time_unit: str, rows: int | None = None):
    """The frame as Arrow record batches of ``rows`` rows, each column converted by :func:`_arrow_column`."""
    import pyarrow as pa

    rows = rows or CHUNK_ROWS
    names, cols = _table_columns(frame, index)
    plans = [_plan(name, col) for name, col in zip(names, cols)]
    n = len(frame)
    for a in range(0, max(n, 1), rows):
        b = min(n, a + rows)
        arrays = [_arrow_column(plan, col[a:b], for_text, time_unit) for plan, col in zip(plans, cols)]
        yield pa.RecordBatch.from_arrays(arrays, names=names)


def _needs_quotes(text: str) -> bool:
    return any(c in text for c in ',"\r\n')


def write_csv(frame, path, index: bool = False, time_unit: str = "s") -> None:
    """Write a table as CSV: numbers to their decimals (:func:`decimals`), times in ISO 8601 with their UTC
    offset, empty cells for missing values; strings quoted only where they hold a comma, quote or line break.

    Parameters
    ----------
    frame : pandas.DataFrame
    path : path
    index : bool
        Write the index as the first column (named by the index's name).
    time_unit : {"s", "us"}
        Times to whole seconds or to microseconds.
    """
    import pyarrow.csv as pcsv

    names, cols = _table_columns(frame, index)
    text_cols = [c for c in cols if getattr(c, "dtype", None) is not None and c.dtype.kind in "OUST"]
    quote = any(_needs_quotes(n) for n in names) or any(
        _needs_quotes(str(v)) for c in text_cols for v in c.dropna().unique())
    options = pcsv.WriteOptions(quoting_style="needed" if quote else "none",
                                quoting_header="needed" if quote else "none")
    batches = ahead(_batches(frame, index, True, time_unit))
    first = next(batches)
    with pcsv.CSVWriter(str(path), first.schema, write_options=options) as writer:
        writer.write_batch(first)
        for batch in batches:
            writer.write_batch(batch)


def write_parquet(frame, path, index: bool = True) -> None:
    """Write a table as Parquet (zstd): the same columns and rounding as :func:`write_csv`, with their types
    (times as timestamps in their time zone, the fan state as an integer) kept."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    batches = ahead(_batches(frame, index, False, "s", rows=PARQUET_ROWS))
    first = next(batches)
    # dictionary encoding only where values repeat (states, words), not for the numbers and times: on the demo
    # year it cost 0.35 s and made the file larger, 48 MB against 41 MB
    coded = [f.name for f in first.schema if not (pa.types.is_floating(f.type) or pa.types.is_timestamp(f.type))]
    with pq.ParquetWriter(str(path), first.schema, compression="zstd", use_dictionary=coded) as writer:
        writer.write_batch(first)
        for batch in batches:
            writer.write_batch(batch)


def ip_table(frame, units: str = "si"):
    """The table with, when ``units`` is "ip", each SI column followed by its IP companion (see
    :func:`atticsim.units.ip_companion`: ``attic_air_c`` then ``attic_air_f``, ``..._w`` then ``..._btu_h``,
    ``..._m3_s`` then ``..._cfm``, ``..._kwh`` then ``..._kbtu``). The SI columns always stay, so scripts
    reading them never break. Unchanged for "si"."""
    if units != "ip":
        return frame
    import pandas as pd

    from atticsim.units import ip_companion

    cols = {}
    for name in frame.columns:
        cols[name] = frame[name]
        comp = ip_companion(str(name))
        if comp is not None and comp[0] not in frame.columns and pd.api.types.is_numeric_dtype(frame[name]) \
                and not pd.api.types.is_bool_dtype(frame[name]):
            cols[comp[0]] = comp[1](frame[name].astype(float))
    return pd.DataFrame(cols, index=frame.index, copy=False)  # the SI columns shared, not copied


def ip_summary(summary: dict, units: str = "si") -> dict:
    """The summary with, for "ip", each SI figure followed by its IP companion (``attic_air_max_f`` after
    ``attic_air_max_c``); lists of numbers (bands) are converted item by item."""
    if units != "ip":
        return summary
    from atticsim.units import ip_companion

    out = {}
    for key, value in summary.items():
        out[key] = value
        comp = ip_companion(key)
        if comp is None or comp[0] in summary:
            continue
        if isinstance(value, (int, float)) and not isinstance(value, bool):
            out[comp[0]] = float(comp[1](value))
        elif isinstance(value, list) and value and all(isinstance(v, (int, float)) and not isinstance(v, bool)
                                                      for v in value):
            out[comp[0]] = [float(comp[1](v)) for v in value]
    return out


#: Formats the time series can be written in (``--format``).
SERIES_FORMATS = ("csv", "parquet")


#: Time-series rows from which a run's figures are drawn in a child process (:func:`apart`) while its tables
#: are written: a year of minutes (525,601 rows) 15 % sooner as CSV and 4 % as Parquet, a day (1,441 rows) 4 %
#: later (the child's start costs more than the tables take), side by side on the 2-core machine, 2026-12-05.
APART_ROWS = 100_000


def result_writers(result, units: str = "si", series_format: str = "csv") -> dict:
    """file name -> writer(path) for a :class:`SimulationResult`; with ``units="ip"`` the files carry IP
    columns and keys beside the SI ones (:func:`ip_table`, :func:`ip_summary`); ``series_format`` "parquet"
    writes ``timeseries.parquet`` instead of ``timeseries.csv``."""
    from atticsim.report.cautions import ALL
    from atticsim.report.plots import plot_monthly, plot_temperatures

    if series_format not in SERIES_FORMATS:
        raise ValueError(f"--format: {series_format!r}: choose one of {', '.join(SERIES_FORMATS)}")

    def summary(path):
        write_json(path, {**ip_summary(result.summary, units), "notes": result.notes, "cautions": list(ALL)})

    # long runs: the figures drawn in a child process while the tables are written here
    figure = apart if len(result.timeseries) >= APART_ROWS else (lambda write: write)

    def timeseries(path):
        ts = ip_table(result.timeseries, units)
        if series_format == "parquet":
            write_parquet(ts, path)
        else:
            write_csv(ts, path, index=True)

    return {
        "summary.json": summary,
        "daily.csv": lambda p: write_csv(ip_table(result.daily, units), p),
        f"timeseries.{series_format}": timeseries,
        "events.csv": lambda p: write_csv(ip_table(result.events, units), p, time_unit="us"),
        "monthly.csv": lambda p: write_csv(ip_table(result.monthly, units), p),
        "temperatures.png": figure(lambda p: plot_temperatures(result, p, units)),
        "monthly.png": figure(lambda p: plot_monthly(result, p, units)),
    }
