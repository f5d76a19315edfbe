"""Heat-transfer correlations for roof and attic surfaces (SI, numpy-friendly).

Convection coefficients here are pure convection; long-wave radiation is computed separately by
the network (so no radiation is counted twice).
"""

from __future__ import annotations

import math

import numpy as np


#: Forced-convection multipliers R_f by the surface's texture, the six classes of Sparrow, Ramsey & Mass
#: (1979) as tabulated by Walton (1983), NBSIR 83-2655 (from memory); the names are ours, each with the
#: reference surface of its class.
SURFACE_TEXTURE = {
    "coarse": 2.17,     # stucco
    "granular": 1.67,   # brick; asphalt shingles with mineral granules
    "textured": 1.52,   # concrete; clay and concrete tile
    "planed": 1.13,     # clear pine, planed wood
    "fine": 1.11,       # smooth plaster
    "glassy": 1.00,     # glass; smooth metal and paint
}

# Smoothing of |dT|^(1/3) near dT = 0, so that the derivative stays finite for the stiff
# integrator: |dT|^(1/3) ~ (dT^2 + eps^2)^(1/6) with eps = 0.05 K (numerical choice, ours).
_EPS2 = 0.05**2


def walton_natural(delta_t, cos_tilt, facing_up):
    """Natural convection coefficient on a tilted plane (Walton's simple correlation) [W/(m^2 K)], for one
    surface (scalar arithmetic, compiled as it is by :mod:`atticsim.network.kernel`).

    Walton, G. N. (1983), Thermal Analysis Research Program reference manual, NBSIR 83-2655 (from memory):
    unstable (buoyant flow leaves the surface): h = 9.482 |dT|^(1/3) / (7.238 - |cos S|);
    stable: h = 1.810 |dT|^(1/3) / (1.382 + |cos S|). |dT|^(1/3) is smoothed as (dT^2 + eps^2)^(1/6) with
    eps = 0.05 K so that the derivative stays finite (numerical choice, ours).

    Parameters
    ----------
    delta_t : float
        Surface minus air temperature [K].
    cos_tilt : float
        Cosine of the surface tilt from horizontal [-] (1 = horizontal, 0 = vertical).
    facing_up : bool
        True when the surface's outward normal points upward (roof top, attic floor), False when it points
        downward (deck underside). Heat flow upward from a surface facing up (hot surface) or into a surface
        facing down (cold surface above warmer air) is the unstable case.
    """
    c = abs(cos_tilt)
    cube = (delta_t * delta_t + _EPS2) ** (1.0 / 6.0)
    unstable = delta_t > 0.0 if facing_up else delta_t < 0.0
    if unstable:
        return 9.482 * cube / (7.238 - c)
    return 1.810 * cube / (1.382 + c)


#: :func:`walton_natural` over arrays (broadcast), for figures and tests.
natural_convection_walton = np.vectorize(walton_natural, otypes=[float])


def forced_convection_sparrow(wind_speed, perimeter, area, roughness, windward_factor=0.75):
    """Forced convection on an exterior surface (Sparrow, Ramsey & Mass 1979, as given by Walton 1983)
    [W/(m^2 K)], for one surface (scalar arithmetic, compiled as it is by the network's kernel).

    h_f = 2.537 W_f R_f sqrt(P V / A) (Walton 1983, NBSIR 83-2655; from memory; worked check value
    4.64 W/m^2K for A = 100 m^2, P = 40 m, V = 3 m/s, R_f = 1.67, W_f = 1).

    Parameters
    ----------
    wind_speed : float
        Wind speed [m/s] (negative values count as calm).
    perimeter : float
        Perimeter of the surface [m].
    area : float
        Area of the surface [m^2].
    roughness : float
        Texture multiplier R_f [-] (see :data:`SURFACE_TEXTURE`).
    windward_factor : float
        W_f: 1.0 windward, 0.5 leeward; 0.75 when the wind direction is not modelled
        (mean of the two, our choice).
    """
    return 2.537 * windward_factor * roughness * math.sqrt(perimeter * max(wind_speed, 0.0) / area)


def gray_two_surface_factor(area_1, emittance_1, area_2, emittance_2, view_12=1.0):
    """Radiative exchange factor of two gray diffuse surfaces: q = sigma G (T1^4 - T2^4).

    G = 1 / ((1-e1)/(e1 A1) + 1/(A1 F12) + (1-e2)/(e2 A2)), the two-surface enclosure network
    (Incropera & DeWitt, Fundamentals of Heat and Mass Transfer, radiation exchange chapter).

    Returns
    -------
    float
        G [m^2].
    """
    return 1.0 / ((1.0 - emittance_1) / (emittance_1 * area_1) + 1.0 / (area_1 * view_12)
                  + (1.0 - emittance_2) / (emittance_2 * area_2))


def view_factors_tilted(tilt_deg):
    """Sky and ground view factors of a plane of tilt beta: (1 + cos b)/2, (1 - cos b)/2.

    Isotropic sky and ground (Duffie & Beckman, Solar Engineering of Thermal Processes, sect. 2.15
    and 3.9).
    """
    c = np.cos(np.radians(tilt_deg))
    return (1.0 + c) / 2.0, (1.0 - c) / 2.0


def sol_air_temperature(temp_air, irradiance, absorptance, h_out, eps_delta_r=0.0):
    """Sol-air temperature t_e = t_o + alpha I_t / h_o - eps dR / h_o [degC].

    ASHRAE Handbook Fundamentals, nonresidential cooling and heating load chapter (sol-air
    temperature); eps dR = 63 W/m^2 for horizontal surfaces, 0 for vertical ones.
    """
    return np.asarray(temp_air, dtype=float) + (absorptance * np.asarray(irradiance, dtype=float)
                                                 - eps_delta_r) / h_out
