"""The files a run writes: which file, from which part of the result."""

from __future__ import annotations

from atticsim.results.output import write_json


def iso_times(times, fmt):
    """ISO 8601 extended text of tz-aware times: ``fmt`` then the offset as +hh:mm (strftime's %z gives
    +hhmm, the basic form, which does not belong with an extended date)."""
    text = times.dt.strftime(fmt + "%z")
    return text.str[:-2] + ":" + text.str[-2:]


def result_writers(result, units: str = "si") -> dict:
    """file name -> writer(path) for a :class:`SimulationResult`."""
    from atticsim.report.cautions import ALL
    from atticsim.report.plots import plot_monthly, plot_temperatures

    def summary(path):
        write_json(path, {**result.summary, "notes": result.notes, "cautions": list(ALL)})

    def timeseries(path):
        ts = result.timeseries.copy()
        ts.index = iso_times(ts.index.to_series(), "%Y-%m-%dT%H:%M:%S").to_numpy()
        ts.index.name = result.timeseries.index.name
        ts.to_csv(path, float_format="%.4f")

    def events(path):
        ev = result.events.copy()
        ev["time"] = iso_times(ev["time"], "%Y-%m-%dT%H:%M:%S.%f")
        ev.to_csv(path, index=False, float_format="%.4f")

    return {
        "summary.json": summary,
        "daily.csv": lambda p: result.daily.to_csv(p, index=False, float_format="%.4f"),
        "timeseries.csv": timeseries,
        "events.csv": events,
        "monthly.csv": lambda p: result.monthly.to_csv(p, index=False, float_format="%.4f"),
        "temperatures.png": lambda p: plot_temperatures(result, p, units),
        "monthly.png": lambda p: plot_monthly(result, p, units),
    }
