"""Sky long-wave models: effective sky temperature for the roof's long-wave exchange.

All functions take and return SI values and accept numpy arrays.
"""

from __future__ import annotations

import numpy as np

from atticsim.constants import KELVIN, SIGMA


def sky_emissivity_berdahl_martin(temp_dew, hour=None, opaque_cloud=None):
    """Clear-sky (optionally cloudy) effective emissivity of the sky.

    Berdahl, P. & Martin, M. (1984), "Emissivity of clear skies", Solar Energy 32(5) 663-664:
    eps_clear = 0.711 + 0.56 (T_dp/100) + 0.73 (T_dp/100)^2 with T_dp the dew point in degC,
    plus the diurnal term 0.013 cos(2 pi t/24) (t = hour from midnight), and the cloud correction
    eps = eps_clear + (1 - eps_clear) 0.9 n_opaque (Walton 1983, NBSIR 83-2655, from memory).

    Parameters
    ----------
    temp_dew : array_like
        Dew-point temperature [degC].
    hour : array_like, optional
        Local solar hour [h]; adds the diurnal term when given.
    opaque_cloud : array_like, optional
        Opaque sky cover fraction [0-1].

    Returns
    -------
    numpy.ndarray
        Sky emissivity [-].
    """
    x = np.asarray(temp_dew, dtype=float) / 100.0
    eps = 0.711 + 0.56 * x + 0.73 * x**2
    if hour is not None:
        eps = eps + 0.013 * np.cos(2.0 * np.pi * np.asarray(hour, dtype=float) / 24.0)
    if opaque_cloud is not None:
        n = np.clip(np.asarray(opaque_cloud, dtype=float), 0.0, 1.0)
        eps = eps + (1.0 - eps) * 0.9 * n
    return np.clip(eps, 0.0, 1.0)


def sky_temperature_berdahl_martin(temp_air, temp_dew, hour=None, opaque_cloud=None):
    """Effective sky temperature T_sky = T_a eps^(1/4) [K] (Berdahl & Martin 1984).

    Parameters
    ----------
    temp_air : array_like
        Dry-bulb temperature [degC].
    temp_dew : array_like
        Dew-point temperature [degC].

    Returns
    -------
    numpy.ndarray
        Sky temperature [K].
    """
    eps = sky_emissivity_berdahl_martin(temp_dew, hour, opaque_cloud)
    return (np.asarray(temp_air, dtype=float) + KELVIN) * eps**0.25


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
