"""A clear design day for a site: clear-sky sun and the ASHRAE daily temperature profile.

The day is built from the site (latitude, longitude, altitude, UTC offset), a date, the design maximum
dry-bulb and the daily range:

- dry-bulb T(h) = T_max - f(h) * range, f the fraction-of-daily-range profile (ASHRAE Handbook
  Fundamentals, climatic design information chapter; see :data:`ASHRAE_DAILY_RANGE_FRACTION`);
- clear-sky GHI/DNI/DHI from the Ineichen-Perez model via pvlib (:func:`clear_sky`);
- constant dew point (default: the day's minimum dry-bulb, i.e. saturation at dawn, common practice)
  and constant wind.

The run repeats the day until the attic's response is periodic (see ``atticsim.pipeline.design_day``).
"""

from __future__ import annotations

from types import SimpleNamespace

import numpy as np
import pandas as pd

from atticsim.forcing.synthetic import clear_sky, daily_range_fraction, site_tz
from atticsim.air import relative_humidity_from_dew_point, standard_atmosphere_pressure


def design_day_weather(latitude, longitude, altitude, utc_offset, date, t_max, daily_range, dew_point=None,
                       wind_speed=3.4, linke_turbidity=None, step_minutes=10):
    """Weather for one clear design day (plus the next midnight), values instantaneous at each stamp.

    Parameters
    ----------
    latitude, longitude : float
        Site [deg N, deg E].
    altitude : float
        Site altitude [m].
    utc_offset : float
        Local standard time minus UTC [h] (whole hours).
    date : str
        The day (ISO date).
    t_max : float
        Design maximum dry-bulb [degC].
    daily_range : float
        Mean daily range of dry-bulb [K].
    dew_point : float, optional
        Dew point [degC]; default the day's minimum dry-bulb.
    wind_speed : float
        Wind speed [m/s] (3.4 m/s: ASHRAE's summer design wind for exterior films, from memory).
    linke_turbidity : float, optional
        Linke turbidity; default pvlib's climatology for the site and month.
    step_minutes : int
        Sample step [min].

    Returns
    -------
    (pandas.DataFrame, types.SimpleNamespace)
        Normalised weather frame and its metadata (source_format "design-day").
    """
    if daily_range < 0 or daily_range > 40:
        raise ValueError(f"design day: daily range must be 0-40 K (got {daily_range:g})")
    tz = site_tz(utc_offset)
    t0 = pd.Timestamp(date).tz_localize(tz)
    times = pd.date_range(t0, t0 + pd.Timedelta("1D"), freq=f"{step_minutes}min", name="time")
    hour = np.asarray((times - t0).total_seconds()) / 3600.0 % 24.0
    hour[-1] = 24.0
    temp = t_max - daily_range_fraction(hour) * daily_range
    dew = np.full(len(times), float(temp.min()) if dew_point is None else float(dew_point))
    dew = np.minimum(dew, temp)
    clear, _ = clear_sky(times, latitude, longitude, altitude, linke_turbidity)
    frame = pd.DataFrame({
        "temp_air": temp, "temp_dew": dew, "relative_humidity": relative_humidity_from_dew_point(temp, dew),
        "wind_speed": float(wind_speed), "wind_direction": np.nan,
        "ghi": clear["ghi"].to_numpy(), "dni": clear["dni"].to_numpy(), "dhi": clear["dhi"].to_numpy(),
        "pressure": float(standard_atmosphere_pressure(altitude)), "sky_ir": np.nan,
    }, index=times)
    meta = SimpleNamespace(name=f"clear design day {date} ({latitude:.2f} N, {longitude:.2f} E)",
                           latitude=latitude, longitude=longitude, altitude=altitude, utc_offset=utc_offset,
                           source_format="design-day", invented=False, path=None,
                           notes=[f"clear design day: T_max {t_max:g} degC, daily range {daily_range:g} K, "
                                  f"ASHRAE fraction-of-range profile, Ineichen clear sky"])
    return frame, meta
