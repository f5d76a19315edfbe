"""Unit parsing at the edges, against definitions and worked check values."""

import math

import pytest

from atticsim.units import UnitError, to_si


def test_r_value_ip_to_si():
    # R-38 (ft2.F.h/Btu_IT) = 6.69 m2K/W; R-30 = 5.28; R-19 = 3.35 (NIST SP 811 factor 0.17611)
    assert to_si("R-38", "r_value") == pytest.approx(6.692, abs=0.001)
    assert to_si("R-30", "r_value") == pytest.approx(5.283, abs=0.001)
    assert to_si("R19", "r_value") == pytest.approx(3.346, abs=0.001)
    assert to_si("RSI 2.1", "r_value") == 2.1


def test_cfm_is_a_flow_not_centi_fermi():
    # 1 cfm = 0.3048^3 m3 / 60 s = 4.719474e-4 m3/s (definition of the foot, NIST SP 811)
    assert to_si("1000 cfm", "flow") == pytest.approx(0.4719474, rel=1e-6)


def test_temperatures_and_differences():
    assert to_si("100 degF", "temperature") == pytest.approx(37.7778, abs=1e-4)  # (100-32)*5/9
    assert to_si("300 K", "temperature") == pytest.approx(26.85)
    assert to_si("9 degF", "temperature_difference") == pytest.approx(5.0)


def test_pitch_and_shorthand():
    assert to_si("6/12", "angle") == pytest.approx(math.degrees(math.atan(0.5)))
    assert to_si("650 ft2", "area") == pytest.approx(650 * 0.09290304)
    assert to_si("0.1 in_wc", "pressure") == pytest.approx(24.90889)


@pytest.mark.parametrize("value,kind", [("5 kg", "area"), ("12 parsecs per fortnight", "flow"),
                                        ("warm", "temperature"), (True, "length")])
def test_wrong_units_are_rejected(value, kind):
    with pytest.raises(UnitError):
        to_si(value, kind)


def test_percent_strings_mean_percent():
    # a key held in percent takes "50 %" as 50 (not as the fraction 0.5); a fraction key takes it as 0.5
    assert to_si("50 %", "percent") == pytest.approx(50.0)
    assert to_si("50 percent", "percent") == pytest.approx(50.0)
    assert to_si(50, "percent") == 50.0
    assert to_si("50 %", "dimensionless") == pytest.approx(0.5)
