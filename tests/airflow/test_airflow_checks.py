"""Tests of atticsim.airflow.checks against the code text and the trade guidance they implement."""

import pytest

from atticsim.airflow import checks

FT2 = 0.3048**2  # m^2 (exact definition of the foot)
CFM = 0.3048**3 / 60.0  # m^3/s


def test_irc_1_in_150():
    # IRC 2018 R806.2: 1/150 of the vented area -> 1500 ft^2 attic needs 10 ft^2 net free area.
    required, denominator = checks.code_required_vent_area(1500 * FT2)
    assert denominator == 150
    assert required == pytest.approx(10 * FT2, rel=1e-12)


def test_irc_1_in_300_when_both_conditions_hold():
    # IRC 2018 R806.2 exception: 40-50 % upper vents (and, in zones 6-8, a Class I/II vapour retarder)
    # -> 1/300: 1500 ft^2 needs 5 ft^2.
    required, denominator = checks.code_required_vent_area(1500 * FT2, upper_vent_area=2.25 * FT2,
                                                           total_vent_area=5 * FT2, climate_zone=3)
    assert denominator == 300
    assert required == pytest.approx(5 * FT2, rel=1e-12)


@pytest.mark.parametrize("upper, zone, retarder", [
    (2.25, 6, False),  # zone 6 without the vapour retarder (2012 allowed either condition; 2018 needs both)
    (0.0, 6, True),    # vapour retarder but no upper vents
    (3.0, 3, False),   # 60 % upper vents: above the 50 % cap
    (1.5, 3, False),   # 30 % upper vents: below 40 %
])
def test_irc_falls_back_to_1_in_150(upper, zone, retarder):
    # IRC 2018 R806.2: the 1/300 exception needs both conditions.
    _, denominator = checks.code_required_vent_area(1500 * FT2, upper_vent_area=upper * FT2,
                                                    total_vent_area=5 * FT2, climate_zone=zone,
                                                    vapor_retarder=retarder)
    assert denominator == 150


def test_code_vent_area_warning():
    # 6 ft^2 on a 1500 ft^2 attic (1/250) misses 1/150 -> one warning naming the code section.
    warnings = checks.check_code_vent_area(1500 * FT2, 6 * FT2)
    assert len(warnings) == 1 and "R806.2" in warnings[0] and "1/150" in warnings[0]
    assert checks.check_code_vent_area(1500 * FT2, 10.5 * FT2) == []
    assert checks.code_vent_ratio(6 * FT2, 1500 * FT2) == pytest.approx(1 / 250, rel=1e-12)


def test_intake_area_for_fan_trade_rule():
    # A ventilation trade association's guidance: 1 ft^2 of net free intake per 300 cfm ->
    # a 1200 cfm fan needs 4 ft^2.
    assert checks.intake_area_for_fan(1200 * CFM) == pytest.approx(4 * FT2, rel=1e-12)


def test_intake_area_warning_carries_the_combustion_caution():
    warnings = checks.check_intake_area(2 * FT2, 1200 * CFM)
    assert len(warnings) == 1
    assert "qualified person" in warnings[0] and "combustion" in warnings[0]
    assert checks.check_intake_area(4.5 * FT2, 1200 * CFM) == []


def test_house_depressurisation_warning():
    # Common-practice limit of 5 Pa for houses with atmospherically vented combustion appliances.
    assert checks.DEPRESSURISATION_LIMIT == 5.0
    warnings = checks.check_house_depressurisation(6.2)
    assert len(warnings) == 1 and "6.2 Pa" in warnings[0] and "qualified person" in warnings[0]
    assert checks.check_house_depressurisation(4.0) == []
    assert checks.check_house_depressurisation(6.2, combustion_appliances=False) == []
    assert len(checks.check_house_depressurisation(3.0, limit=2.0)) == 1


@pytest.mark.parametrize("call, match", [
    (lambda: checks.code_required_vent_area(0.0), "attic floor area"),
    (lambda: checks.code_required_vent_area(100.0, upper_vent_area=1.0, total_vent_area=0.5), "cannot exceed"),
    (lambda: checks.code_required_vent_area(100.0, climate_zone=9), "climate zone"),
    (lambda: checks.intake_area_for_fan(-0.1), "fan flow"),
])
def test_bad_input_raises_value_error(call, match):
    with pytest.raises(ValueError, match=match):
        call()
