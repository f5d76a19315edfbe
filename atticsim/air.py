"""Moist-air physics shared by every part of atticsim: density, saturation pressure, dew point, humidity
ratio, latent heat and the standard atmosphere.

Plain arithmetic on floats or numpy arrays (SI; temperatures in degC unless a name says K), each relation
written once here with its source; the compiled network compiles the same functions
(:func:`atticsim.network.kernel.compiled`).
"""

from __future__ import annotations

import numpy as np

from atticsim.constants import GRAVITY, KELVIN, P_STANDARD, R_DRY_AIR

# Magnus form over liquid water, Alduchov & Eskridge (1996), J. Appl. Meteor. 35, 601-609,
# eq. 21 ("AERK" coefficients): e_s = 610.94 Pa * exp(17.625 t / (t + 243.04 degC)).
MAGNUS_C_PA = 610.94
MAGNUS_A = 17.625
MAGNUS_B_C = 243.04

# ISO 2533 standard atmosphere, troposphere (0..11 km geopotential altitude).
ISO_T0_K = 288.15  # sea-level temperature [K]
ISO_LAPSE_K_M = 0.0065  # temperature lapse rate [K/m]

#: Latent heat of vaporisation at 0 degC [J/kg] (ASHRAE Handbook Fundamentals, psychrometrics chapter).
H_FG = 2501e3
#: Ratio of the molar masses of water vapour and dry air (ASHRAE Handbook Fundamentals, psychrometrics
#: chapter, eq. 20).
MOLAR_MASS_RATIO = 0.621945


def air_density(temp_c, pressure=P_STANDARD):
    """Dry-air density rho = p / (R_d T) [kg/m^3] (ideal gas; R_d = 287.055 J/kgK, ISO 2533).

    Parameters
    ----------
    temp_c : float or numpy.ndarray
        Air temperature [degC].
    pressure : float or numpy.ndarray
        Air pressure [Pa].
    """
    return pressure / (R_DRY_AIR * (temp_c + KELVIN))


def saturation_vapour_pressure(temp):
    """Saturation vapour pressure over liquid water (Magnus form) [Pa].

    Parameters
    ----------
    temp : float or numpy.ndarray
        Temperature [degC] (a number or an array, not a list).

    References
    ----------
    Alduchov, O. A. and Eskridge, R. E. (1996), Improved Magnus form approximation of
    saturation vapor pressure, J. Appl. Meteor. 35, 601-609, eq. 21.
    """
    return MAGNUS_C_PA * np.exp(MAGNUS_A * temp / (temp + MAGNUS_B_C))


def dew_point_from_relative_humidity(temp_air, relative_humidity):
    """Dew-point temperature [degC] from dry-bulb temperature [degC] and relative humidity over liquid
    water [%] (> 0): the inverse of Alduchov & Eskridge (1996) eq. 21 with e = RH/100 * e_s(t)."""
    t = np.asarray(temp_air, dtype=float)
    rh = np.asarray(relative_humidity, dtype=float)
    gamma = np.log(rh / 100.0) + MAGNUS_A * t / (t + MAGNUS_B_C)
    return MAGNUS_B_C * gamma / (MAGNUS_A - gamma)


def relative_humidity_from_dew_point(temp_air, temp_dew):
    """Relative humidity over liquid water [%] from dry-bulb and dew-point temperature [degC]:
    RH = e_s(t_dew) / e_s(t_air) (Alduchov & Eskridge 1996, eq. 21)."""
    return 100.0 * saturation_vapour_pressure(temp_dew) / saturation_vapour_pressure(temp_air)


def humidity_ratio(temp_dew, pressure):
    """Humidity ratio W = 0.621945 p_w / (p - p_w) [kg/kg], p_w the saturation pressure at the dew point
    (ASHRAE Handbook Fundamentals, psychrometrics chapter, eq. 20 and 36)."""
    p_w = saturation_vapour_pressure(temp_dew)
    return MOLAR_MASS_RATIO * p_w / (pressure - p_w)


def humidity_ratio_from_rh(temp, relative_humidity, pressure):
    """Humidity ratio [kg/kg] at a temperature [degC] and relative humidity [%] (same source)."""
    p_w = relative_humidity / 100.0 * saturation_vapour_pressure(temp)
    return MOLAR_MASS_RATIO * p_w / (pressure - p_w)


def standard_atmosphere_pressure(altitude):
    """Air pressure of the ISO standard atmosphere at an altitude (troposphere) [Pa].

    Parameters
    ----------
    altitude : float or numpy.ndarray
        Altitude above mean sea level [m], -500..11000 (the site elevation is used as
        geopotential altitude; the difference is below 2 m, i.e. < 25 Pa, up to 3 km).

    References
    ----------
    ISO 2533:1975 Standard Atmosphere, barometric formula for a layer with constant
    lapse rate: p = p0 (1 - L h / T0)^(g0 / (R L)), L = 0.0065 K/m, T0 = 288.15 K.
    """
    h = np.asarray(altitude, dtype=float)
    if np.any(~np.isfinite(h)) or np.any(h < -500.0) or np.any(h > 11_000.0):
        raise ValueError(f"altitude: {altitude!r} m is outside -500..11000 m (ISO 2533 troposphere)")
    return P_STANDARD * (1.0 - ISO_LAPSE_K_M * h / ISO_T0_K) ** (GRAVITY / (R_DRY_AIR * ISO_LAPSE_K_M))
