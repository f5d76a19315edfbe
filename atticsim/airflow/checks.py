"""Practice checks on attic ventilation: code vent area, intake area for a fan, house depressurisation.

Each ``check_*`` function returns a list of plain-language warnings (empty when all is well); the
numbers behind them come from the ``*_area``/``*_ratio`` helpers. Areas in m^2, flows in m^3/s,
pressures in Pa; the messages add the IP figures trade people read.
"""

from __future__ import annotations

from atticsim.airflow.openings import require_non_negative, require_positive
from atticsim.units import IP_FACTORS

#: Code edition implemented by :func:`code_required_vent_area`.
CODE_EDITION = "IRC 2018, section R806.2"
#: Intake net free area per unit of fan flow [m^2 per m^3/s]: 1 ft^2 per 300 cfm (a ventilation trade
#: association's published guidance for powered attic ventilators; common practice). 1 ft^2 = 0.09290304 m^2,
#: 300 cfm = 300 * 0.3048^3 / 60 m^3/s (exact definitions of the foot).
INTAKE_AREA_PER_FLOW = 0.3048**2 / (300.0 * 0.3048**3 / 60.0)
#: House depressurisation above which a fan may spill flue gases from atmospherically vented combustion
#: appliances [Pa]: 5 Pa (common practice: a few pascals is the limit combustion-safety test procedures
#: use for such houses, stricter 2-3 Pa limits for some natural-draft appliances; from memory).
DEPRESSURISATION_LIMIT = 5.0

_COMBUSTION_CAUTION = (
    "If the house has atmospherically vented combustion appliances (a natural-draft water heater, "
    "furnace or boiler, or an open fireplace), flue gases, including carbon monoxide, can spill into the "
    "rooms: have a qualified person run a combustion-appliance depressurisation and spillage test with "
    "the fan running before relying on it.")


def _ft2(area):
    factor, _ = IP_FACTORS["area"]
    return area * factor


def _cfm(flow):
    factor, _ = IP_FACTORS["flow"]
    return flow * factor


# --- building-code vent area (IRC R806.2) ---------------------------------------------------------------

def code_vent_ratio(vent_area, attic_floor_area):
    """Ratio of net free vent area to the vented attic floor area [-] (the code compares it with 1/150
    or 1/300).

    Parameters
    ----------
    vent_area : float
        Total net free ventilating area [m^2].
    attic_floor_area : float
        Area of the vented space (attic floor) [m^2].

    Returns
    -------
    float
        Ratio [-].
    """
    require_non_negative("vent net free area", vent_area, "[m^2]")
    require_positive("attic floor area", attic_floor_area, "[m^2]")
    return float(vent_area) / float(attic_floor_area)


def code_required_vent_area(attic_floor_area, upper_vent_area=0.0, total_vent_area=0.0, climate_zone=None,
                            vapor_retarder=False):
    """Minimum net free ventilating area by IRC 2018 section R806.2.

    The minimum is 1/150 of the vented space's area; 1/300 is allowed when both conditions of the
    exception hold: (1) in climate zones 6, 7 and 8, a Class I or II vapour retarder on the
    warm-in-winter side of the ceiling; (2) not less than 40 % and not more than 50 % of the
    ventilating area provided by upper vents, no more than 3 ft (0.914 m) below the ridge, the rest in
    the bottom third of the space (IRC 2018 R806.2, from memory; the 2012 edition allowed either
    condition alone, the 2015 and 2018 editions require both). Condition (2) is read here as the share
    of the provided vent area that is upper vents.

    Parameters
    ----------
    attic_floor_area : float
        Area of the vented space [m^2].
    upper_vent_area : float, default 0.0
        Net free area of vents within 3 ft of the ridge [m^2].
    total_vent_area : float, default 0.0
        Total net free ventilating area provided [m^2].
    climate_zone : int, optional
        IECC climate zone 1-8; unknown (None) counts as a zone where the vapour retarder is required.
    vapor_retarder : bool, default False
        Class I or II vapour retarder on the warm-in-winter side of the ceiling.

    Returns
    -------
    tuple of (float, int)
        Required net free area [m^2] and the ratio's denominator (150 or 300).
    """
    require_positive("attic floor area", attic_floor_area, "[m^2]")
    require_non_negative("upper vent area", upper_vent_area, "[m^2]")
    require_non_negative("total vent area", total_vent_area, "[m^2]")
    if upper_vent_area > total_vent_area:
        raise ValueError(f"upper vent area ({upper_vent_area} m^2) cannot exceed the total vent area "
                         f"({total_vent_area} m^2)")
    if climate_zone is not None and climate_zone not in range(1, 9):
        raise ValueError(f"climate zone must be an integer 1-8, got {climate_zone!r}")
    cold_zone = climate_zone is None or climate_zone >= 6
    condition_1 = vapor_retarder or not cold_zone
    share = upper_vent_area / total_vent_area if total_vent_area > 0.0 else 0.0
    condition_2 = 0.40 <= share <= 0.50
    denominator = 300 if (condition_1 and condition_2) else 150
    return float(attic_floor_area) / denominator, denominator


def check_code_vent_area(attic_floor_area, total_vent_area, upper_vent_area=0.0, climate_zone=None,
                         vapor_retarder=False):
    """Warn when the passive vent area is below the IRC 2018 R806.2 minimum.

    Parameters are those of :func:`code_required_vent_area`.

    Returns
    -------
    list of str
        Warnings (empty when the vents meet the code's minimum).
    """
    required, denominator = code_required_vent_area(attic_floor_area, upper_vent_area, total_vent_area,
                                                    climate_zone, vapor_retarder)
    if total_vent_area >= required:
        return []
    ratio = code_vent_ratio(total_vent_area, attic_floor_area)
    ratio_text = f"1/{1.0 / ratio:.0f}" if ratio > 0.0 else "none"
    return [
        f"Passive vent net free area {total_vent_area:.3f} m2 ({_ft2(total_vent_area):.1f} ft2) is below the "
        f"1/{denominator} of the attic floor that {CODE_EDITION} asks for: {required:.3f} m2 "
        f"({_ft2(required):.1f} ft2); the vents provide {ratio_text}. Check with the local building official, "
        f"since the adopted code edition and local amendments govern."
    ]


# --- intake area for a powered ventilator ------------------------------------------------------------------

def intake_area_for_fan(fan_flow):
    """Intake net free area a powered attic ventilator needs: 1 ft^2 per 300 cfm of fan flow [m^2]
    (a ventilation trade association's published guidance; common practice).

    Parameters
    ----------
    fan_flow : float
        Fan flow (rated, or at its operating point) [m^3/s].

    Returns
    -------
    float
        Net free intake area [m^2].
    """
    require_non_negative("fan flow", fan_flow, "[m^3/s]")
    return float(fan_flow) * INTAKE_AREA_PER_FLOW


def check_intake_area(intake_area, fan_flow):
    """Warn when the intake vents are too small for the fan (below 1 ft^2 per 300 cfm).

    Parameters
    ----------
    intake_area : float
        Net free area of the intake (soffit/eave) vents [m^2].
    fan_flow : float
        Fan flow [m^3/s].

    Returns
    -------
    list of str
        Warnings (empty when the intake area meets the guidance).
    """
    require_non_negative("intake net free area", intake_area, "[m^2]")
    needed = intake_area_for_fan(fan_flow)
    if intake_area >= needed:
        return []
    return [
        f"Intake net free area {intake_area:.3f} m2 ({_ft2(intake_area):.1f} ft2) is below the {needed:.3f} m2 "
        f"({_ft2(needed):.1f} ft2) that common practice asks for a {_cfm(fan_flow):.0f} cfm fan (1 ft2 of net "
        f"free intake per 300 cfm, a ventilation trade association's guidance): the fan can pull conditioned "
        f"air from the house through ceiling leaks and depressurise it. Add intake vents or choose a smaller "
        f"fan. {_COMBUSTION_CAUTION}"
    ]


# --- house depressurisation ---------------------------------------------------------------------------------

def check_house_depressurisation(depressurisation, limit=DEPRESSURISATION_LIMIT, combustion_appliances=None):
    """Warn when the fan depressurises the house beyond a common-practice limit.

    Parameters
    ----------
    depressurisation : float
        Fall of the house pressure caused by the fan [Pa], positive = depressurised (see
        :func:`atticsim.airflow.balance.house_depressurisation`).
    limit : float, default 5.0
        Limit [Pa] (:data:`DEPRESSURISATION_LIMIT`, common practice for houses with atmospherically
        vented combustion appliances).
    combustion_appliances : bool, optional
        Whether the house has atmospherically vented combustion appliances; None (unknown) warns as if
        it had, False skips the warning.

    Returns
    -------
    list of str
        Warnings (empty below the limit).
    """
    require_positive("depressurisation limit", limit, "[Pa]")
    if combustion_appliances is False or depressurisation <= limit:
        return []
    return [
        f"The fan depressurises the house by {depressurisation:.1f} Pa, more than the {limit:g} Pa "
        f"common-practice limit for combustion safety. {_COMBUSTION_CAUTION}"
    ]
