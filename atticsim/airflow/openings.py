"""Flow through attic openings: orifice and power-law leakage, stack and wind pressures.

Pure functions over floats or numpy arrays, SI units, temperatures in degC (as everywhere in atticsim;
the stack formulas convert to kelvin inside).

Sign convention for every path: ``dp`` is the upstream-minus-downstream pressure difference [Pa] and a
positive ``dp`` gives a positive flow in that direction. For an opening in the attic's skin the
balance solver uses "outdoors minus attic", so positive means air flowing *into* the attic.

The reference forms of the ASHRAE Handbook (two-opening stack equation, wind equation and their
root-sum-square superposition) are here too; the tests check the network solver against them.
"""

from __future__ import annotations

import math

import numpy as np

from atticsim.constants import GRAVITY, KELVIN

#: Default wind pressure coefficients Cp [-] by opening kind, for a low-rise house with a 11-30 deg
#: roof pitch in exposed terrain. Plain kinds are averaged over wind direction (the balance knows the
#: wind speed only); "_windward"/"_leeward" kinds hold for wind normal to that face.
#: Walls: +0.7 windward, -0.2 leeward, average over eight directions about -0.1 (Liddament 1986,
#: "Air infiltration calculation techniques - an applications guide", AIVC, low-rise wall table,
#: length/width 1, exposed; from memory). Soffits and gable vents sit in the wall's pressure field.
#: Roof, 11-30 deg pitch, length/width 1, exposed: -0.4 (wind normal) to -0.6 (wind along the ridge),
#: -0.5 averaged over direction (same AIVC table, roof row, checked against a published copy of the
#: table). Ridge and roof vents take the roof average. Common practice for a lumped attic model.
DEFAULT_CP = {
    "soffit": -0.1,
    "soffit_windward": 0.7,
    "soffit_leeward": -0.2,
    "gable": -0.1,
    "gable_windward": 0.7,
    "gable_leeward": -0.2,
    "ridge": -0.5,
    "roof_vent": -0.5,
    "wall": -0.1,
}


# --- input checks (shared by the airflow modules) ----------------------------------------------------

def require_positive(name, value, unit):
    """Raise ValueError unless every element of ``value`` is finite and > 0."""
    if isinstance(value, float) and 0.0 < value < math.inf:  # a plain number passes without numpy
        return
    arr = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(arr)) or np.any(arr <= 0.0):
        raise ValueError(f"{name} must be finite and > 0 {unit}, got {value!r}")


def require_non_negative(name, value, unit):
    """Raise ValueError unless every element of ``value`` is finite and >= 0."""
    if isinstance(value, float) and 0.0 <= value < math.inf:
        return
    arr = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(arr)) or np.any(arr < 0.0):
        raise ValueError(f"{name} must be finite and >= 0 {unit}, got {value!r}")


def require_finite(name, value, unit):
    """Raise ValueError unless every element of ``value`` is finite."""
    if not np.all(np.isfinite(np.asarray(value, dtype=float))):
        raise ValueError(f"{name} must be a finite number {unit}, got {value!r}")


def require_temperature(name, value):
    """Raise ValueError unless ``value`` looks like an air temperature in degC (-90 to 150)."""
    if isinstance(value, float) and -90.0 <= value <= 150.0:
        return
    arr = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(arr)) or np.any(arr < -90.0) or np.any(arr > 150.0):
        raise ValueError(f"{name} must be an air temperature in degC between -90 and 150, got {value!r}")


def require_exponent(name, value):
    """Raise ValueError unless a flow exponent lies in [0.5, 1] (turbulent to laminar)."""
    arr = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(arr)) or np.any(arr < 0.5) or np.any(arr > 1.0):
        raise ValueError(f"{name} must lie between 0.5 (turbulent) and 1.0 (laminar), got {value!r}")


def _out(x):
    """Return a Python float for 0-d results, the array otherwise."""
    x = np.asarray(x, dtype=float)
    return float(x) if x.ndim == 0 else x


# --- path laws ---------------------------------------------------------------------------------------

def orifice_flow(dp, area, cd=0.61, rho=1.2):
    """Volume flow through a sharp-edged opening, signed with the pressure difference.

    Q = Cd A sqrt(2 |dp| / rho) sign(dp).

    Parameters
    ----------
    dp : float or array_like
        Upstream-minus-downstream pressure difference [Pa].
    area : float or array_like
        Net free area of the opening [m^2].
    cd : float or array_like, default 0.61
        Discharge coefficient [-] (0.61 for a sharp-edged orifice; from memory).
    rho : float or array_like, default 1.2
        Density of the air passing the opening (the upstream air) [kg/m^3].

    Returns
    -------
    float or numpy.ndarray
        Volume flow [m^3/s], positive in the direction of a positive ``dp``.

    References
    ----------
    ASHRAE Handbook - Fundamentals, Ventilation and Infiltration chapter (flow through an opening).
    """
    require_finite("pressure difference dp", dp, "[Pa]")
    require_non_negative("opening area", area, "[m^2]")
    require_positive("discharge coefficient cd", cd, "[-]")
    require_positive("air density rho", rho, "[kg/m^3]")
    dp = np.asarray(dp, dtype=float)
    # Orifice equation (ASHRAE Handbook Fundamentals, ventilation and infiltration chapter).
    return _out(np.sign(dp) * cd * np.asarray(area, dtype=float) * np.sqrt(2.0 * np.abs(dp) / rho))


def orifice_pressure(flow, area, cd=0.61, rho=1.2):
    """Pressure difference that drives a given volume flow through an opening (orifice law inverted).

    dp = (rho / 2) (Q / (Cd A))^2 sign(Q).

    Parameters
    ----------
    flow : float or array_like
        Volume flow [m^3/s], signed.
    area : float or array_like
        Net free area [m^2].
    cd : float or array_like, default 0.61
        Discharge coefficient [-].
    rho : float or array_like, default 1.2
        Density of the passing air [kg/m^3].

    Returns
    -------
    float or numpy.ndarray
        Pressure difference [Pa], with the sign of ``flow``.
    """
    require_finite("volume flow", flow, "[m^3/s]")
    require_positive("opening area", area, "[m^2]")
    require_positive("discharge coefficient cd", cd, "[-]")
    require_positive("air density rho", rho, "[kg/m^3]")
    q = np.asarray(flow, dtype=float) / (np.asarray(cd, dtype=float) * np.asarray(area, dtype=float))
    # Orifice equation solved for dp (ASHRAE Handbook Fundamentals, ventilation and infiltration chapter).
    return _out(0.5 * rho * q * np.abs(q))


def power_law_flow(dp, coefficient, exponent=0.65):
    """Volume flow through distributed leakage, Q = C |dp|^n sign(dp) (the blower-door power law).

    Parameters
    ----------
    dp : float or array_like
        Upstream-minus-downstream pressure difference [Pa].
    coefficient : float or array_like
        Flow coefficient C [m^3/(s Pa^n)].
    exponent : float or array_like, default 0.65
        Flow exponent n [-], 0.5 (orifice-like) to 1 (laminar); 0.65 is the usual default when a
        test reports none (ASHRAE Handbook Fundamentals, ventilation and infiltration chapter; from
        memory).

    Returns
    -------
    float or numpy.ndarray
        Volume flow [m^3/s], positive in the direction of a positive ``dp``.

    References
    ----------
    ASHRAE Handbook - Fundamentals, Ventilation and Infiltration chapter (power-law leakage);
    ASTM E779 (fan pressurisation test, Q = C dp^n).
    """
    require_finite("pressure difference dp", dp, "[Pa]")
    require_non_negative("leakage coefficient", coefficient, "[m^3/(s Pa^n)]")
    require_exponent("flow exponent", exponent)
    dp = np.asarray(dp, dtype=float)
    # Power-law leakage Q = C dp^n (ASHRAE Handbook Fundamentals, ventilation chapter; ASTM E779).
    return _out(np.sign(dp) * np.asarray(coefficient, dtype=float) * np.abs(dp) ** exponent)


def leakage_coefficient(leakage_area, exponent=0.65, dp_ref=4.0, cd=1.0, rho=1.2):
    """Power-law coefficient C from an effective leakage area at a reference pressure.

    The leakage area L is the orifice area that passes the same flow at dp_ref:
    Q_ref = Cd L sqrt(2 dp_ref / rho), and C = Q_ref / dp_ref^n.

    Two conventions are in use; pass the matching pair:

    - ``dp_ref=4.0, cd=1.0``: effective leakage area (ELA) as the ASHRAE Handbook Fundamentals
      reports it (LBL convention, 4 Pa, discharge coefficient 1). This is the default.
    - ``dp_ref=10.0, cd=0.611``: equivalent leakage area (EqLA) of the Canadian fan-depressurisation
      standard CAN/CGSB-149.10 (10 Pa, sharp-edged orifice; from memory).

    Parameters
    ----------
    leakage_area : float or array_like
        Effective or equivalent leakage area [m^2].
    exponent : float or array_like, default 0.65
        Flow exponent n [-].
    dp_ref : float, default 4.0
        Reference pressure difference [Pa].
    cd : float, default 1.0
        Discharge coefficient of the convention [-].
    rho : float, default 1.2
        Air density of the rating [kg/m^3].

    Returns
    -------
    float or numpy.ndarray
        Flow coefficient C [m^3/(s Pa^n)].
    """
    require_non_negative("leakage area", leakage_area, "[m^2]")
    require_exponent("flow exponent", exponent)
    require_positive("reference pressure dp_ref", dp_ref, "[Pa]")
    require_positive("discharge coefficient cd", cd, "[-]")
    require_positive("air density rho", rho, "[kg/m^3]")
    # C = Cd L sqrt(2/rho) dp_ref^(0.5 - n) (ASHRAE Handbook Fundamentals, ventilation chapter,
    # effective leakage area; the same conversion holds for the 10 Pa EqLA convention).
    return _out(cd * np.asarray(leakage_area, dtype=float) * math.sqrt(2.0 / rho)
                * dp_ref ** (0.5 - np.asarray(exponent, dtype=float)))


def leakage_area(coefficient, exponent=0.65, dp_ref=4.0, cd=1.0, rho=1.2):
    """Effective leakage area at a reference pressure from a power-law coefficient (inverse of
    :func:`leakage_coefficient`; same parameters and conventions).

    Returns
    -------
    float or numpy.ndarray
        Leakage area [m^2].
    """
    require_non_negative("leakage coefficient", coefficient, "[m^3/(s Pa^n)]")
    require_exponent("flow exponent", exponent)
    require_positive("reference pressure dp_ref", dp_ref, "[Pa]")
    require_positive("discharge coefficient cd", cd, "[-]")
    require_positive("air density rho", rho, "[kg/m^3]")
    # L = C dp_ref^n / (Cd sqrt(2 dp_ref / rho)) (ASHRAE Handbook Fundamentals, ventilation chapter).
    return _out(np.asarray(coefficient, dtype=float) * dp_ref ** np.asarray(exponent, dtype=float)
                / (cd * math.sqrt(2.0 * dp_ref / rho)))


# --- driving pressures -------------------------------------------------------------------------------

def stack_pressure(height, neutral_height, temp_inside, temp_outside, rho_outside):
    """Stack (buoyancy) pressure difference, outdoors minus inside, at a height.

    dp = rho_o g (z_n - z) (T_i - T_o) / T_i, with absolute temperatures. A positive value pushes air
    in: below the neutral level of a space warmer than outdoors, above it of a cooler one.

    Parameters
    ----------
    height : float or array_like
        Height z of the opening [m].
    neutral_height : float or array_like
        Height z_n of the neutral pressure level, where inside and outside pressures are equal [m].
    temp_inside, temp_outside : float or array_like
        Inside and outdoor air temperatures [degC].
    rho_outside : float or array_like
        Outdoor air density [kg/m^3].

    Returns
    -------
    float or numpy.ndarray
        Pressure difference p_outdoor - p_inside at ``height`` [Pa].

    References
    ----------
    ASHRAE Handbook - Fundamentals, Ventilation and Infiltration chapter (stack pressure; the ideal
    gas law turns rho_o - rho_i into rho_o (T_i - T_o) / T_i).
    """
    require_finite("height", height, "[m]")
    require_finite("neutral-level height", neutral_height, "[m]")
    require_temperature("inside temperature", temp_inside)
    require_temperature("outdoor temperature", temp_outside)
    require_positive("outdoor air density", rho_outside, "[kg/m^3]")
    t_i = np.asarray(temp_inside, dtype=float) + KELVIN
    t_o = np.asarray(temp_outside, dtype=float) + KELVIN
    # Stack pressure (ASHRAE Handbook Fundamentals, ventilation and infiltration chapter).
    return _out(rho_outside * GRAVITY * (np.asarray(neutral_height, dtype=float)
                                         - np.asarray(height, dtype=float)) * (t_i - t_o) / t_i)


def wind_pressure(wind_speed, cp, rho=1.2):
    """Wind pressure on a surface relative to the undisturbed static pressure, p_w = Cp rho V^2 / 2.

    Parameters
    ----------
    wind_speed : float or array_like
        Reference wind speed V (at the building's height) [m/s].
    cp : float or array_like
        Wind pressure coefficient [-] (see :data:`DEFAULT_CP`).
    rho : float or array_like, default 1.2
        Outdoor air density [kg/m^3].

    Returns
    -------
    float or numpy.ndarray
        Wind pressure [Pa] (positive on a windward face).

    References
    ----------
    ASHRAE Handbook - Fundamentals, Airflow Around Buildings chapter (surface pressure coefficient).
    """
    require_non_negative("wind speed", wind_speed, "[m/s]")
    require_finite("pressure coefficient cp", cp, "[-]")
    require_positive("air density rho", rho, "[kg/m^3]")
    v = np.asarray(wind_speed, dtype=float)
    # p_w = Cp rho V^2 / 2 (ASHRAE Handbook Fundamentals, airflow around buildings chapter).
    return _out(np.asarray(cp, dtype=float) * 0.5 * rho * v * v)


def default_cp(kind):
    """Default wind pressure coefficient for an opening kind (see :data:`DEFAULT_CP`).

    Parameters
    ----------
    kind : str
        One of the keys of :data:`DEFAULT_CP`.

    Returns
    -------
    float
        Pressure coefficient [-].
    """
    try:
        return DEFAULT_CP[kind]
    except KeyError:
        raise ValueError(f"opening kind must be one of {', '.join(DEFAULT_CP)}, got {kind!r}") from None


# --- ASHRAE reference forms (natural ventilation of a space with two openings) ------------------------

def stack_flow_two_openings(area, delta_h_npl, temp_inside, temp_outside, cd=0.65):
    """Stack-driven flow through a space with an inlet and an outlet (ASHRAE reference form).

    Q = Cd A sqrt(2 g dH_NPL (T_i - T_o) / T_i), absolute temperatures; for T_i < T_o the flow runs the
    other way and the magnitude uses |T_i - T_o|.

    Parameters
    ----------
    area : float or array_like
        Free area of the inlet (equal to the outlet's for the basic form) [m^2].
    delta_h_npl : float or array_like
        Height from the middle of the lower opening to the neutral pressure level [m] (half the
        separation for two equal openings; see :func:`neutral_level_height`).
    temp_inside, temp_outside : float or array_like
        Inside and outdoor air temperatures [degC].
    cd : float, default 0.65
        Discharge coefficient of the openings [-] (the value ASHRAE suggests for this form; from memory).

    Returns
    -------
    float or numpy.ndarray
        Volume flow [m^3/s] (magnitude).

    References
    ----------
    ASHRAE Handbook - Fundamentals, Ventilation and Infiltration chapter, natural ventilation
    ("flow caused by thermal forces").
    """
    require_non_negative("opening area", area, "[m^2]")
    require_non_negative("height to the neutral level", delta_h_npl, "[m]")
    require_temperature("inside temperature", temp_inside)
    require_temperature("outdoor temperature", temp_outside)
    require_positive("discharge coefficient cd", cd, "[-]")
    t_i = np.asarray(temp_inside, dtype=float) + KELVIN
    t_o = np.asarray(temp_outside, dtype=float) + KELVIN
    # ASHRAE Handbook Fundamentals, ventilation chapter, stack-driven natural ventilation.
    return _out(cd * np.asarray(area, dtype=float)
                * np.sqrt(2.0 * GRAVITY * np.asarray(delta_h_npl, dtype=float) * np.abs(t_i - t_o) / t_i))


def neutral_level_height(separation, area_lower, area_upper, temp_inside, temp_outside):
    """Height of the neutral pressure level above the lower of two openings (ASHRAE reference form).

    h_NPL = H / (1 + (A_1 / A_2)^2 T_i / T_o), absolute temperatures, A_1 the lower and A_2 the
    upper opening. It follows from equal mass flows through the two openings.

    Parameters
    ----------
    separation : float or array_like
        Vertical distance H between the openings' centres [m].
    area_lower, area_upper : float or array_like
        Free areas of the lower and upper openings [m^2].
    temp_inside, temp_outside : float or array_like
        Inside and outdoor air temperatures [degC].

    Returns
    -------
    float or numpy.ndarray
        Height of the neutral level above the lower opening [m].

    References
    ----------
    ASHRAE Handbook - Fundamentals, Ventilation and Infiltration chapter (neutral pressure level of
    a space with two openings); the same form appears in API RP 500's ventilation guidance.
    """
    require_non_negative("opening separation", separation, "[m]")
    require_positive("lower opening area", area_lower, "[m^2]")
    require_positive("upper opening area", area_upper, "[m^2]")
    require_temperature("inside temperature", temp_inside)
    require_temperature("outdoor temperature", temp_outside)
    ratio = np.asarray(area_lower, dtype=float) / np.asarray(area_upper, dtype=float)
    t_i = np.asarray(temp_inside, dtype=float) + KELVIN
    t_o = np.asarray(temp_outside, dtype=float) + KELVIN
    # Neutral level of two openings (ASHRAE Handbook Fundamentals, ventilation chapter).
    return _out(np.asarray(separation, dtype=float) / (1.0 + ratio * ratio * t_i / t_o))


def wind_flow(area, wind_speed, cv=0.55):
    """Wind-driven flow through a space's inlet openings (ASHRAE reference form), Q = Cv A V.

    Parameters
    ----------
    area : float or array_like
        Free area of the inlet openings [m^2].
    wind_speed : float or array_like
        Wind speed [m/s].
    cv : float, default 0.55
        Effectiveness of the openings [-]: 0.5-0.6 for wind perpendicular to the inlet, 0.25-0.35 for
        diagonal wind (ASHRAE Handbook Fundamentals, ventilation chapter); 0.55 is the middle of the
        perpendicular range.

    Returns
    -------
    float or numpy.ndarray
        Volume flow [m^3/s].
    """
    require_non_negative("opening area", area, "[m^2]")
    require_non_negative("wind speed", wind_speed, "[m/s]")
    require_positive("opening effectiveness cv", cv, "[-]")
    # Q = Cv A V (ASHRAE Handbook Fundamentals, ventilation chapter, wind-driven natural ventilation).
    return _out(cv * np.asarray(area, dtype=float) * np.asarray(wind_speed, dtype=float))


def combined_flow(stack_flow, wind_flow_):
    """Combined stack and wind flow by the root-sum-square rule, Q = sqrt(Q_s^2 + Q_w^2).

    The rule is approximate: exact for a single flow loop where wind and stack push the same way
    (both pressures add and flow goes as the square root of pressure), an overestimate where they
    oppose.

    Parameters
    ----------
    stack_flow : float or array_like
        Flow from stack effect alone [m^3/s].
    wind_flow_ : float or array_like
        Flow from wind alone [m^3/s].

    Returns
    -------
    float or numpy.ndarray
        Combined flow [m^3/s].

    References
    ----------
    ASHRAE Handbook - Fundamentals, Ventilation and Infiltration chapter (combined wind and stack
    natural ventilation).
    """
    require_non_negative("stack flow", stack_flow, "[m^3/s]")
    require_non_negative("wind flow", wind_flow_, "[m^3/s]")
    # Root-sum-square superposition (ASHRAE Handbook Fundamentals, ventilation chapter).
    return _out(np.hypot(stack_flow, wind_flow_))
