"""Turn a weather frame and a scenario into forcing arrays on one regular time base.

The result, :class:`Forcing`, holds for each weather instant the outdoor air temperature, the sky
temperature, the wind speed and the irradiance on each roof plane; between instants the network sees
them linearly interpolated.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from atticsim.forcing.sky import sky_temperature
from atticsim.forcing.solar import plane_irradiance, solar_position
from atticsim.io.weather_frame import data_span


@dataclass
class Forcing:
    """Forcing channels sampled at regular instants.

    Attributes
    ----------
    times : pandas.DatetimeIndex
        Sample instants (tz-aware).
    step : float
        Sample step [s].
    values : numpy.ndarray
        Shape (channels, n): temp_out [degC], temp_sky_k [K], wind_speed [m/s], temp_dew [degC], pressure
        [Pa], temp_room [degC] (the rooms below the ceiling), then one plane-of-array irradiance row per
        plane [W/m^2].
    channels : list of str
        Channel names.
    notes : list of str
        What was decided while building (site used, sky model).
    """

    times: pd.DatetimeIndex
    step: float
    values: np.ndarray
    channels: list[str]
    notes: list[str]

    def seconds(self) -> np.ndarray:
        """Sample instants as seconds from the first sample."""
        return np.arange(self.values.shape[1]) * self.step

    def _position(self, t: float) -> tuple[int, float]:
        """(sample index, fraction of the way to the next sample) at t [s from the first sample], clamped
        at the ends (fraction 0 there)."""
        x = t / self.step
        i = int(x)
        n = self.values.shape[1]
        if i >= n - 1:
            return n - 1, 0.0
        if i < 0:
            return 0, 0.0
        return i, x - i

    def at(self, t: float) -> np.ndarray:
        """Channels at time t [s from the first sample], linearly interpolated (clamped at the ends)."""
        i, frac = self._position(t)
        v = self.values
        if frac == 0.0:
            return v[:, i].copy()
        return v[:, i] + frac * (v[:, i + 1] - v[:, i])

    def value(self, channel: int, t: float) -> float:
        """One channel at time t [s from the first sample], as :meth:`at` gives it (a float)."""
        i, frac = self._position(t)
        row = self.values[channel]
        if frac == 0.0:
            return float(row[i])
        return float(row[i] + frac * (row[i + 1] - row[i]))

    def sample(self, t: np.ndarray, channels: int | None = None) -> np.ndarray:
        """Channels (all, or the first ``channels``) at many times t [s], shape (channels, len(t))."""
        grid = self.seconds()
        return np.vstack([np.interp(t, grid, row) for row in self.values[:channels]])


def _regular_step(times: pd.DatetimeIndex, source: str) -> float:
    steps = np.asarray((times[1:] - times[:-1]).total_seconds(), dtype=float)
    if len(steps) == 0:
        raise ValueError(f"{source}: time: need at least two weather samples in the period")
    if not np.allclose(steps, steps[0]):
        raise ValueError(f"{source}: time: weather samples must be evenly spaced")
    return float(steps[0])


def period_bounds(frame: pd.DataFrame, start: str | None, end: str | None, source: str, meta=None):
    """Resolve a period from ISO strings in the weather's time zone.

    A date without a time for ``end`` means the whole of that day (end inclusive).  The period must lie
    within the data (:func:`atticsim.io.weather_frame.data_span`: a whole typical year of hourly records
    stamped at mid-hour spans Jan 1 00:00 to Dec 31 24:00); without dates it is all of the data.
    Returns (start, end) tz-aware timestamps.
    """
    tz = frame.index.tz
    first, last = data_span(frame, meta)

    def parse(text, is_end):
        try:
            ts = pd.Timestamp(text)
        except (ValueError, TypeError):
            raise ValueError(f"{source}: {'end' if is_end else 'start'}: not a date or time: {text!r}") from None
        date_only = len(str(text).strip()) <= 10
        ts = ts.tz_localize(tz) if ts.tzinfo is None else ts.tz_convert(tz)
        if is_end and date_only:
            ts += pd.Timedelta("1D")
        return ts

    t0 = parse(start, False) if start else first
    t1 = parse(end, True) if end else last
    if not t1 > t0:
        raise ValueError(f"{source}: end: the period must end after it starts ({t0} .. {t1})")
    if t0 < first or t1 > last:
        raise ValueError(f"{source}: period {t0} .. {t1} is outside the weather data ({first} .. {last})")
    return t0, t1


MONTHS = ("jan", "feb", "mar", "apr", "may", "jun", "jul", "aug", "sep", "oct", "nov", "dec")
FULL_MONTHS = ("january", "february", "march", "april", "may", "june", "july", "august", "september",
               "october", "november", "december")
#: Named seasons (northern-hemisphere meteorological seasons; "cooling" is our May-September).
SEASONS = {"summer": "jun-aug", "autumn": "sep-nov", "fall": "sep-nov", "winter": "dec-feb",
           "spring": "mar-may", "cooling": "may-sep", "year": "jan-dec"}


def months_period(text: str, year: int, source: str = "--months"):
    """Start and end dates (ISO, end inclusive) of a month range such as ``"jun-aug"``, ``"7"``,
    ``"jul"`` or a named season (:data:`SEASONS`). A range that wraps the year end (``dec-feb``) starts
    in December of ``year - 1``."""
    spec = SEASONS.get(text.strip().lower(), text.strip().lower())

    def month(m):
        if m.isdigit() and 1 <= int(m) <= 12:
            return int(m)
        if m in MONTHS or m in FULL_MONTHS:
            return (MONTHS.index(m) if m in MONTHS else FULL_MONTHS.index(m)) + 1
        raise ValueError(f"{source}: {text!r} is not a month, a month range like jun-aug, or one of "
                         f"{', '.join(SEASONS)}")

    parts = spec.split("-")
    if len(parts) > 2 or not all(parts):
        raise ValueError(f"{source}: {text!r} is not a month range like jun-aug")
    m0, m1 = month(parts[0]), month(parts[-1])
    y0 = year - 1 if m1 < m0 else year
    start = pd.Timestamp(year=y0, month=m0, day=1)
    end = pd.Timestamp(year=year, month=m1, day=1) + pd.offsets.MonthEnd(0)
    return start.date().isoformat(), end.date().isoformat()


def _hold_ends(part: pd.DataFrame, t0, t1, notes: list) -> pd.DataFrame:
    """Cover a period that starts before the first row or ends after the last by holding that row.

    Hourly typical-year records are stamped at mid-hour, so their data begin half an hour before the
    first stamp and end half an hour after the last; a row one step before (after) with the first (last)
    row's values makes the forcing hold them over that half hour (interpolation between equal samples).
    """
    step = part.index[1] - part.index[0]
    head, tail = part.index[0], part.index[-1]
    pieces = [part]

    def when(ts):
        return ts.strftime("%Y-%m-%d %H:%M")

    if t0 < head:
        row = part.iloc[[0]].copy()
        row.index = pd.DatetimeIndex([head - step], name=part.index.name)
        pieces.insert(0, row)
        notes.append(f"weather held at the first record's values from {when(t0)} to {when(head)} (hourly "
                     f"records are stamped at mid-hour: the data start half a step before the first stamp)")
    if t1 > tail:
        row = part.iloc[[-1]].copy()
        row.index = pd.DatetimeIndex([tail + step], name=part.index.name)
        pieces.append(row)
        notes.append(f"weather held at the last record's values from {when(tail)} to {when(t1)} (hourly "
                     f"records are stamped at mid-hour: the data end half a step after the last stamp)")
    return pd.concat(pieces) if len(pieces) > 1 else part


def build_forcing(frame: pd.DataFrame, meta, scenario, start=None, end=None, source="weather") -> Forcing:
    """Forcing for the scenario's roof over [start, end] from a normalised weather frame.

    Parameters
    ----------
    frame : pandas.DataFrame
        Normalised weather frame (see ``atticsim.io``), tz-aware index.
    meta : object
        Weather metadata with latitude, longitude, altitude (None where the file has no site).
    scenario : Scenario
        The validated scenario (roof planes, site, sky model).
    start, end : pandas.Timestamp, optional
        Period; default all of the data (:func:`atticsim.io.weather_frame.data_span`).
    source : str
        Name of the weather source for messages.
    """
    first, last = data_span(frame, meta)
    t0 = start if start is not None else first
    t1 = end if end is not None else last
    # Keep one sample on each side so the period is covered by interpolation.
    idx = frame.index
    i0 = max(int(idx.searchsorted(t0, side="right")) - 1, 0)
    i1 = min(int(idx.searchsorted(t1, side="left")), len(idx) - 1)
    part = frame.iloc[i0:i1 + 1]
    step = _regular_step(part.index, source)
    notes = []
    part = _hold_ends(part, t0, t1, notes)

    site = scenario.site
    lat, lon, alt = site.latitude, site.longitude, site.altitude
    if getattr(meta, "latitude", None) is not None and getattr(meta, "longitude", None) is not None:
        if abs(meta.latitude - lat) > 0.01 or abs(meta.longitude - lon) > 0.01:
            notes.append(f"sun computed for the weather file's site ({meta.latitude:.3f} N, "
                         f"{meta.longitude:.3f} E), not the scenario's ({lat:.3f} N, {lon:.3f} E)")
        lat, lon = meta.latitude, meta.longitude
        alt = meta.altitude if getattr(meta, "altitude", None) is not None else alt

    temp = part["temp_air"].to_numpy(float)
    dew = part["temp_dew"].to_numpy(float)
    t_sky, sky_notes = sky_temperature(part, scenario.weather.sky_model, lat, lon, alt,
                                       source_format=getattr(meta, "source_format", None), context=frame)
    notes += sky_notes

    pressure = part["pressure"].to_numpy(float) if "pressure" in part else None
    solpos = solar_position(part.index, lat, lon, alt, pressure=pressure, temperature=temp)
    poa = plane_irradiance(part.index, part["ghi"], part["dni"], part["dhi"], lat, lon,
                           [(p.tilt, p.azimuth) for p in scenario.roof.planes], altitude=alt,
                           albedo=site.ground_albedo, solpos=solpos)
    # station pressure (the weather file's, else the standard atmosphere at the site: atticsim.io fills it)
    pressure = part["pressure"].to_numpy(float)
    # the rooms below: held at the cooling setpoint
    temp_room = np.full(len(part), scenario.ceiling.room_temperature)
    values = np.vstack([temp, t_sky, part["wind_speed"].to_numpy(float), dew, pressure, temp_room, poa])
    channels = (["temp_out", "temp_sky_k", "wind_speed", "temp_dew", "pressure", "temp_room"]
                + [f"poa_{p.name}" for p in scenario.roof.planes])
    return Forcing(times=part.index, step=step, values=values, channels=channels, notes=notes)
