"""Synthetic weather for INVENTED demo sites: clear-sky sun, a daily temperature cycle, random clouds.

This makes plausible but fictional weather for demonstrations and tests of the machinery. It is
not a climate record of any real place. Ingredients:

- clear-sky irradiance: Ineichen-Perez model (Ineichen & Perez 2002) via ``pvlib``;
- cloud attenuation of GHI: Kasten & Czeplak (1980), GHI = GHI_clear (1 - 0.75 n^3.4);
- beam/diffuse split of cloudy GHI: Erbs, Klein & Duffie (1982) via ``pvlib.irradiance.erbs``;
- hourly dry-bulb from daily maximum and range with the ASHRAE fraction-of-daily-range profile
  (ASHRAE Handbook Fundamentals, climatic design information chapter, table "fraction of daily
  temperature range"; values typed from memory);
- relative humidity from dew point by the Magnus formula and pressure from the ISO 2533 standard
  atmosphere (both from :mod:`atticsim.io.weather_frame`).
"""

from __future__ import annotations

from dataclasses import dataclass
from types import SimpleNamespace

import numpy as np
import pandas as pd

from atticsim.air import relative_humidity_from_dew_point, standard_atmosphere_pressure

#: ASHRAE fraction of daily temperature range for hours 1..24 of local standard time
#: (T = T_max - f * range). ASHRAE Handbook Fundamentals, climatic design chapter (from memory).
ASHRAE_DAILY_RANGE_FRACTION = np.array([
    0.88, 0.92, 0.95, 0.98, 1.00, 0.98, 0.91, 0.74, 0.55, 0.38, 0.23, 0.13,
    0.05, 0.00, 0.00, 0.06, 0.14, 0.24, 0.39, 0.50, 0.59, 0.68, 0.75, 0.82])


@dataclass(frozen=True)
class DemoClimate:
    """Parameters of an invented demo site's climate (all SI)."""

    name: str
    latitude: float          # deg N
    longitude: float         # deg E
    altitude: float          # m
    utc_offset: float        # h
    t_max_summer: float      # degC, mean daily maximum at the warmest time of year
    t_max_winter: float      # degC, mean daily maximum at the coldest time of year
    daily_range: float       # K, clear-day range
    dew_summer: float        # degC
    dew_winter: float        # degC
    wind_mean: float         # m/s at 10 m
    linke_turbidity: float   # -
    cloudy_day_chance: float  # 0-1
    note: str


#: Invented demo sites. The names and places are fictional; the climates are plausible, not measured.
DEMO_CLIMATES = {
    "saltmarsh-point": DemoClimate(
        name="Saltmarsh Point (invented hot-humid coastal site)", latitude=29.3, longitude=-94.8,
        altitude=5.0, utc_offset=-6.0, t_max_summer=33.5, t_max_winter=17.0, daily_range=8.0,
        dew_summer=24.0, dew_winter=8.0, wind_mean=4.0, linke_turbidity=3.8, cloudy_day_chance=0.35,
        note="invented hot-humid coastal climate for demonstrations"),
    "dry-wash-flats": DemoClimate(
        name="Dry Wash Flats (invented hot-dry inland site)", latitude=33.4, longitude=-112.1,
        altitude=340.0, utc_offset=-7.0, t_max_summer=41.0, t_max_winter=19.0, daily_range=14.0,
        dew_summer=8.0, dew_winter=-2.0, wind_mean=3.0, linke_turbidity=3.0, cloudy_day_chance=0.1,
        note="invented hot-dry desert climate for demonstrations"),
}


def daily_range_fraction(hour):
    """ASHRAE fraction of the daily range at local standard hour(s) [0-24], linear between the table's
    hourly values (hour 0 = hour 24)."""
    table = np.concatenate([[ASHRAE_DAILY_RANGE_FRACTION[-1]], ASHRAE_DAILY_RANGE_FRACTION])
    return np.interp(hour, np.arange(0, 25), table)


def site_tz(utc_offset: float) -> str:
    """The IANA fixed-offset zone name for a whole-hour UTC offset (Etc/GMT signs are inverted)."""
    if utc_offset != int(utc_offset):
        raise ValueError(f"utc_offset: synthetic weather needs a whole-hour UTC offset (got {utc_offset:g})")
    return f"Etc/GMT{-int(utc_offset):+d}"


def clear_sky(times, latitude, longitude, altitude, linke_turbidity=None):
    """Clear-sky GHI, DNI, DHI [W/m^2] and the sun's position at tz-aware instants.

    Ineichen-Perez clear-sky model (Ineichen & Perez 2002) via pvlib; the Linke turbidity defaults to
    pvlib's monthly climatology for the site (Remund et al. 2003) when not given.
    """
    import pvlib

    if times.tz is None:
        raise ValueError("clear sky: the instants need a time zone (site standard time with its UTC offset)")
    # The instants carry their own offset; the Location's zone would only localise naive ones (and
    # pvlib's zone lookup refuses fixed offsets such as UTC-05:00 that weather files carry).
    loc = pvlib.location.Location(latitude, longitude, tz="UTC", altitude=altitude)
    solpos = loc.get_solarposition(times)
    kw = {} if linke_turbidity is None else {"linke_turbidity": linke_turbidity}
    clear = loc.get_clearsky(times, model="ineichen", solar_position=solpos, **kw)
    return clear, solpos


def synthetic_weather(climate: DemoClimate, start: str, days: int, seed: int = 1, step_minutes: int = 60):
    """Generate invented weather for a demo climate.

    Parameters
    ----------
    climate : DemoClimate
        The invented site.
    start : str
        First local day, ISO date.
    days : int
        Number of days.
    seed : int
        Random seed (the same seed gives the same weather).
    step_minutes : int
        Sample step [min].

    Returns
    -------
    frame : pandas.DataFrame
        Normalised weather frame (columns temp_air, temp_dew, relative_humidity, wind_speed,
        wind_direction, ghi, dni, dhi, pressure, sky_ir), values instantaneous at each stamp.
    meta : types.SimpleNamespace
        name, latitude, longitude, altitude, utc_offset, source_format="synthetic", invented=True.
    """
    import pvlib

    rng = np.random.default_rng(seed)
    tz = site_tz(climate.utc_offset)
    t0 = pd.Timestamp(start).tz_localize(tz)
    n = int(days * 24 * 60 / step_minutes) + 1
    times = pd.date_range(t0, periods=n, freq=f"{step_minutes}min")

    # Per-day random state: cloud cover n (0-1) and anomalies.
    n_days = days + 1
    cloudy = rng.random(n_days) < climate.cloudy_day_chance
    cover = np.where(cloudy, rng.uniform(0.3, 1.0, n_days), rng.uniform(0.0, 0.2, n_days))
    t_anom = rng.normal(0.0, 1.2, n_days)
    dew_anom = rng.normal(0.0, 1.0, n_days)
    wind_fac = rng.lognormal(0.0, 0.3, n_days)

    day_index = ((times - t0) // pd.Timedelta("1D")).to_numpy().astype(int)
    doy = times.day_of_year.to_numpy()
    # Seasonal cycle peaking around 20 July (day 201) in the northern hemisphere (our choice).
    season = np.cos(2.0 * np.pi * (doy - 201) / 365.25)
    if climate.latitude < 0:
        season = -season
    t_max = 0.5 * (climate.t_max_summer + climate.t_max_winter) + 0.5 * (
        climate.t_max_summer - climate.t_max_winter) * season
    c = cover[day_index]
    t_max = t_max - 3.0 * c + t_anom[day_index]
    drange = climate.daily_range * (1.0 - 0.5 * c)
    hour = times.hour.to_numpy() + times.minute.to_numpy() / 60.0
    temp_air = t_max - daily_range_fraction(hour) * drange
    dew = 0.5 * (climate.dew_summer + climate.dew_winter) + 0.5 * (
        climate.dew_summer - climate.dew_winter) * season + dew_anom[day_index]
    temp_dew = np.minimum(dew, temp_air - 0.5)

    clear, solpos = clear_sky(times, climate.latitude, climate.longitude, climate.altitude,
                              climate.linke_turbidity)
    ghi = clear["ghi"].to_numpy() * (1.0 - 0.75 * c**3.4)  # Kasten & Czeplak (1980)
    split = pvlib.irradiance.erbs(ghi, solpos["zenith"].to_numpy(), times)
    dni = np.nan_to_num(np.asarray(split["dni"], float))
    dhi = np.nan_to_num(np.asarray(split["dhi"], float))
    clear_day = c < 0.2
    dni = np.where(clear_day, clear["dni"].to_numpy(), dni)
    dhi = np.where(clear_day, clear["dhi"].to_numpy(), dhi)

    # Wind: afternoon maximum (common practice, no source) scaled by a daily random factor.
    wind = climate.wind_mean * wind_fac[day_index] * (1.0 + 0.4 * np.sin(2.0 * np.pi * (hour - 9.0) / 24.0))
    wind = np.maximum(wind, 0.3)

    # Rounded to the resolution weather files carry, so the CSV files stay small.
    temp_air, temp_dew, wind = np.round(temp_air, 2), np.round(temp_dew, 2), np.round(wind, 2)
    frame = pd.DataFrame({
        "temp_air": temp_air,
        "temp_dew": temp_dew,
        "relative_humidity": np.round(relative_humidity_from_dew_point(temp_air, temp_dew), 2),
        "wind_speed": wind,
        "wind_direction": np.nan,
        "ghi": np.round(ghi, 1),
        "dni": np.round(dni, 1),
        "dhi": np.round(dhi, 1),
        "pressure": np.round(standard_atmosphere_pressure(climate.altitude), 0),
        "sky_ir": np.nan,
    }, index=pd.DatetimeIndex(times, name="time"))
    meta = SimpleNamespace(name=climate.name, latitude=climate.latitude, longitude=climate.longitude,
                           altitude=climate.altitude, utc_offset=climate.utc_offset,
                           source_format="synthetic", invented=True, path=None)
    return frame, meta


def demo_weather(name: str, year: int = 2025, seed: int = 1):
    """A full invented year of hourly weather for a named demo site (see :data:`DEMO_CLIMATES`)."""
    if name not in DEMO_CLIMATES:
        raise ValueError(f"unknown demo weather {name!r}; known: {', '.join(sorted(DEMO_CLIMATES))}")
    days = 366 if pd.Timestamp(year=year, month=12, day=31).day_of_year == 366 else 365
    return synthetic_weather(DEMO_CLIMATES[name], f"{year}-01-01", days, seed=seed)
