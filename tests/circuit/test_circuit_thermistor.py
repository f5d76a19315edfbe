"""NTC thermistor models against the Beta and Steinhart-Hart equations and published coefficients."""

import math

import numpy as np
import pytest

from atticsim.circuit.thermistor import (
    Thermistor, ToleratedThermistor, beta_resistance, beta_temperature, fit_steinhart_hart,
    steinhart_hart_resistance, steinhart_hart_temperature)

# Widely published Steinhart-Hart coefficients of a 10 kOhm NTC (thermistor makers' and hobby references)
A, B, C = 1.129148e-3, 2.34125e-4, 8.76741e-8


def sh_temperature_by_hand(r):
    """1/T = A + B ln R + C (ln R)^3 (Steinhart & Hart, Deep-Sea Research 15, 1968), in degC."""
    x = math.log(r)
    return 1.0 / (A + B * x + C * x**3) - 273.15


def test_steinhart_hart_published_coefficients_give_10k_at_25c():
    # a "10 kOhm" NTC is 10 kOhm at 25 degC: the published coefficients give 25.00 degC at 10 000 ohm
    assert steinhart_hart_temperature(10e3, A, B, C) == pytest.approx(25.0, abs=0.005)
    assert steinhart_hart_resistance(25.0, A, B, C) == pytest.approx(10e3, rel=5e-5)


def test_steinhart_hart_resistance_at_0_25_50c():
    r = steinhart_hart_resistance(np.array([0.0, 25.0, 50.0]), A, B, C)
    # check values computed by hand from the Steinhart-Hart equation:
    # R(0) = 32650.4, R(25) = 9999.9, R(50) = 3601.0 ohm
    assert r == pytest.approx([32650.4, 9999.9, 3601.0], abs=0.1)
    # and they satisfy the explicit equation written out by hand above
    for t, ri in zip((0.0, 25.0, 50.0), r):
        assert sh_temperature_by_hand(ri) == pytest.approx(t, abs=1e-9)


def test_three_point_fit_recovers_published_coefficients():
    # three (T, R) points on the published curve, T from the explicit equation written by hand
    rs = [32650.0, 10000.0, 3600.0]
    ts = [sh_temperature_by_hand(r) for r in rs]
    a, b, c = fit_steinhart_hart(ts, rs)
    assert (a, b, c) == pytest.approx((A, B, C), rel=1e-7)


def test_least_squares_fit_of_many_points():
    # eleven points on the published curve, rounded to 0.01 ohm as a table would print them
    rs = np.round(steinhart_hart_resistance(np.linspace(-10.0, 90.0, 11), A, B, C), 2)
    ts = [sh_temperature_by_hand(r) for r in rs]
    th = Thermistor.from_table(ts, rs)
    # the fitted curve reproduces the table temperatures within 1 mK
    assert th.temperature(rs) == pytest.approx(ts, abs=1e-3)


def test_beta_model_check_values():
    r = beta_resistance(np.array([0.0, 40.0, 50.0]), 10e3, 3950.0)
    # check values computed by hand, R = R25 exp(B(1/T - 1/298.15)) for 10 k, B = 3950
    assert r == pytest.approx([33620.6, 5301.5, 3588.2], abs=0.1)
    # by hand: 10k * exp(3950 * (1/313.15 - 1/298.15)) at 40 degC
    assert r[1] == pytest.approx(10e3 * math.exp(3950.0 * (1 / 313.15 - 1 / 298.15)), rel=1e-12)
    assert beta_temperature(r, 10e3, 3950.0) == pytest.approx([0.0, 40.0, 50.0], abs=1e-9)


def test_thermistor_dataclass_vectorised_and_scalar():
    th = Thermistor.from_beta(10e3, 3950.0)
    assert isinstance(th.resistance(25.0), float)
    assert th.resistance(25.0) == pytest.approx(10e3, rel=1e-12)  # R25 by definition
    temps = np.array([[0.0, 10.0], [20.0, 30.0]])
    assert th.temperature(th.resistance(temps)) == pytest.approx(temps, abs=1e-9)
    sh = Thermistor.from_steinhart_hart(A, B, C)
    assert sh.r25 == pytest.approx(10e3, rel=5e-5)
    assert sh.temperature(sh.resistance(temps)) == pytest.approx(temps, abs=1e-9)


def test_tolerated_beta_thermistor_is_the_beta_model_with_scaled_parameters():
    # R25 +2 %, Beta -1 %: the Beta equation with R25 = 10.2 k and B = 3910.5
    tol = ToleratedThermistor(Thermistor.from_beta(10e3, 3950.0), 1.02, 0.99)
    t = np.array([0.0, 40.0, 70.0])
    assert tol.resistance(t) == pytest.approx(beta_resistance(t, 10.2e3, 3950.0 * 0.99), rel=1e-12)
    assert tol.temperature(tol.resistance(t)) == pytest.approx(t, abs=1e-9)


def test_bad_input_raises():
    with pytest.raises(ValueError, match="R25"):
        beta_resistance(25.0, -10e3, 3950.0)
    with pytest.raises(ValueError, match="resistance"):
        beta_temperature(0.0, 10e3, 3950.0)
    with pytest.raises(ValueError, match="absolute zero|-273.15"):
        beta_resistance(-300.0, 10e3, 3950.0)
    with pytest.raises(ValueError, match="at least 3"):
        fit_steinhart_hart([0.0, 25.0], [32650.0, 10000.0])
    with pytest.raises(ValueError, match="NTC"):
        fit_steinhart_hart([0.0, 25.0, 50.0], [3600.0, 10000.0, 32650.0])
    with pytest.raises(ValueError, match="kind"):
        Thermistor("ptc", (1.0, 2.0))
    with pytest.raises(ValueError, match="B must be positive"):
        Thermistor.from_steinhart_hart(A, -B, C)
