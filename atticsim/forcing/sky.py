"""Sky long-wave models: effective sky temperature for the roof's long-wave exchange, clear and cloudy.

The sky is a black body at T_sky = T_a eps^(1/4) (T_a the dry-bulb [K], eps the sky's effective
emissivity), or, where a weather file gives it, at (IR / sigma)^(1/4) from its measured or derived
downward long-wave IR.  Three steps make eps:

1. a clear-sky emissivity from the screen-level air: Berdahl & Martin (1984), from the dew point, or
   Swinbank (1963), from the dry-bulb (``weather.sky_model``);
2. the cloud amount: the file's opaque sky cover (total where opaque is missing), or, where the file
   has no cover, a cloud fraction estimated from the clearness index (Crawford & Duchon 1999);
3. the cloud correction that belongs to that cloud amount: Clark & Allen's (1978) factor for an
   observed opaque cover, Crawford & Duchon's (1999) mixing for their clearness-index cloud fraction.

The same cloud correction applies to either clear-sky model (both give a clear-sky emissivity; Swinbank's
is (T_sky / T_a)^4 = 0.0552^4 T_a^2).  A design day is clear by definition: no cloud correction.

All physics functions take and return SI values (temperatures in degC where they say so) and accept
numpy arrays.
"""

from __future__ import annotations

import numpy as np

from atticsim.constants import KELVIN, SIGMA

#: Below this solar elevation the clearness index is not used [deg]: the ratio of two small irradiances
#: is dominated by the hourly mean's timing, horizon and clear-sky model errors (common practice, no source).
MIN_CLEARNESS_ELEVATION_DEG = 10.0

#: Formats whose rows are a day of clear design weather: no clouds by definition.
CLEAR_BY_DEFINITION = ("design-day",)


# --------------------------------------------------------------------------- clear sky


def sky_emissivity_berdahl_martin(temp_dew, hour=None):
    """Clear-sky effective emissivity of the sky from the dew point.

    Berdahl, P. & Martin, M. (1984), "Emissivity of clear skies", Solar Energy 32(5) 663-664:
    eps_clear = 0.711 + 0.56 (T_dp/100) + 0.73 (T_dp/100)^2 with T_dp the dew point in degC,
    plus the diurnal term 0.013 cos(2 pi t/24) (t = hour from midnight) when ``hour`` is given.

    Parameters
    ----------
    temp_dew : array_like
        Dew-point temperature [degC].
    hour : array_like, optional
        Local solar hour [h]; adds the diurnal term when given.

    Returns
    -------
    numpy.ndarray
        Clear-sky emissivity [-], within 0..1.
    """
    x = np.asarray(temp_dew, dtype=float) / 100.0
    eps = 0.711 + 0.56 * x + 0.73 * x**2
    if hour is not None:
        eps = eps + 0.013 * np.cos(2.0 * np.pi * np.asarray(hour, dtype=float) / 24.0)
    return np.clip(eps, 0.0, 1.0)


def sky_temperature_berdahl_martin(temp_air, temp_dew, hour=None):
    """Clear-sky temperature T_sky = T_a eps^(1/4) [K] with Berdahl & Martin's (1984) emissivity.

    Parameters
    ----------
    temp_air : array_like
        Dry-bulb temperature [degC].
    temp_dew : array_like
        Dew-point temperature [degC].
    hour : array_like, optional
        Local solar hour [h] (diurnal term).

    Returns
    -------
    numpy.ndarray
        Sky temperature [K].
    """
    return sky_temperature_from_emissivity(temp_air, sky_emissivity_berdahl_martin(temp_dew, hour))


def sky_temperature_swinbank(temp_air):
    """Swinbank (1963), Q. J. R. Meteorol. Soc. 89: T_sky = 0.0552 T_a^1.5, both in K.

    Parameters
    ----------
    temp_air : array_like
        Dry-bulb temperature [degC].

    Returns
    -------
    numpy.ndarray
        Sky temperature [K].
    """
    return 0.0552 * (np.asarray(temp_air, dtype=float) + KELVIN) ** 1.5


def sky_emissivity_swinbank(temp_air):
    """Swinbank's (1963) clear sky as an emissivity: (T_sky/T_a)^4 = 0.0552^4 T_a^2 (T_a in K).

    Parameters
    ----------
    temp_air : array_like
        Dry-bulb temperature [degC].

    Returns
    -------
    numpy.ndarray
        Clear-sky emissivity [-], within 0..1.
    """
    t_a = np.asarray(temp_air, dtype=float) + KELVIN
    return np.clip((sky_temperature_swinbank(temp_air) / t_a) ** 4, 0.0, 1.0)


def sky_temperature_from_emissivity(temp_air, emissivity):
    """Black-body sky temperature T_sky = T_a eps^(1/4) [K] (definition of the effective emissivity).

    Parameters
    ----------
    temp_air : array_like
        Dry-bulb temperature [degC].
    emissivity : array_like
        Effective sky emissivity [-].

    Returns
    -------
    numpy.ndarray
        Sky temperature [K].
    """
    return (np.asarray(temp_air, dtype=float) + KELVIN) * np.asarray(emissivity, dtype=float) ** 0.25


def sky_temperature_from_ir(sky_ir):
    """Sky temperature from measured downward long-wave irradiance on a horizontal plane.

    Black-body equivalent T_sky = (IR / sigma)^(1/4) (definition; EPW "horizontal infrared
    radiation intensity" is used this way by building simulation practice).

    Parameters
    ----------
    sky_ir : array_like
        Downward long-wave irradiance [W/m^2].

    Returns
    -------
    numpy.ndarray
        Sky temperature [K].
    """
    return (np.asarray(sky_ir, dtype=float) / SIGMA) ** 0.25


# --------------------------------------------------------------------------- clouds


def cloud_factor_clark_allen(opaque_cover):
    """Clark & Allen's cloud factor on the clear-sky emissivity, from the opaque sky cover.

    Clark, G. & Allen, C. (1978), "The estimation of atmospheric radiation for clear and cloudy
    skies", Proc. 2nd National Passive Solar Conference (AS/ISES), Philadelphia, 675-678:
    eps = eps_clear (1 + 0.0224 N - 0.0035 N^2 + 0.00028 N^3), N the opaque sky cover in tenths.
    The form and the three coefficients are from memory and agree with an independent open-source
    implementation of the same correction read for this check; the proceedings themselves were not
    seen.  The factor rises monotonically from 1 (clear) to 1.154 (overcast): its slope
    0.0224 - 0.007 N + 0.00084 N^2 has no real root.

    Parameters
    ----------
    opaque_cover : array_like
        Opaque sky cover, fraction of the sky dome [0-1] (clipped to 0..1).

    Returns
    -------
    numpy.ndarray
        Factor on the clear-sky emissivity [-].
    """
    n = 10.0 * np.clip(np.asarray(opaque_cover, dtype=float), 0.0, 1.0)
    return 1.0 + 0.0224 * n - 0.0035 * n**2 + 0.00028 * n**3


def cloudy_emissivity_clark_allen(clear_emissivity, opaque_cover):
    """Cloudy-sky emissivity from an observed opaque sky cover (Clark & Allen 1978).

    eps = eps_clear F(N) (see :func:`cloud_factor_clark_allen`), held at most 1: an overcast sky in
    humid air would otherwise exceed a black body at the screen temperature (the cap: common practice,
    no source).

    Parameters
    ----------
    clear_emissivity : array_like
        Clear-sky emissivity [-].
    opaque_cover : array_like
        Opaque sky cover [0-1].

    Returns
    -------
    numpy.ndarray
        Sky emissivity [-].
    """
    eps = np.asarray(clear_emissivity, dtype=float) * cloud_factor_clark_allen(opaque_cover)
    return np.clip(eps, 0.0, 1.0)


def cloud_fraction_crawford_duchon(ghi, ghi_clear):
    """Cloud fraction from the clearness index, clf = 1 - s with s = GHI / GHI_clear.

    Crawford, T. M. & Duchon, C. E. (1999), "An improved parameterization for estimating effective
    atmospheric emissivity for use in calculating daytime downwelling longwave radiation",
    J. Appl. Meteor. 38, 474-480 (s: measured over clear-sky solar irradiance; their clear-sky model is
    replaced here by Ineichen's).  The forms clf = 1 - s and eps = clf + (1 - clf) eps_clear are from
    memory and agree with an independent open-source compilation of long-wave parameterisations read for
    this check; the paper itself was not seen.  s is clipped to 0..1 (cloud enhancement gives s > 1 for
    minutes; it means no cloud here).  Daytime only: see :func:`fill_unreliable` for the night.

    Parameters
    ----------
    ghi : array_like
        Measured global horizontal irradiance [W/m^2].
    ghi_clear : array_like
        Clear-sky global horizontal irradiance at the same instants [W/m^2], > 0.

    Returns
    -------
    numpy.ndarray
        Cloud fraction [0-1].
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        s = np.asarray(ghi, dtype=float) / np.asarray(ghi_clear, dtype=float)
    return 1.0 - np.clip(s, 0.0, 1.0)


def cloudy_emissivity_crawford_duchon(clear_emissivity, cloud_fraction):
    """Cloudy-sky emissivity eps = clf + (1 - clf) eps_clear (Crawford & Duchon 1999, J. Appl. Meteor. 38).

    Parameters
    ----------
    clear_emissivity : array_like
        Clear-sky emissivity [-].
    cloud_fraction : array_like
        Cloud fraction from the clearness index [0-1] (clipped to 0..1).

    Returns
    -------
    numpy.ndarray
        Sky emissivity [-].
    """
    clf = np.clip(np.asarray(cloud_fraction, dtype=float), 0.0, 1.0)
    return clf + (1.0 - clf) * np.asarray(clear_emissivity, dtype=float)


def fill_unreliable(seconds, values, reliable):
    """Fill the unreliable samples of a series from the reliable ones around them.

    Linear in time between the last reliable value before a run of unreliable samples and the first
    after it (a night: from the evening's last daytime value to the next morning's first); before the
    first and after the last reliable value, that value is held (common practice, no source).

    Parameters
    ----------
    seconds : array_like
        Sample instants [s], increasing.
    values : array_like
        The series (unreliable entries may be anything, NaN included).
    reliable : array_like of bool
        Which samples to trust; at least one.

    Returns
    -------
    numpy.ndarray
        The series with every unreliable sample replaced.
    """
    seconds = np.asarray(seconds, dtype=float)
    reliable = np.asarray(reliable, dtype=bool)
    values = np.asarray(values, dtype=float)
    return np.interp(seconds, seconds[reliable], values[reliable])


def cloud_fraction_from_clearness(times, ghi, latitude, longitude, altitude,
                                  min_elevation=MIN_CLEARNESS_ELEVATION_DEG):
    """Cloud fraction at every instant from the clearness index of the daylight hours around it.

    Clear-sky GHI from the Ineichen-Perez model (Ineichen & Perez 2002) with pvlib's Linke turbidity
    climatology (:func:`atticsim.forcing.synthetic.clear_sky`); clf = 1 - GHI/GHI_clear where the sun
    is at least ``min_elevation`` high and the GHI is known (:func:`cloud_fraction_crawford_duchon`),
    elsewhere filled by :func:`fill_unreliable` (nights interpolated from evening to morning).

    Parameters
    ----------
    times : pandas.DatetimeIndex
        tz-aware instants at which ``ghi`` applies (for hourly means, the mid-hour stamps).
    ghi : array_like
        Global horizontal irradiance [W/m^2].
    latitude, longitude : float
        Site [deg N, deg E].
    altitude : float
        Site altitude [m].
    min_elevation : float
        Lowest solar elevation at which the clearness index is used [deg].

    Returns
    -------
    clf : numpy.ndarray or None
        Cloud fraction [0-1]; None when no sample is reliable (no sun that high in the span).
    reliable : numpy.ndarray of bool
        The samples the estimate was taken from.
    """
    from atticsim.forcing.synthetic import clear_sky

    clear, solpos = clear_sky(times, latitude, longitude, altitude)
    ghi = np.asarray(ghi, dtype=float)
    ghi_clear = clear["ghi"].to_numpy(dtype=float)
    elevation = solpos["apparent_elevation"].to_numpy(dtype=float)
    reliable = (elevation >= min_elevation) & (ghi_clear > 0.0) & np.isfinite(ghi)
    if not reliable.any():
        return None, reliable
    seconds = (times - times[0]).total_seconds().to_numpy(dtype=float)
    clf = fill_unreliable(seconds, cloud_fraction_crawford_duchon(ghi, ghi_clear), reliable)
    return clf, reliable


# --------------------------------------------------------------------------- the forcing's sky


def _column(frame, name):
    """A frame's column as floats, or all NaN when the frame has no such column."""
    if name in frame:
        return frame[name].to_numpy(dtype=float)
    return np.full(len(frame), np.nan)


def _clearness_cloud_fraction(weather, context, latitude, longitude, altitude):
    """Cloud fraction on ``weather``'s rows from the clearness index of ``context`` (a day either side).

    Returns (clf or None, number of reliable samples used, whether the context widened the rows)."""
    import pandas as pd

    first, last = weather.index[0], weather.index[-1]
    source = weather
    if context is not None and "ghi" in context and len(context) > 1:
        day = pd.Timedelta(days=1)
        window = context.loc[(context.index >= first - day) & (context.index <= last + day)]
        if len(window) > 1:
            source = window
    clf, reliable = cloud_fraction_from_clearness(source.index, source["ghi"].to_numpy(dtype=float),
                                                  latitude, longitude, altitude)
    if clf is None:
        return None, 0, source is not weather
    at = (weather.index - source.index[0]).total_seconds().to_numpy(dtype=float)
    grid = (source.index - source.index[0]).total_seconds().to_numpy(dtype=float)
    return np.interp(at, grid, clf), int(reliable.sum()), source is not weather


def sky_temperature(weather, sky_model, latitude, longitude, altitude, source_format=None, context=None):
    """Sky temperature for every row of a weather frame, and notes naming the sky and cloud sources.

    In order of preference: the file's own long-wave column (``sky_ir``, when it has a value in every
    row); else the clear-sky model ``sky_model`` (``"berdahl-martin"`` or ``"swinbank"``) corrected for
    clouds by (a) the opaque sky cover (total where opaque is missing) with Clark & Allen's factor when
    the frame has cover in every row, (b) nothing for a design day (clear by definition), or (c) the
    clearness-index cloud fraction with Crawford & Duchon's mixing (clear sky when the sun never stands
    10 degrees high in the span).

    Parameters
    ----------
    weather : pandas.DataFrame
        Normalised weather rows (the forcing's samples): ``temp_air``, ``temp_dew``, ``ghi`` and where
        known ``sky_ir``, ``opaque_sky_cover``, ``total_sky_cover`` [SI; covers 0-1].
    sky_model : str
        ``"berdahl-martin"`` or ``"swinbank"``.
    latitude, longitude : float
        Site [deg N, deg E] (clear-sky irradiance for the clearness index).
    altitude : float
        Site altitude [m].
    source_format : str, optional
        The weather's format (``"design-day"`` is clear by definition).
    context : pandas.DataFrame, optional
        A frame holding ``weather``'s instants and more, so that the clearness index of the day before
        and after the rows fills their first and last nights.

    Returns
    -------
    t_sky : numpy.ndarray
        Sky temperature [K].
    notes : list of str
        Which sky and cloud source were used.
    """
    temp = _column(weather, "temp_air")
    sky_ir = _column(weather, "sky_ir")
    if np.all(np.isfinite(sky_ir)):
        return sky_temperature_from_ir(sky_ir), [
            "sky: the weather file's long-wave column (its clouds included); no sky model, no cloud correction"]
    if sky_model == "swinbank":
        eps_clear, sky = sky_emissivity_swinbank(temp), "Swinbank (1963) clear-sky emissivity"
    else:
        eps_clear = sky_emissivity_berdahl_martin(_column(weather, "temp_dew"))
        sky = "Berdahl & Martin (1984) clear-sky emissivity"
    opaque, total = _column(weather, "opaque_sky_cover"), _column(weather, "total_sky_cover")
    cover = np.where(np.isfinite(opaque), opaque, total)
    if source_format in CLEAR_BY_DEFINITION:
        return sky_temperature_from_emissivity(temp, eps_clear), [
            f"sky: {sky}; clouds: none (a design day is clear by definition)"]
    if np.all(np.isfinite(cover)):
        from_total = int(np.count_nonzero(~np.isfinite(opaque)))
        if from_total == 0:
            what = "the file's opaque sky cover"
        elif from_total == len(cover):
            what = "the file's total sky cover (no opaque cover in the file)"
        else:
            what = f"the file's opaque sky cover (total sky cover in {from_total} rows without opaque cover)"
        eps = cloudy_emissivity_clark_allen(eps_clear, cover)
        return sky_temperature_from_emissivity(temp, eps), [
            f"sky: {sky}; clouds: {what}, mean {100.0 * cover.mean():.0f} %, "
            f"{int(np.count_nonzero(cover >= 0.8))} of {len(cover)} rows overcast (8 tenths or more), "
            f"Clark & Allen (1978) cloud factor"]
    clf, used, widened = _clearness_cloud_fraction(weather, context, latitude, longitude, altitude)
    if clf is None:
        return sky_temperature_from_emissivity(temp, eps_clear), [
            f"sky: {sky}; clouds: none known (no sky cover or long-wave in the file, and the sun never "
            f"{MIN_CLEARNESS_ELEVATION_DEG:g} deg high to estimate them from): clear sky"]
    eps = cloudy_emissivity_crawford_duchon(eps_clear, clf)
    around = " and a day either side" if widened else ""
    return sky_temperature_from_emissivity(temp, eps), [
        f"sky: {sky}; clouds: estimated from the clearness index (GHI over Ineichen clear-sky GHI in the "
        f"{used} daylight samples of the period{around} with the sun at least "
        f"{MIN_CLEARNESS_ELEVATION_DEG:g} deg high; nights and low sun interpolated between them), "
        f"Crawford & Duchon (1999), mean cloud fraction {clf.mean():.2f}"]
