"""Dry-air transport properties for convection correlations around small sensor bodies.

Plain functions over floats or numpy arrays; temperatures in degC at the interface (as everywhere in
atticsim), converted to kelvin inside. Accepted from 200 to 500 K (-73.15 to 226.85 degC), which covers
the 250-360 K an attic sensor meets and the surface of a hot body in a handbook example; outside that
range the functions raise ValueError. The tests check them against a handbook table at 250-450 K.

Sources
-------
.. [1] U.S. Standard Atmosphere, 1976 (NOAA, NASA, USAF), section 1.3: dynamic viscosity
       mu = beta T^1.5 / (T + S), beta = 1.458e-6 kg/(m s K^0.5), S = 110.4 K; thermal conductivity
       k = 2.64638e-3 T^1.5 / (T + 245.4 * 10^(-12/T)) W/(m K) (from memory).
.. [2] ASHRAE Handbook Fundamentals, psychrometrics chapter: c_p of dry air 1.006 kJ/(kg K)
       (atticsim.constants.CP_AIR; it varies by less than 0.4 % over 250-350 K).
.. [3] Ideal-gas density rho = p / (R_d T), R_d = 287.055 J/(kg K) (ISO 2533), as
       :func:`atticsim.air.air_density`.

The tests compare [1] with the air table of Incropera & DeWitt, Fundamentals of Heat and Mass
Transfer (Table A.4, air at 1 atm); the table's densities sit about 1.3 % below the ideal-gas value,
so its kinematic viscosity is about 1.5 % above ours.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from atticsim.constants import CP_AIR, KELVIN, P_STANDARD
from atticsim.air import air_density

#: Range of air temperatures the property fits are used over [K].
T_MIN_K = 200.0
T_MAX_K = 500.0

_MU_BETA = 1.458e-6      # kg/(m s K^0.5), U.S. Standard Atmosphere 1976 (from memory)
_MU_S = 110.4            # K, Sutherland constant for viscosity, same source
_K_BETA = 2.64638e-3     # W/(m K^1.5), U.S. Standard Atmosphere 1976 (from memory)
_K_S = 245.4             # K, same source


class AirProperties(NamedTuple):
    """Air properties at one temperature and pressure (SI)."""

    conductivity: object        #: thermal conductivity k [W/(m K)]
    viscosity: object           #: dynamic viscosity mu [Pa s]
    kinematic_viscosity: object  #: nu = mu / rho [m^2/s]
    diffusivity: object         #: thermal diffusivity alpha = k / (rho c_p) [m^2/s]
    prandtl: object             #: Pr = c_p mu / k [-]


def _kelvin(temp_c, name="air temperature"):
    """Convert degC to K and check the fit range (floats stay floats, arrays stay arrays)."""
    if isinstance(temp_c, (float, int)):
        t = temp_c + KELVIN
        if not T_MIN_K <= t <= T_MAX_K:   # also rejects NaN
            raise ValueError(f"{name} must lie between {T_MIN_K - KELVIN:.2f} and "
                             f"{T_MAX_K - KELVIN:.2f} degC for the air property fits, got {temp_c!r}")
        return float(t)
    t = np.asarray(temp_c, dtype=float) + KELVIN
    if not np.all((t >= T_MIN_K) & (t <= T_MAX_K)):
        raise ValueError(f"{name} must lie between {T_MIN_K - KELVIN:.2f} and "
                         f"{T_MAX_K - KELVIN:.2f} degC for the air property fits, got {temp_c!r}")
    return t


def _check_pressure(pressure):
    if isinstance(pressure, (float, int)):
        ok = 1.0e4 <= pressure <= 2.0e5
    else:
        p = np.asarray(pressure, dtype=float)
        ok = bool(np.all((p >= 1.0e4) & (p <= 2.0e5)))
    if not ok:
        raise ValueError(f"air pressure must lie between 1e4 and 2e5 Pa, got {pressure!r}")


def _mu_k(t_k):
    """Dynamic viscosity [Pa s] and conductivity [W/(m K)] at t_k [K], no checks."""
    t15 = t_k ** 1.5
    mu = _MU_BETA * t15 / (t_k + _MU_S)                       # US Std. Atmosphere 1976 eq. 51 [1]
    k = _K_BETA * t15 / (t_k + _K_S * 10.0 ** (-12.0 / t_k))  # US Std. Atmosphere 1976 eq. 53 [1]
    return mu, k


def dynamic_viscosity(temp_c):
    """Dynamic viscosity of dry air, Sutherland's law.

    mu = 1.458e-6 T^1.5 / (T + 110.4) (U.S. Standard Atmosphere 1976, eq. 51; from memory).

    Parameters
    ----------
    temp_c : float or array_like
        Air temperature [degC], -73.15 to 226.85.

    Returns
    -------
    float or numpy.ndarray
        Dynamic viscosity [Pa s].
    """
    return _mu_k(_kelvin(temp_c))[0]


def thermal_conductivity(temp_c):
    """Thermal conductivity of dry air.

    k = 2.64638e-3 T^1.5 / (T + 245.4 10^(-12/T)) (U.S. Standard Atmosphere 1976, eq. 53; from memory).

    Parameters
    ----------
    temp_c : float or array_like
        Air temperature [degC], -73.15 to 226.85.

    Returns
    -------
    float or numpy.ndarray
        Thermal conductivity [W/(m K)].
    """
    return _mu_k(_kelvin(temp_c))[1]


def prandtl_number(temp_c):
    """Prandtl number of dry air, Pr = c_p mu / k (definition; c_p = 1006 J/(kg K), ASHRAE).

    Parameters
    ----------
    temp_c : float or array_like
        Air temperature [degC], -73.15 to 226.85.

    Returns
    -------
    float or numpy.ndarray
        Prandtl number [-].
    """
    mu, k = _mu_k(_kelvin(temp_c))
    return CP_AIR * mu / k


def kinematic_viscosity(temp_c, pressure=P_STANDARD):
    """Kinematic viscosity of dry air, nu = mu / rho with the ideal-gas density (definition).

    Parameters
    ----------
    temp_c : float or array_like
        Air temperature [degC], -73.15 to 226.85.
    pressure : float or array_like
        Air pressure [Pa], 1e4 to 2e5.

    Returns
    -------
    float or numpy.ndarray
        Kinematic viscosity [m^2/s].
    """
    return properties(temp_c, pressure).kinematic_viscosity


def properties(temp_c, pressure=P_STANDARD):
    """All the properties a convection correlation needs, at one temperature and pressure.

    Parameters
    ----------
    temp_c : float or array_like
        Air temperature [degC], -73.15 to 226.85 (for a correlation: usually the film temperature).
    pressure : float or array_like
        Air pressure [Pa], 1e4 to 2e5.

    Returns
    -------
    AirProperties
        k [W/(m K)], mu [Pa s], nu [m^2/s], alpha [m^2/s], Pr [-].
    """
    t_k = _kelvin(temp_c)
    _check_pressure(pressure)
    return _properties_k(t_k, pressure)


def _properties_k(t_k, pressure):
    """:func:`properties` at t_k [K] without input checks (for callers that checked already)."""
    mu, k = _mu_k(t_k)
    rho = air_density(t_k - KELVIN, pressure)        # ideal gas, ISO 2533 R_d
    if isinstance(t_k, float) and isinstance(pressure, (float, int)):
        rho = float(rho)
    nu = mu / rho                                    # definition
    alpha = k / (rho * CP_AIR)                       # definition
    return AirProperties(k, mu, nu, alpha, CP_AIR * mu / k)
