"""The files a run writes: which file, from which part of the result."""

from __future__ import annotations

from atticsim.results.output import write_json


def result_writers(result, units: str = "si") -> dict:
    """file name -> writer(path) for a :class:`SimulationResult`."""
    from atticsim.report.cautions import ALL
    from atticsim.report.plots import plot_monthly, plot_temperatures

    def summary(path):
        write_json(path, {**result.summary, "notes": result.notes, "cautions": list(ALL)})

    def timeseries(path):
        result.timeseries.to_csv(path, float_format="%.4f", date_format="%Y-%m-%dT%H:%M:%S%z")

    def events(path):
        ev = result.events.copy()
        ev["time"] = ev["time"].dt.strftime("%Y-%m-%dT%H:%M:%S.%f%z")
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
