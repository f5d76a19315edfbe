"""Weather for a fit: the logged days' weather from a file, or a rough stand-in built from the log's own outdoor
readings; and the checks that the weather belongs to the logged days.

A fit is only as good as its weather: the attic follows the sun and the outdoor air of the very days logged.
A typical year is not those days' weather; a file of another place or year gives a poor fit (the report says
so); the log's outdoor column, when it has one, is compared with the file's air temperature.
"""

from __future__ import annotations

from types import SimpleNamespace

import numpy as np
import pandas as pd

from atticsim.calibration.errors import CalibrationError

#: Spec of ``--weather`` that builds the weather from the log's outdoor column.
FROM_LOG = "log"
#: Wind speed of the weather built from the log [m/s] (ASHRAE's summer design wind for exterior films, from
#: memory; the same default as a design day's).
LOG_WEATHER_WIND = 3.4
#: The log's outdoor air differs from the weather file's by more than this RMS [K]: a warning that the file may
#: not be the logged days' weather (common practice, no source: an outdoor probe in the shade of the house reads
#: within a kelvin or two of a nearby station's air).
OUTDOOR_MISMATCH_K = 2.0


def weather_offset(spec, scenario) -> float | None:
    """The UTC offset of the weather's clock [h] before it is loaded: the site's for ``--weather log``."""
    return float(scenario.site.utc_offset) if spec == FROM_LOG else None


def load_fit_weather(spec: str | None, scenario, year: int):
    """The weather frame and metadata for a fit (not for ``--weather log``, built after the log is read).

    Parameters
    ----------
    spec : str or None
        ``--weather`` (a file, ``pvlib:FILE`` or ``demo:NAME``); None: the scenario's ``weather.file``.
    scenario : Scenario
    year : int
        The log's year, on which a typical-year file or demo weather is laid.
    """
    from atticsim.forcing.weather import load_weather

    return load_weather(spec or scenario.weather.file, year=year)


def weather_from_log(log, scenario):
    """Hourly weather built from the log's outdoor readings, for a user without weather of the logged days.

    The air temperature is the log's outdoor column (a one-hour centred mean, at every hour); the sun is pvlib's
    Ineichen clear sky at the scenario's site (no clouds: every day is taken as clear, so cloudy days come out
    too warm); the dew point each day's lowest air temperature (saturation at dawn, common practice as for a
    design day); the wind a constant :data:`LOG_WEATHER_WIND`. A rough stand-in, said in the run's notes.

    Returns
    -------
    (pandas.DataFrame, types.SimpleNamespace)
        A normalised weather frame (``atticsim.io.weather_frame``) and its metadata.
    """
    from atticsim.air import relative_humidity_from_dew_point
    from atticsim.forcing.synthetic import clear_sky
    from atticsim.io.weather_frame import WeatherMeta, validate_weather

    if "outdoor_c" not in log.frame:
        raise CalibrationError("--weather", "log", f"{log.path} has no outdoor_c (or outdoor_f) column to build "
                               f"the weather from; give a weather file of the logged days with --weather FILE")
    outdoor = log.frame["outdoor_c"].dropna()
    site = scenario.site
    times = pd.date_range(log.start.floor("1h"), log.end.ceil("1h"), freq="1h", name="time")
    smooth = outdoor.rolling("1h", center=True).mean()
    secs = (outdoor.index - times[0]).total_seconds().to_numpy()
    temp = np.interp((times - times[0]).total_seconds().to_numpy(), secs, smooth.to_numpy())
    day = times.normalize()
    dew = pd.Series(temp, index=times).groupby(day).transform("min").to_numpy()
    clear, _ = clear_sky(times, site.latitude, site.longitude, site.altitude)
    raw = pd.DataFrame({
        "temp_air": temp, "temp_dew": np.minimum(dew, temp),
        "relative_humidity": relative_humidity_from_dew_point(temp, np.minimum(dew, temp)),
        "wind_speed": LOG_WEATHER_WIND, "ghi": clear["ghi"].to_numpy(), "dni": clear["dni"].to_numpy(),
        "dhi": clear["dhi"].to_numpy()}, index=times)
    meta = WeatherMeta(name=f"the outdoor readings of {log.path} with a clear sky", latitude=site.latitude,
                       longitude=site.longitude, altitude=site.altitude, utc_offset=site.utc_offset,
                       source_format="atticsim-csv", invented=False, path=f"{log.path} (outdoor column)")
    frame, report = validate_weather(raw, meta)
    note = (f"weather built from the log's outdoor readings: clear sky every day (pvlib's Ineichen model at the "
            f"scenario's site), dew point each day's lowest air temperature, wind {LOG_WEATHER_WIND:g} m/s: a rough "
            f"stand-in (cloudy days come out too sunny); a weather file of the logged days is better")
    fields = {k: getattr(meta, k) for k in meta.__dataclass_fields__}
    fields["source_format"] = "logger-outdoor"
    return frame, SimpleNamespace(**fields, notes=[note] + list(report.repairs))


def check_coverage(frame, meta, log, spec: str) -> None:
    """The weather must cover the whole log."""
    from atticsim.io.weather_frame import data_span

    first, last = data_span(frame, meta)
    if log.start < first or log.end > last:
        where = "--weather" if spec else "weather.file"
        raise CalibrationError(where, spec or "scenario's weather", f"covers {first} .. {last}, not the log's "
                               f"{log.start} .. {log.end}: give weather of the logged days with --weather FILE "
                               f"(or --weather log to build a rough one from the log's outdoor column)")


def weather_checks(frame, meta, log) -> tuple[list[str], dict]:
    """Warnings that the weather is not the logged days', and the outdoor comparison's figures.

    Returns
    -------
    (list of str, dict)
        Warnings, and ``outdoor_rms_k``, ``outdoor_bias_k`` (weather minus log) when the log has outdoor air.
    """
    warnings, figures = [], {}
    fmt = getattr(meta, "source_format", "")
    if fmt in ("tmy2", "tmy3", "epw"):
        warnings.append("The weather is a typical year, not the weather of the logged days: the fit cannot tell "
                        "the house's response from the difference in weather. Use measured weather of those days "
                        "(a nearby station's file), or --weather log with an outdoor column in the log.")
    if "outdoor_c" in log.frame and fmt != "logger-outdoor":
        outdoor = log.frame["outdoor_c"].dropna()
        secs = (frame.index - outdoor.index[0]).total_seconds().to_numpy()
        at = np.interp((outdoor.index - outdoor.index[0]).total_seconds().to_numpy(), secs,
                       frame["temp_air"].to_numpy())
        diff = at - outdoor.to_numpy()
        figures = {"outdoor_rms_k": float(np.sqrt(np.mean(diff**2))), "outdoor_bias_k": float(np.mean(diff))}
        if figures["outdoor_rms_k"] > OUTDOOR_MISMATCH_K:
            warnings.append(f"The weather's outdoor air differs from the log's outdoor readings by "
                            f"{figures['outdoor_rms_k']:.1f} K RMS (bias {figures['outdoor_bias_k']:+.1f} K): the "
                            f"weather may not be the logged days' or place's. Check the weather file and the "
                            f"logger's clock, or use --weather log.")
    return warnings, figures


__all__ = ["FROM_LOG", "check_coverage", "load_fit_weather", "weather_checks", "weather_from_log",
           "weather_offset"]
