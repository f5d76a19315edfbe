"""Tests of atticsim.airflow.openings against handbook formulas and hand-worked examples."""


import numpy as np
import pytest

from atticsim.airflow import openings as op


# --- orifice ------------------------------------------------------------------------------------------

def test_orifice_flow_hand_worked():
    # Orifice equation worked by hand (ASHRAE Handbook Fundamentals, ventilation chapter):
    # A = 1 m^2, Cd = 0.61, rho = 1.2 kg/m^3, dp = 1 Pa -> 0.7875 m^3/s.
    assert op.orifice_flow(1.0, 1.0, cd=0.61, rho=1.2) == pytest.approx(0.7875, rel=1e-4)


def test_orifice_flow_signed_and_vectorised():
    # Same hand-worked example: the flow reverses with the pressure difference; 4 Pa doubles it (Q ~ sqrt dp).
    q = op.orifice_flow(np.array([-1.0, 0.0, 1.0, 4.0]), 1.0, cd=0.61, rho=1.2)
    assert q == pytest.approx([-0.7875, 0.0, 0.7875, 2 * 0.7875], rel=1e-4)


def test_orifice_pressure_inverts_the_hand_worked_example():
    # the same worked case: 0.7875 m^3/s through 1 m^2 at Cd 0.61, rho 1.2 needs 1 Pa.
    assert op.orifice_pressure(0.7875, 1.0, cd=0.61, rho=1.2) == pytest.approx(1.0, rel=2e-4)
    assert op.orifice_pressure(-0.7875, 1.0, cd=0.61, rho=1.2) == pytest.approx(-1.0, rel=2e-4)


# --- power law and leakage areas ---------------------------------------------------------------------------

def test_power_law_flow_hand_worked():
    # Q = C dp^n (ASTM E779 power law): C = 0.01 m^3/(s Pa^0.65), dp = 50 Pa:
    # 50^0.65 = exp(0.65 * 3.912023) = exp(2.542815) = e^2.5 * e^0.042815 = 12.18249 * 1.043745
    # = 12.7154 (hand-worked) -> 0.127154 m^3/s.
    assert op.power_law_flow(50.0, 0.01, 0.65) == pytest.approx(0.127154, rel=1e-5)
    assert op.power_law_flow(-50.0, 0.01, 0.65) == pytest.approx(-0.127154, rel=1e-5)


def test_ela_at_4pa_is_the_orifice_passing_the_same_flow():
    # Definition of the effective leakage area (ASHRAE Handbook Fundamentals, ventilation chapter):
    # at 4 Pa the leak passes what an orifice of area ELA with Cd = 1 passes.
    # Hand-worked: ELA = 0.05 m^2, rho = 1.2: Q4 = 0.05 sqrt(8 / 1.2) = 0.129099 m^3/s.
    c = op.leakage_coefficient(0.05, exponent=0.65)
    assert op.power_law_flow(4.0, c, 0.65) == pytest.approx(0.129099, rel=1e-5)
    assert op.leakage_area(c, exponent=0.65) == pytest.approx(0.05, rel=1e-12)


def test_eqla_at_10pa_with_cd_0611():
    # Canadian convention (CAN/CGSB-149.10, from memory): equivalent leakage area at 10 Pa, Cd = 0.611.
    # Hand-worked: EqLA = 0.1 m^2, rho = 1.2: Q10 = 0.611 * 0.1 * sqrt(20 / 1.2) = 0.249439 m^3/s.
    c = op.leakage_coefficient(0.1, exponent=0.7, dp_ref=10.0, cd=0.611)
    assert op.power_law_flow(10.0, c, 0.7) == pytest.approx(0.249439, rel=1e-5)


def test_ela_rule_of_thumb_from_cfm50():
    # Blower-door practice (from memory): ELA [in^2] ~ 0.055 x CFM50 for n = 0.65.
    cfm50 = 1500.0
    q50 = cfm50 * 0.3048**3 / 60.0  # m^3/s (exact foot)
    c = q50 / 50.0**0.65  # power law through the 50 Pa point
    ela_in2 = op.leakage_area(c, exponent=0.65) / 0.0254**2
    assert ela_in2 == pytest.approx(0.055 * cfm50, rel=0.02)


# --- stack and wind pressures ----------------------------------------------------------------------------------

def test_stack_pressure_per_metre_for_a_hot_attic():
    # worked by hand: about 0.84 Pa per metre of height for a 60 degC attic in 35 degC air
    # (ASHRAE stack pressure form); rho_o = 101325 / (287.055 * 308.15) = 1.1455 kg/m^3.
    rho_o = 101325.0 / (287.055 * 308.15)
    dp = op.stack_pressure(0.0, 1.0, 60.0, 35.0, rho_o)
    assert dp == pytest.approx(0.84, rel=0.01)
    # One metre above the neutral level the warm attic pushes air out: same size, opposite sign.
    assert op.stack_pressure(2.0, 1.0, 60.0, 35.0, rho_o) == pytest.approx(-dp, rel=1e-12)


def test_wind_pressure_hand_worked():
    # p = Cp rho V^2 / 2 (ASHRAE Handbook Fundamentals, airflow around buildings): 0.7 * 0.5 * 1.2 * 25 = 10.5 Pa.
    assert op.wind_pressure(5.0, 0.7, rho=1.2) == pytest.approx(10.5, rel=1e-12)
    assert op.wind_pressure(5.0, op.default_cp("ridge"), rho=1.2) < 0.0  # roof suction


def test_default_cp_kinds():
    # Low-rise Cp tables (AIVC, Liddament 1986): windward wall positive, leeward negative, roof suction.
    assert op.default_cp("gable_windward") > 0.0 > op.default_cp("gable_leeward")
    assert op.default_cp("ridge") < op.default_cp("soffit")
    with pytest.raises(ValueError, match="opening kind"):
        op.default_cp("chimney")


# --- ASHRAE reference forms ------------------------------------------------------------------------------------

def test_stack_flow_two_openings_hand_worked():
    # ASHRAE Handbook Fundamentals, ventilation chapter: Q = Cd A sqrt(2 g dH (Ti - To) / Ti).
    # A = 0.5 m^2, Cd = 0.65, dH = 1.5 m, 60 / 35 degC: 2 * 9.80665 * 1.5 * 25 / 333.15 = 2.20767;
    # sqrt = 1.48583; Q = 0.65 * 0.5 * 1.48583 = 0.482895 m^3/s (hand-worked).
    assert op.stack_flow_two_openings(0.5, 1.5, 60.0, 35.0, cd=0.65) == pytest.approx(0.482895, rel=1e-5)


def test_neutral_level_equal_openings_mid_height():
    # ASHRAE NPL form H / (1 + (A1/A2)^2 Ti/To): equal openings, equal temperatures -> mid-height.
    assert op.neutral_level_height(3.0, 0.2, 0.2, 20.0, 20.0) == pytest.approx(1.5, rel=1e-12)
    # A larger lower opening pulls the NPL down: A1/A2 = 2, 60 / 35 degC:
    # 333.15 / 308.15 = 1.081129; 1 / (1 + 4 * 1.081129) = 1 / 5.324517 = 0.187811 (hand-worked) of H.
    assert op.neutral_level_height(1.0, 0.2, 0.1, 60.0, 35.0) == pytest.approx(0.187811, rel=1e-5)


def test_wind_flow_and_superposition_hand_worked():
    # ASHRAE: Q_w = Cv A V; 0.55 * 0.5 m^2 * 3 m/s = 0.825 m^3/s. Root-sum-square with the stack
    # example above: sqrt(0.482895^2 + 0.825^2) = 0.955938 m^3/s (hand-worked).
    qw = op.wind_flow(0.5, 3.0, cv=0.55)
    assert qw == pytest.approx(0.825, rel=1e-12)
    assert op.combined_flow(0.482895, qw) == pytest.approx(0.955938, rel=1e-5)
    assert op.combined_flow(3.0, 4.0) == pytest.approx(5.0, rel=1e-12)


# --- bad input --------------------------------------------------------------------------------------------------

@pytest.mark.parametrize("call, match", [
    (lambda: op.orifice_flow(1.0, -0.1), "opening area"),
    (lambda: op.orifice_flow(float("nan"), 0.1), "pressure difference"),
    (lambda: op.power_law_flow(1.0, 0.01, 0.3), "between 0.5"),
    (lambda: op.stack_pressure(0.0, 1.0, 333.15, 308.15, 1.2), "degC"),
    (lambda: op.wind_pressure(-1.0, 0.5), "wind speed"),
    (lambda: op.leakage_coefficient(0.05, dp_ref=0.0), "reference pressure"),
])
def test_bad_input_raises_value_error(call, match):
    with pytest.raises(ValueError, match=match):
        call()
