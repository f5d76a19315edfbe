"""The files a run writes: which file, from which part of the result."""

from __future__ import annotations

from atticsim.results.output import write_json


def iso_times(times, fmt):
    """ISO 8601 extended text of tz-aware times: ``fmt`` then the offset as +hh:mm (strftime's %z gives
    +hhmm, the basic form, which does not belong with an extended date)."""
    text = times.dt.strftime(fmt + "%z")
    return text.str[:-2] + ":" + text.str[-2:]


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
    return pd.DataFrame(cols, index=frame.index)


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


def result_writers(result, units: str = "si") -> dict:
    """file name -> writer(path) for a :class:`SimulationResult`; with ``units="ip"`` the files carry IP
    columns and keys beside the SI ones (:func:`ip_table`, :func:`ip_summary`)."""
    from atticsim.report.cautions import ALL
    from atticsim.report.plots import plot_monthly, plot_temperatures

    def summary(path):
        write_json(path, {**ip_summary(result.summary, units), "notes": result.notes, "cautions": list(ALL)})

    def timeseries(path):
        ts = ip_table(result.timeseries, units).copy()
        ts.index = iso_times(ts.index.to_series(), "%Y-%m-%dT%H:%M:%S").to_numpy()
        ts.index.name = result.timeseries.index.name
        ts.to_csv(path, float_format="%.4f")

    def events(path):
        ev = ip_table(result.events, units).copy()
        ev["time"] = iso_times(ev["time"], "%Y-%m-%dT%H:%M:%S.%f")
        ev.to_csv(path, index=False, float_format="%.4f")

    return {
        "summary.json": summary,
        "daily.csv": lambda p: ip_table(result.daily, units).to_csv(p, index=False, float_format="%.4f"),
        "timeseries.csv": timeseries,
        "events.csv": events,
        "monthly.csv": lambda p: ip_table(result.monthly, units).to_csv(p, index=False, float_format="%.4f"),
        "temperatures.png": lambda p: plot_temperatures(result, p, units),
        "monthly.png": lambda p: plot_monthly(result, p, units),
    }
