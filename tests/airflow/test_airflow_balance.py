"""Tests of the attic pressure balance against ASHRAE reference forms, closed-form operating points,
mass conservation and the monotonic facts a practitioner knows."""

import math

import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from atticsim.airflow.balance import (AirflowSolveError, AtticAirPaths, CeilingLeak, Fan, HouseEnvelope, Vent,
                                      conditioned_air_load, house_depressurisation, solve_attic_balance)
from atticsim.airflow.fan import FanCurve
from atticsim.airflow.openings import combined_flow, neutral_level_height, stack_flow_two_openings
from atticsim.constants import GRAVITY, KELVIN, P_STANDARD, R_DRY_AIR


def temp_for_density(rho):
    """Air temperature [degC] at which dry air at standard pressure has density rho (ideal gas)."""
    return P_STANDARD / (R_DRY_AIR * rho) - KELVIN


# --- fan operating point against closed forms --------------------------------------------------------------

LINEAR = FanCurve([0.0, 20.0, 40.0], [0.6, 0.3, 0.0], 150.0, rating_density=1.15)


def _one_intake_with_fan(curve, area=0.2, cd=0.6):
    # No wind, no stack (equal temperatures): the vent is the whole system curve dp = rho/2 (Q / Cd A)^2.
    return AtticAirPaths(vents=[Vent(area, 0.0, cd=cd, cp=0.0)], fan=Fan(curve, 1.0, cp=0.0))


def test_linear_fan_curve_against_quadratic_system_curve():
    # worked by hand: linear curve 40 Pa / 0.6 m^3/s against Cd 0.6, A 0.2 m^2, rho 1.15
    # -> Q = 0.4685 m^3/s, dp = 8.77 Pa.
    t = temp_for_density(1.15)
    r = solve_attic_balance(_one_intake_with_fan(LINEAR), t, t, fan_on=True)
    assert r.fan_flow == pytest.approx(0.4685, rel=2e-4)
    assert r.fan_pressure == pytest.approx(8.77, rel=1e-3)
    # Closed form: 40 (1 - Q / 0.6) = K Q^2, K = rho / (2 (Cd A)^2) -> quadratic formula.
    k = 1.15 / (2.0 * (0.6 * 0.2) ** 2)
    q = (-40.0 / 0.6 + math.sqrt((40.0 / 0.6) ** 2 + 4.0 * k * 40.0)) / (2.0 * k)
    assert r.fan_flow == pytest.approx(q, rel=1e-9)
    assert r.fan_pressure == pytest.approx(k * q * q, rel=1e-9)
    assert r.pressure_attic == pytest.approx(-k * q * q, rel=1e-9)  # the attic sits at minus the fan's rise


def test_affinity_scaling_of_the_operating_point():
    # worked by hand: at 80 % speed the operating point scales exactly to 0.800 x (fan laws with a
    # quadratic system curve; AMCA 201).
    t = temp_for_density(1.15)
    paths = _one_intake_with_fan(LINEAR)
    full = solve_attic_balance(paths, t, t, fan_on=True)
    slow = solve_attic_balance(paths, t, t, fan_on=True, fan_speed_ratio=0.8)
    assert slow.fan_flow / full.fan_flow == pytest.approx(0.800, rel=1e-9)
    assert slow.fan_pressure / full.fan_pressure == pytest.approx(0.64, rel=1e-9)
    assert slow.fan_power / full.fan_power == pytest.approx(0.512, rel=1e-9)


@pytest.mark.parametrize("points, tol", [
    # 11 published points: PCHIP error at this operating point measured at 8e-6; tolerance 1e-4.
    (11, 1e-4),
    # 3 points as makers publish them: measured 9e-4 off the true quadratic; tolerance 2e-3.
    (3, 2e-3),
])
def test_quadratic_fan_curve_against_quadratic_system_curve(points, tol):
    # Fan dp = p0 (1 - (Q/Qmax)^2), system dp = K Q^2 -> Q = sqrt(p0 / (K + p0 / Qmax^2)) (closed form).
    p0, qmax, rho = 50.0, 0.7, 1.2
    pressures = [0.9 * p0 * i / (points - 1) for i in range(points)]
    curve = FanCurve(pressures, [qmax * math.sqrt(1.0 - p / p0) for p in pressures], 100.0)
    t = temp_for_density(rho)
    r = solve_attic_balance(_one_intake_with_fan(curve, area=0.15), t, t, fan_on=True)
    k = rho / (2.0 * (0.6 * 0.15) ** 2)
    q = math.sqrt(p0 / (k + p0 / qmax**2))
    assert r.fan_flow == pytest.approx(q, rel=tol)
    assert r.fan_pressure == pytest.approx(k * q * q, rel=2 * tol)
    assert r.fan_on_published_curve


# --- stack effect against the ASHRAE two-opening forms ------------------------------------------------------

def _two_openings(a_low, a_high, h, cp_low=0.0, cp_high=0.0, cd=0.65):
    return AtticAirPaths(vents=[Vent(a_low, 0.0, cd=cd, cp=cp_low, name="low"),
                                Vent(a_high, h, cd=cd, cp=cp_high, name="high")])


@pytest.mark.parametrize("a_low, a_high", [(0.1, 0.1), (0.2, 0.1), (0.05, 0.15)])
def test_stack_neutral_level_and_flow_match_ashrae(a_low, a_high):
    # ASHRAE Handbook Fundamentals, ventilation chapter: NPL of two openings h = H / (1 + (A1/A2)^2 Ti/To),
    # and the inflow through the lower opening Q = Cd A1 sqrt(2 g h (Ti - To) / Ti). Both forms carry the
    # in- and outflow at their own densities, as the solver does, so they agree to round-off.
    t_in, t_out, h = 60.0, 35.0, 2.0
    r = solve_attic_balance(_two_openings(a_low, a_high, h), t_in, t_out)
    # Solver's neutral level: where outdoor minus attic pressure is zero, -p_a - (rho_o - rho_a) g z = 0.
    z_npl = -r.pressure_attic / ((r.density_outdoor - r.density_attic) * GRAVITY)
    h_npl = neutral_level_height(h, a_low, a_high, t_in, t_out)
    assert z_npl == pytest.approx(h_npl, rel=1e-9)
    q_low = r.path("low").volume_flow
    assert q_low == pytest.approx(stack_flow_two_openings(a_low, h_npl, t_in, t_out, cd=0.65), rel=1e-9)


@pytest.mark.parametrize("t_in, t_out, tol", [(60.0, 35.0, 0.025), (21.0, 20.0, 0.001)])
def test_stack_flow_equal_openings_against_ashrae_mid_height_form(t_in, t_out, tol):
    # ASHRAE's equation with dH_NPL = H/2 for equal openings (ASHRAE Handbook Fundamentals, ventilation
    # chapter). That form treats in- and outflow at one density; the exact NPL moves by the factor Ti/To
    # (ASHRAE's own NPL form), about (Ti - To) / (4 Ti) in flow: 1.9 % at 60 / 35 degC, 0.09 % at 21 / 20.
    a, h = 0.1, 2.0
    r = solve_attic_balance(_two_openings(a, a, h), t_in, t_out)
    q_ref = stack_flow_two_openings(a, h / 2.0, t_in, t_out, cd=0.65)
    assert r.path("low").volume_flow == pytest.approx(q_ref, rel=tol)
    assert -r.path("high").volume_flow == pytest.approx(q_ref, rel=3 * tol)  # leaves at attic density


# --- stack + wind against the root-sum-square rule --------------------------------------------------------------

def _lower_inflow(t_in, t_out, wind, cp_low, cp_high):
    paths = _two_openings(0.1, 0.1, 2.0, cp_low, cp_high, cd=0.6)
    return solve_attic_balance(paths, t_in, t_out, wind_speed=wind).path("low").volume_flow


@pytest.mark.parametrize("wind", [1.0, 2.0, 3.0])
def test_stack_and_wind_aiding_follow_superposition(wind):
    # ASHRAE Handbook Fundamentals, ventilation chapter: Q = sqrt(Qs^2 + Qw^2). For one flow loop where
    # wind (windward vent low, Cp +0.6; leeward high, Cp -0.3) and stack push the same way the pressures
    # add and Q ~ sqrt(dp), so the rule is exact at one density; carrying outflow at attic density
    # (55 vs 35 degC) moves it by about 1 %: tolerance 2 %.
    qs = _lower_inflow(55.0, 35.0, 0.0, 0.6, -0.3)
    qw = _lower_inflow(35.0, 35.0, wind, 0.6, -0.3)
    q = _lower_inflow(55.0, 35.0, wind, 0.6, -0.3)
    assert q == pytest.approx(combined_flow(qs, qw), rel=0.02)
    assert q > max(qs, qw)


@pytest.mark.parametrize("wind", [1.0, 2.0, 3.0])
def test_stack_and_wind_opposing_stay_below_superposition(wind):
    # Same rule; with the windward vent high the forces oppose and partly cancel, so the network flow is
    # below the root-sum-square estimate (the rule's known weakness, ASHRAE: "approximate").
    qs = abs(_lower_inflow(55.0, 35.0, 0.0, -0.3, 0.6))
    qw = abs(_lower_inflow(35.0, 35.0, wind, -0.3, 0.6))
    q = abs(_lower_inflow(55.0, 35.0, wind, -0.3, 0.6))
    assert q < combined_flow(qs, qw)


# --- the house: series leakage and depressurisation ----------------------------------------------------------------

def test_house_pressure_of_two_leaks_in_series():
    # Two power-law leaks with a common exponent in series (ceiling, then envelope), no stack or wind:
    # C_e |p_h|^n = C_c |p_h - p_a|^n -> p_h = p_a r / (1 + r), r = (C_c / C_e)^(1/n) (closed form;
    # the basis of zonal pressure diagnostics in blower-door practice).
    cc, ce, n = 0.01, 0.03, 0.65
    paths = AtticAirPaths(vents=[Vent(0.05, 0.0, cp=0.0)], fan=Fan(LINEAR, 1.0, cp=0.0),
                          ceiling_leaks=[CeilingLeak(cc, n)], house=HouseEnvelope(ce, n, cp=0.0))
    r = solve_attic_balance(paths, 30.0, 30.0, temp_house=30.0, fan_on=True)
    ratio = (cc / ce) ** (1.0 / n)
    assert r.pressure_house == pytest.approx(r.pressure_attic * ratio / (1.0 + ratio), rel=1e-9)
    assert r.ceiling_flow == pytest.approx(r.envelope_flow, rel=1e-9)
    assert r.ceiling_flow > 0.0  # conditioned air drawn into the depressurised attic


def test_house_depressurisation_is_fan_on_minus_fan_off():
    # Combustion-safety practice reads the fan's effect against the natural baseline.
    paths = AtticAirPaths(vents=[Vent(0.05, 0.0), Vent(0.05, 2.0, "ridge")], fan=Fan(LINEAR, 1.5),
                          ceiling_leaks=[CeilingLeak.from_leakage_area(0.01)],
                          house=HouseEnvelope.from_leakage_area(0.03))
    dp = house_depressurisation(paths, 50.0, 32.0, 24.0, wind_speed=2.0)
    off = solve_attic_balance(paths, 50.0, 32.0, 24.0, wind_speed=2.0)
    on = solve_attic_balance(paths, 50.0, 32.0, 24.0, wind_speed=2.0, fan_on=True)
    assert dp == pytest.approx(off.pressure_house - on.pressure_house, rel=1e-12)
    assert dp > 0.0


def test_conditioned_air_load_hand_worked():
    # ASHRAE Handbook Fundamentals, ventilation chapter: q_s = m cp dt, q_l = m h_fg dW.
    # 0.1 kg/s, 35 vs 24 degC: 0.1 * 1006 * 11 = 1106.6 W; W 0.018 vs 0.010: 0.1 * 2.501e6 * 0.008 = 2000.8 W.
    sensible, latent = conditioned_air_load(0.1, 35.0, 24.0, 0.018, 0.010)
    assert sensible == pytest.approx(1106.6, rel=1e-9)
    assert latent == pytest.approx(2000.8, rel=1e-9)
    assert conditioned_air_load(0.1, 35.0, 24.0)[1] == 0.0


# --- monotonic facts -------------------------------------------------------------------------------------------------

def _house_with_fan(intake_area, speed=1.0):
    curve = FanCurve([0.0, 24.9, 49.8], [0.66, 0.55, 0.33], [200.0, 190.0, 175.0])
    paths = AtticAirPaths(vents=[Vent(intake_area, 0.1, "soffit"), Vent(0.05, 2.5, "ridge")],
                          fan=Fan(curve, 2.0, "gable"), ceiling_leaks=[CeilingLeak.from_leakage_area(0.015)],
                          house=HouseEnvelope.from_leakage_area(0.04))
    return solve_attic_balance(paths, 55.0, 33.0, temp_house=24.0, wind_speed=1.5, fan_on=True,
                               fan_speed_ratio=speed)


def test_more_intake_area_draws_less_air_from_the_house():
    # Practitioners' fact (ventilation trade guidance, field studies of powered attic ventilators):
    # starved intakes make the fan pull conditioned air through the ceiling.
    drawn = [_house_with_fan(a).ceiling_flow for a in (0.02, 0.05, 0.1, 0.2, 0.4)]
    assert all(b < a for a, b in zip(drawn, drawn[1:]))
    assert drawn[0] > 0.0


def test_faster_fan_exhausts_more_and_draws_more():
    results = [_house_with_fan(0.1, s) for s in (0.5, 0.75, 1.0, 1.25)]
    exhaust = [r.attic_exhaust_flow for r in results]
    assert all(b > a for a, b in zip(exhaust, exhaust[1:]))
    drawn = [r.ceiling_flow for r in results]
    assert all(b > a for a, b in zip(drawn, drawn[1:]))
    power = [r.fan_power for r in results]
    assert all(b > a for a, b in zip(power, power[1:]))


# --- mass conservation over a wide range of inputs -----------------------------------------------------------------

vents_st = st.lists(st.builds(Vent, area=st.floats(0.001, 0.5), height=st.floats(-0.5, 4.0),
                              kind=st.sampled_from(["soffit", "gable", "ridge", "roof_vent", "gable_windward"]),
                              cd=st.floats(0.5, 0.7)), min_size=1, max_size=4)


@st.composite
def fans(draw):
    q0 = draw(st.floats(0.1, 1.5))
    p_shut = draw(st.floats(20.0, 150.0))
    # Three published points on a concave curve dp = p_shut (1 - (Q/q0)^2).
    pressures = [0.0, 0.3 * p_shut, 0.6 * p_shut]
    curve = FanCurve(pressures, [q0 * math.sqrt(1.0 - p / p_shut) for p in pressures],
                     draw(st.floats(50.0, 400.0)))
    return Fan(curve, draw(st.floats(0.0, 4.0)), draw(st.sampled_from(["gable", "roof_vent"])),
               idle_area=draw(st.just(0.0) | st.floats(1e-4, 0.1)))


@settings(max_examples=150, deadline=None, database=None, suppress_health_check=[HealthCheck.too_slow])
@given(vents=vents_st, fan=st.none() | fans(), fan_on=st.booleans(), speed=st.floats(0.3, 1.3),
       ceiling=st.none() | st.builds(CeilingLeak, coefficient=st.floats(1e-4, 0.05), exponent=st.floats(0.5, 1.0),
                                     height=st.floats(0.0, 0.3)),
       house=st.none() | st.builds(HouseEnvelope, coefficient=st.floats(1e-3, 0.2), exponent=st.floats(0.5, 1.0),
                                   height=st.floats(-5.0, -0.5)),
       t_out=st.floats(-20.0, 45.0), d_attic=st.floats(-10.0, 40.0), t_house=st.floats(15.0, 30.0),
       wind=st.floats(0.0, 15.0))
def test_mass_is_conserved(vents, fan, fan_on, speed, ceiling, house, t_out, d_attic, t_house, wind):
    # Mass conservation: flows in = flows out within 1e-6 relative, in the attic and in the house,
    # summed here from the reported path flows (not from the solver's own residual field).
    paths = AtticAirPaths(vents=vents, fan=fan, ceiling_leaks=[ceiling] if ceiling else [], house=house)
    r = solve_attic_balance(paths, t_out + d_attic, t_out, temp_house=t_house, wind_speed=wind,
                            fan_on=fan_on, fan_speed_ratio=speed)
    attic = [p.mass_flow for p in r.paths if p.kind != "envelope"]
    m_in, m_out = sum(m for m in attic if m > 0), -sum(m for m in attic if m < 0)
    assert abs(m_in - m_out) <= 1e-6 * max(m_in, m_out) + 1e-12
    if ceiling is not None and house is not None:
        env = r.path("house envelope").mass_flow
        assert abs(env - r.ceiling_mass_flow) <= 1e-6 * max(abs(env), abs(r.ceiling_mass_flow)) + 1e-12
    for p in r.paths:  # every volume flow is its mass flow at one of the three densities
        if p.mass_flow != 0.0:
            rho = p.mass_flow / p.volume_flow
            assert min(abs(rho - d) for d in (r.density_outdoor, r.density_attic, r.density_house)) < 1e-9


# --- errors ------------------------------------------------------------------------------------------------------------

def test_no_open_path_raises_value_error():
    with pytest.raises(ValueError, match="no open path"):
        solve_attic_balance(AtticAirPaths(vents=[Vent(0.0, 0.0)]), 40.0, 30.0)


def test_missing_house_temperature_raises_value_error():
    paths = AtticAirPaths(vents=[Vent(0.1, 0.0)], ceiling_leaks=[CeilingLeak(0.01)])
    with pytest.raises(ValueError, match="house temperature"):
        solve_attic_balance(paths, 40.0, 30.0)


def test_kelvin_instead_of_celsius_raises_value_error():
    with pytest.raises(ValueError, match="degC"):
        solve_attic_balance(AtticAirPaths(vents=[Vent(0.1, 0.0)]), 313.15, 303.15)


def test_no_sign_change_is_an_error_not_a_silent_answer():
    # A fan whose shut-off pressure lies beyond the search range in a sealed attic: no root is found.
    absurd = FanCurve([0.0, 5e7], [1.0, 0.5], 100.0)
    with pytest.raises(AirflowSolveError, match="does not change sign"):
        solve_attic_balance(AtticAirPaths(fan=Fan(absurd, 1.0)), 40.0, 30.0, fan_on=True)


# --- the compiled root finds against scipy's brentq -----------------------------------------------------

def _reference_pressures(paths, t_attic, t_outdoor, t_house, wind, fan_on):
    """(p_attic, p_house) by scipy.optimize.brentq, nested, on net flows written out here from the path laws
    (orifice and power law, ASHRAE Handbook Fundamentals, ventilation chapter; air densities of the upstream
    zone), independent of atticsim's compiled kernel. Plain laws, without atticsim's linear run below 1e-4 Pa
    (the test keeps to cases whose paths all see more than 1e-3 Pa)."""
    from scipy.optimize import brentq

    from atticsim.air import air_density

    rho_o, rho_a, rho_h = (float(air_density(t, P_STANDARD)) for t in (t_outdoor, t_attic, t_house))
    qw = 0.5 * rho_o * wind**2

    def orifice(dp, k, up, down):
        return math.copysign(k * math.sqrt(2.0 * (up if dp >= 0 else down) * abs(dp)), dp)

    def power(dp, c, n, up, down):
        return math.copysign((up if dp >= 0 else down) * c * abs(dp) ** n, dp)

    h = paths.house
    env = h.cp * qw - (rho_o - rho_h) * GRAVITY * h.height

    def house_net(p_h, p_a):
        m = power(env - p_h, h.coefficient, h.exponent, rho_o, rho_h)
        for c in paths.ceiling_leaks:
            m -= power(p_h - p_a - (rho_h - rho_a) * GRAVITY * c.height, c.coefficient, c.exponent, rho_h, rho_a)
        return m

    def house(p_a):
        return brentq(house_net, -1e4, 1e4, args=(p_a,), xtol=1e-14, rtol=1e-14)

    def attic_net(p_a):
        m = sum(orifice(v.wind_cp * qw - (rho_o - rho_a) * GRAVITY * v.height - p_a, v.cd * v.area, rho_o, rho_a)
                for v in paths.vents)
        p_h = house(p_a)
        for c in paths.ceiling_leaks:
            m += power(p_h - p_a - (rho_h - rho_a) * GRAVITY * c.height, c.coefficient, c.exponent, rho_h, rho_a)
        if fan_on:
            f = paths.fan
            rise = f.wind_cp * qw - (rho_o - rho_a) * GRAVITY * f.height - p_a
            q = float(f.curve.flow_at(rise, 1.0, rho_a))
            m -= q * (rho_a if q >= 0 else rho_o)
        return m

    p_a = brentq(attic_net, -1e4, 1e4, xtol=1e-14, rtol=1e-14)
    return p_a, house(p_a)


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(soffit=st.floats(0.02, 1.0), ridge=st.floats(0.0, 0.5), leak=st.floats(0.002, 0.05),
       envelope=st.floats(0.02, 0.3), t_attic=st.floats(15.0, 65.0), t_outdoor=st.floats(5.0, 40.0),
       wind=st.floats(0.0, 8.0), fan_on=st.booleans())
def test_compiled_balance_matches_scipy_brentq(soffit, ridge, leak, envelope, t_attic, t_outdoor, wind, fan_on):
    # scipy.optimize.brentq (a general-purpose reference root finder) on the same balance written out in
    # the test: the compiled root finds must land on the same pressures
    vents = [Vent(soffit, 0.1, kind="soffit")] + ([Vent(ridge, 2.2, kind="ridge")] if ridge > 0.01 else [])
    paths = AtticAirPaths(vents=vents, fan=Fan(FanCurve([0.0, 30.0, 60.0], [0.7, 0.45, 0.0], 120.0), 1.8),
                          ceiling_leaks=[CeilingLeak.from_leakage_area(leak)],
                          house=HouseEnvelope.from_leakage_area(envelope))
    r = solve_attic_balance(paths, t_attic, t_outdoor, temp_house=24.0, wind_speed=wind, fan_on=fan_on)
    assume(all(abs(p.pressure_difference) > 1e-3 for p in r.paths))
    p_a, p_h = _reference_pressures(paths, t_attic, t_outdoor, 24.0, wind, fan_on)
    assert r.pressure_attic == pytest.approx(p_a, rel=1e-9, abs=1e-9)
    assert r.pressure_house == pytest.approx(p_h, rel=1e-9, abs=1e-9)
