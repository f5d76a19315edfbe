"""Convection from a small sensor body (sphere or cylinder) to air: forced, natural and mixed.

Plain functions over floats or numpy arrays. The Nusselt correlations take dimensionless groups;
:func:`h_sensor` puts them together for a sensor in air of given speed and temperature and returns a
pure convection coefficient (long-wave radiation is separate, see :mod:`atticsim.sensor.body`).

Sources
-------
.. [1] Whitaker, S. (1972), Forced convection heat transfer correlations for flow in pipes, past flat
       plates, single cylinders, single spheres, and for flow in packed beds and tube bundles,
       AIChE Journal 18(2), 361-371. Also Incropera & DeWitt, Fundamentals of Heat and Mass Transfer,
       section 7.5 (the sphere).
.. [2] Ranz, W. E. and Marshall, W. R. (1952), Evaporation from drops, Chemical Engineering Progress
       48, 141-146 and 173-180.
.. [3] Churchill, S. W. and Bernstein, M. (1977), A correlating equation for forced convection from
       gases and liquids to a circular cylinder in crossflow, J. Heat Transfer 99, 300-306;
       Incropera & DeWitt section 7.4.
.. [4] Churchill, S. W. (1983), Free convection around immersed bodies, Heat Exchanger Design
       Handbook section 2.5.7 (the sphere); Incropera & DeWitt section 9.6 (from memory).
.. [5] Churchill, S. W. and Chu, H. H. S. (1975), Correlating equations for laminar and turbulent free
       convection from a horizontal cylinder, Int. J. Heat Mass Transfer 18, 1049-1053.
.. [6] Mixed convection: Nu^n = Nu_F^n + Nu_N^n, "n = 3 generally best, 3.5-4 for transverse flows
       over cylinders and spheres" (Churchill 1977, AIChE J. 23, 10-16; Incropera & DeWitt
       section 9.9; from memory). Common practice.
"""

from __future__ import annotations

import numpy as np

from atticsim.constants import GRAVITY, P_STANDARD
from atticsim.sensor import air

#: Geometry words :func:`h_sensor` accepts.
SHAPES = ("sphere", "cylinder")
#: Sphere forced-convection correlations :func:`h_sensor` can use.
SPHERE_CORRELATIONS = ("whitaker", "ranz-marshall")
#: Conduction limit of a sphere in an infinite still medium, Nu = 2 (exact: Incropera & DeWitt
#: section 7.5, the Re -> 0 limit of [1] and [2]; shape factor 2 pi D, Table 4.1).
NU_CONDUCTION_SPHERE = 2.0


def _require(name, value, unit, low, strict=False):
    """Raise ValueError unless every element of ``value`` is finite and >= low (> low if strict)."""
    if isinstance(value, (float, int)):
        ok = (value > low if strict else value >= low) and value < float("inf")
    else:
        arr = np.asarray(value, dtype=float)
        ok = bool(np.all(np.isfinite(arr) & ((arr > low) if strict else (arr >= low))))
    if not ok:
        sign = ">" if strict else ">="
        raise ValueError(f"{name} must be finite and {sign} {low:g}{unit}, got {value!r}")


def reynolds_number(air_speed, length, kinematic_viscosity):
    """Reynolds number Re = V L / nu (definition).

    Parameters
    ----------
    air_speed : float or array_like
        Air speed past the body [m/s], >= 0.
    length : float or array_like
        Characteristic length (the diameter) [m], > 0.
    kinematic_viscosity : float or array_like
        Kinematic viscosity of the air [m^2/s], > 0.

    Returns
    -------
    float or numpy.ndarray
        Reynolds number [-].
    """
    _require("air speed", air_speed, " m/s", 0.0)
    _require("length", length, " m", 0.0, strict=True)
    _require("kinematic viscosity", kinematic_viscosity, " m^2/s", 0.0, strict=True)
    return air_speed * length / kinematic_viscosity


def rayleigh_number(temp_air, temp_surface, length, pressure=P_STANDARD):
    """Rayleigh number of free convection, Ra = g beta |T_s - T_air| L^3 / (nu alpha).

    Definition (Incropera & DeWitt section 9.4); beta = 1 / T_film for an ideal gas; properties at the
    film temperature (T_s + T_air) / 2. The magnitude is returned: a sphere or a horizontal cylinder
    loses the same whether it is warmer or cooler than the air.

    Parameters
    ----------
    temp_air : float or array_like
        Air temperature far from the body [degC].
    temp_surface : float or array_like
        Surface temperature of the body [degC].
    length : float or array_like
        Characteristic length (the diameter) [m], > 0.
    pressure : float or array_like
        Air pressure [Pa].

    Returns
    -------
    float or numpy.ndarray
        Rayleigh number [-], >= 0.
    """
    _require("length", length, " m", 0.0, strict=True)
    t_air_k = air._kelvin(temp_air, "air temperature")
    t_s_k = air._kelvin(temp_surface, "surface temperature")
    air._check_pressure(pressure)
    t_film = 0.5 * (t_air_k + t_s_k)
    p = air._properties_k(t_film, pressure)
    return _rayleigh(t_air_k, t_s_k, t_film, length, p)


def _rayleigh(t_air_k, t_s_k, t_film_k, length, props):
    # Ra = g beta dT L^3 / (nu alpha), beta = 1/T_film (ideal gas), Incropera & DeWitt section 9.4
    return GRAVITY * abs(t_s_k - t_air_k) / t_film_k * length ** 3 / (
        props.kinematic_viscosity * props.diffusivity)


def nusselt_sphere_whitaker(reynolds, prandtl, viscosity_ratio=1.0):
    """Forced convection from a sphere, Whitaker (1972).

    Nu = 2 + (0.4 Re^(1/2) + 0.06 Re^(2/3)) Pr^0.4 (mu / mu_s)^(1/4) [1]; fitted over
    3.5 < Re < 7.6e4, 0.71 < Pr < 380, 1 < mu/mu_s < 3.2, properties at the free-stream temperature
    except mu_s. Below Re = 3.5 it joins the exact conduction limit Nu = 2 at Re = 0.

    Parameters
    ----------
    reynolds : float or array_like
        Reynolds number on the diameter [-], >= 0.
    prandtl : float or array_like
        Prandtl number [-], > 0.
    viscosity_ratio : float or array_like
        mu(T_air) / mu(T_surface) [-], > 0; 1 neglects the correction (small for a sensor within a few
        kelvin of the air).

    Returns
    -------
    float or numpy.ndarray
        Mean Nusselt number on the diameter [-].
    """
    _require("Reynolds number", reynolds, "", 0.0)
    _require("Prandtl number", prandtl, "", 0.0, strict=True)
    _require("viscosity ratio", viscosity_ratio, "", 0.0, strict=True)
    return _nu_whitaker(reynolds, prandtl, viscosity_ratio)


def _nu_whitaker(re, pr, ratio=1.0):
    # Whitaker (1972) sphere [1]
    return 2.0 + (0.4 * re ** 0.5 + 0.06 * re ** (2.0 / 3.0)) * pr ** 0.4 * ratio ** 0.25


def nusselt_sphere_ranz_marshall(reynolds, prandtl):
    """Forced convection from a sphere, Ranz and Marshall (1952).

    Nu = 2 + 0.6 Re^(1/2) Pr^(1/3) [2] (evaporating drops, 0 < Re < 200; widely used beyond).

    Parameters
    ----------
    reynolds : float or array_like
        Reynolds number on the diameter [-], >= 0.
    prandtl : float or array_like
        Prandtl number [-], > 0.

    Returns
    -------
    float or numpy.ndarray
        Mean Nusselt number on the diameter [-].
    """
    _require("Reynolds number", reynolds, "", 0.0)
    _require("Prandtl number", prandtl, "", 0.0, strict=True)
    return _nu_ranz_marshall(reynolds, prandtl)


def _nu_ranz_marshall(re, pr):
    # Ranz & Marshall (1952) [2]
    return 2.0 + 0.6 * re ** 0.5 * pr ** (1.0 / 3.0)


def nusselt_cylinder_churchill_bernstein(reynolds, prandtl):
    """Forced convection from a circular cylinder in cross-flow, Churchill and Bernstein (1977).

    Nu = 0.3 + 0.62 Re^(1/2) Pr^(1/3) / [1 + (0.4/Pr)^(2/3)]^(1/4) * [1 + (Re/282000)^(5/8)]^(4/5) [3];
    all Re Pr > 0.2, properties at the film temperature. (At Re = 0 it returns its floor 0.3; an
    infinite cylinder has no conduction limit.)

    Parameters
    ----------
    reynolds : float or array_like
        Reynolds number on the diameter [-], >= 0.
    prandtl : float or array_like
        Prandtl number [-], > 0.

    Returns
    -------
    float or numpy.ndarray
        Mean Nusselt number on the diameter [-].
    """
    _require("Reynolds number", reynolds, "", 0.0)
    _require("Prandtl number", prandtl, "", 0.0, strict=True)
    return _nu_churchill_bernstein(reynolds, prandtl)


def _nu_churchill_bernstein(re, pr):
    # Churchill & Bernstein (1977) [3]
    return 0.3 + (0.62 * re ** 0.5 * pr ** (1.0 / 3.0) / (1.0 + (0.4 / pr) ** (2.0 / 3.0)) ** 0.25
                  * (1.0 + (re / 282000.0) ** 0.625) ** 0.8)


def nusselt_sphere_natural_churchill(rayleigh, prandtl):
    """Free convection from a sphere, Churchill (1983).

    Nu = 2 + 0.589 Ra^(1/4) / [1 + (0.469/Pr)^(9/16)]^(4/9) [4]; Ra <= 1e11, Pr >= 0.7, properties at
    the film temperature. Ra -> 0 gives the exact conduction limit Nu = 2.

    Parameters
    ----------
    rayleigh : float or array_like
        Rayleigh number on the diameter [-], >= 0.
    prandtl : float or array_like
        Prandtl number [-], > 0.

    Returns
    -------
    float or numpy.ndarray
        Mean Nusselt number on the diameter [-].
    """
    _require("Rayleigh number", rayleigh, "", 0.0)
    _require("Prandtl number", prandtl, "", 0.0, strict=True)
    return _nu_sphere_natural(rayleigh, prandtl)


def _nu_sphere_natural(ra, pr):
    # Churchill (1983) sphere [4]
    return 2.0 + 0.589 * ra ** 0.25 / (1.0 + (0.469 / pr) ** (9.0 / 16.0)) ** (4.0 / 9.0)


def nusselt_cylinder_natural_churchill_chu(rayleigh, prandtl):
    """Free convection from a long horizontal cylinder, Churchill and Chu (1975).

    Nu = {0.60 + 0.387 Ra^(1/6) / [1 + (0.559/Pr)^(9/16)]^(8/27)}^2 [5]; Ra <= 1e12, properties at the
    film temperature.

    Parameters
    ----------
    rayleigh : float or array_like
        Rayleigh number on the diameter [-], >= 0.
    prandtl : float or array_like
        Prandtl number [-], > 0.

    Returns
    -------
    float or numpy.ndarray
        Mean Nusselt number on the diameter [-].
    """
    _require("Rayleigh number", rayleigh, "", 0.0)
    _require("Prandtl number", prandtl, "", 0.0, strict=True)
    return _nu_cylinder_natural(rayleigh, prandtl)


def _nu_cylinder_natural(ra, pr):
    # Churchill & Chu (1975) horizontal cylinder [5]
    return (0.60 + 0.387 * ra ** (1.0 / 6.0)
            / (1.0 + (0.559 / pr) ** (9.0 / 16.0)) ** (8.0 / 27.0)) ** 2


def nusselt_mixed(nu_forced, nu_natural, nu_conduction=0.0, exponent=3.0):
    """Combine forced and natural convection: Nu = Nu0 + [(Nu_F - Nu0)^n + (Nu_N - Nu0)^n]^(1/n).

    With Nu0 = 0 this is Churchill's superposition Nu^n = Nu_F^n + Nu_N^n for assisting or transverse
    flows [6] (common practice; n = 3 is the usual choice). For a sphere pass Nu0 = 2: both of its
    correlations contain the conduction term 2, and superposing only the convective parts keeps the
    exact conduction limit in still air and reduces to either correlation when the other mode vanishes
    (our choice, the same structure as [4]).

    Parameters
    ----------
    nu_forced : float or array_like
        Nusselt number of forced convection alone [-], >= nu_conduction.
    nu_natural : float or array_like
        Nusselt number of free convection alone [-], >= nu_conduction.
    nu_conduction : float
        Conduction limit shared by both [-]: 2 for a sphere, 0 for a cylinder.
    exponent : float
        Superposition exponent n [-], >= 1.

    Returns
    -------
    float or numpy.ndarray
        Mean Nusselt number [-].
    """
    _require("conduction Nusselt number", nu_conduction, "", 0.0)
    _require("forced Nusselt number", nu_forced, "", nu_conduction)
    _require("natural Nusselt number", nu_natural, "", nu_conduction)
    _require("superposition exponent", exponent, "", 1.0)
    return _nu_mixed(nu_forced, nu_natural, nu_conduction, exponent)


def _nu_mixed(nu_f, nu_n, nu0, n):
    # Churchill's superposition of forced and free convection [6] on the parts above nu0
    return nu0 + ((nu_f - nu0) ** n + (nu_n - nu0) ** n) ** (1.0 / n)


def h_sensor(shape, diameter, air_speed, temp_air, temp_surface, pressure=P_STANDARD,
             sphere_correlation="whitaker", exponent=3.0):
    """Convection coefficient of a small sphere or cylinder in moving or still air.

    Forced convection from [1] or [2] (sphere) or [3] (cylinder in cross-flow), free convection from
    [4] (sphere) or [5] (horizontal cylinder), combined by :func:`nusselt_mixed` (exponent 3, common
    practice; for the sphere on the parts above Nu = 2). All air properties are taken at the film
    temperature (T_s + T_air)/2 and Whitaker's viscosity ratio is set to 1: for a sensor within a few
    kelvin of the air this differs from Whitaker's free-stream evaluation by well under 1 % (our
    simplification). h is pure convection: no radiation is included.

    Parameters
    ----------
    shape : {"sphere", "cylinder"}
        Body geometry (a cylinder lies horizontal, across the flow).
    diameter : float or array_like
        Diameter of the sphere or cylinder [m], > 0.
    air_speed : float or array_like
        Local air speed past the body [m/s], >= 0.
    temp_air : float or array_like
        Local air temperature [degC].
    temp_surface : float or array_like
        Surface temperature of the body [degC].
    pressure : float or array_like
        Air pressure [Pa].
    sphere_correlation : {"whitaker", "ranz-marshall"}
        Forced-convection correlation for the sphere.
    exponent : float
        Mixed-convection superposition exponent [-], >= 1.

    Returns
    -------
    float or numpy.ndarray
        Convection coefficient [W/(m^2 K)].
    """
    if shape not in SHAPES:
        raise ValueError(f"sensor shape must be one of {', '.join(SHAPES)}, got {shape!r}")
    if sphere_correlation not in SPHERE_CORRELATIONS:
        raise ValueError(f"sphere correlation must be one of {', '.join(SPHERE_CORRELATIONS)}, "
                         f"got {sphere_correlation!r}")
    _require("diameter", diameter, " m", 0.0, strict=True)
    _require("air speed", air_speed, " m/s", 0.0)
    _require("superposition exponent", exponent, "", 1.0)
    t_air_k = air._kelvin(temp_air, "air temperature")
    t_s_k = air._kelvin(temp_surface, "surface temperature")
    air._check_pressure(pressure)
    return _h(shape, diameter, air_speed, t_air_k, t_s_k, pressure, sphere_correlation, exponent)


def _h(shape, d, v, t_air_k, t_s_k, pressure, sphere_correlation="whitaker", n=3.0):
    """:func:`h_sensor` on kelvin temperatures, without input checks [W/(m^2 K)]."""
    t_film = 0.5 * (t_air_k + t_s_k)
    p = air._properties_k(t_film, pressure)
    re = v * d / p.kinematic_viscosity                     # definition
    ra = _rayleigh(t_air_k, t_s_k, t_film, d, p)
    if shape == "sphere":
        if sphere_correlation == "whitaker":
            nu_f = _nu_whitaker(re, p.prandtl)
        else:
            nu_f = _nu_ranz_marshall(re, p.prandtl)
        nu = _nu_mixed(nu_f, _nu_sphere_natural(ra, p.prandtl), NU_CONDUCTION_SPHERE, n)
    else:
        nu = _nu_mixed(_nu_churchill_bernstein(re, p.prandtl), _nu_cylinder_natural(ra, p.prandtl), 0.0, n)
    return nu * p.conductivity / d                          # h = Nu k / D (definition)
