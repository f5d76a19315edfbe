"""Sun position and irradiance on each roof plane (pvlib does the solar geometry).

Nothing here writes solar geometry by hand: sun position is NREL's SPA (Reda & Andreas 2003,
NREL/TP-560-34302) as implemented by ``pvlib.solarposition``; plane-of-array irradiance is the
Hay-Davies anisotropic sky model (Hay & Davies 1980) via ``pvlib.irradiance.get_total_irradiance``.
"""

from __future__ import annotations

import numpy as np
import pandas as pd


def solar_position(times: pd.DatetimeIndex, latitude, longitude, altitude=0.0, pressure=None,
                   temperature=12.0, delta_t=None) -> pd.DataFrame:
    """Sun position at the given instants (NREL SPA via pvlib).

    Parameters
    ----------
    times : pandas.DatetimeIndex
        tz-aware instants.
    latitude, longitude : float
        Site [deg N, deg E].
    altitude : float
        Site altitude [m].
    pressure : float or array_like, optional
        Air pressure [Pa] for refraction; default from altitude.
    temperature : float or array_like
        Air temperature [degC] for refraction.
    delta_t : float, optional
        TT - UT1 [s]; default pvlib's estimate for the date.

    Returns
    -------
    pandas.DataFrame
        pvlib columns: apparent_zenith, zenith, azimuth, elevation, ... [deg].
    """
    import pvlib

    extra = {} if delta_t is None else {"delta_t": delta_t}
    return pvlib.solarposition.get_solarposition(times, latitude, longitude, altitude=altitude,
                                                 pressure=pressure, temperature=temperature, **extra)


def plane_irradiance(times: pd.DatetimeIndex, ghi, dni, dhi, latitude, longitude, planes,
                     altitude=0.0, albedo=0.2, solpos: pd.DataFrame | None = None) -> np.ndarray:
    """Total (beam + sky diffuse + ground-reflected) irradiance on each roof plane.

    Parameters
    ----------
    times : pandas.DatetimeIndex
        tz-aware instants at which ghi/dni/dhi apply.
    ghi, dni, dhi : array_like
        Global horizontal, direct normal and diffuse horizontal irradiance [W/m^2].
    latitude, longitude : float
        Site [deg].
    planes : sequence of (tilt, azimuth)
        Plane tilt from horizontal and azimuth clockwise from north [deg].
    altitude : float
        Site altitude [m].
    albedo : float
        Ground solar reflectance [-].
    solpos : pandas.DataFrame, optional
        Precomputed :func:`solar_position`.

    Returns
    -------
    numpy.ndarray
        Plane-of-array global irradiance, shape (n_planes, n_times) [W/m^2], never negative.
    """
    import pvlib

    if solpos is None:
        solpos = solar_position(times, latitude, longitude, altitude)
    dni_extra = pvlib.irradiance.get_extra_radiation(times)
    out = np.empty((len(planes), len(times)))
    for i, (tilt, azimuth) in enumerate(planes):
        poa = pvlib.irradiance.get_total_irradiance(
            tilt, azimuth, solpos["apparent_zenith"], solpos["azimuth"],
            np.asarray(dni, dtype=float), np.asarray(ghi, dtype=float), np.asarray(dhi, dtype=float),
            dni_extra=dni_extra, albedo=albedo, model="haydavies")
        out[i] = np.nan_to_num(np.asarray(poa["poa_global"], dtype=float), nan=0.0)
    return np.clip(out, 0.0, None)
