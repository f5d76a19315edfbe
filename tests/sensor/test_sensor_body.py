"""Tests of atticsim.sensor.body: datasheet-typical figures, step responses and the bench check."""

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from atticsim.sensor import PRESETS, SensorBody, preset

BEAD = preset("epoxy-bead-2mm")
# Makers' time-constant test (thermistor makers' catalogue notes; IEC 60539-1 defines the 63.2 %):
# from 50 degC into still air at 25 degC, until 25 + 25 e^-1 = 34.197 degC.
STEP_FROM, STEP_AIR = 50.0, 25.0
STEP_END = STEP_AIR + (STEP_FROM - STEP_AIR) * math.exp(-1.0)


def makers_time_constant(body, air_speed):
    return body.response_time(STEP_FROM, STEP_END, air_speed, STEP_AIR)


def integrate(body, air_speed, temp_air, temp_start, t_end, power=0.0, events=None):
    """C dT/dt = P - G(T) (T - T_air), with G recomputed from the correlations at every instant."""
    c = body.heat_capacity

    def rhs(_t, y):
        g = body.conductance(air_speed, temp_air, y[0])
        return [(power - g * (y[0] - temp_air)) / c]

    return solve_ivp(rhs, (0.0, t_end), [temp_start], method="RK45", rtol=1e-9, atol=1e-9,
                     dense_output=True, events=events)


# --- datasheet-typical figures ------------------------------------------------------------------------

def test_epoxy_bead_dissipation_constant_in_datasheet_range():
    # Makers' definition: the power that self-heats the part by 1 K in still air at 25 degC. Epoxy bead
    # and chip thermistors: 0.5-1 mW/K in still air (thermistor makers' application pages).
    delta = BEAD.dissipation_constant(0.0, 25.0, 26.0)
    assert 0.5e-3 <= delta <= 1.0e-3
    # The same figure read the other way: that power self-heats the bead by 1 K.
    assert BEAD.self_heating_rise(delta, 0.0, 25.0) == pytest.approx(1.0, rel=1e-6)


def test_epoxy_bead_still_air_time_constant_in_datasheet_range():
    # Epoxy bead/disc thermistors: 10-30 s in still air (makers' figures, from memory).
    tau = makers_time_constant(BEAD, 0.0)
    assert 10.0 <= tau <= 30.0


@pytest.mark.parametrize("air_speed", [2.0, 2.5, 3.0])
def test_moving_air_shortens_the_time_constant_two_to_four_times(air_speed):
    # Makers' application pages: moving air cuts a bead's time constant about 2-4x (epoxy bead 10-30 s
    # still, 3-10 s moving; dissipation "up to 4x" in moving air), from memory.
    ratio = makers_time_constant(BEAD, 0.0) / makers_time_constant(BEAD, air_speed)
    assert 2.0 <= ratio <= 4.0
    tau_moving = makers_time_constant(BEAD, air_speed)
    assert 3.0 <= tau_moving <= 10.0


def test_stainless_probe_time_constants_in_datasheet_range():
    # Stainless probes: 60-180 s in still air, 20-60 s in moving air (makers' figures, from memory).
    probe = preset("probe-6mm")
    assert 60.0 <= makers_time_constant(probe, 0.0) <= 180.0
    assert 20.0 <= makers_time_constant(probe, 2.5) <= 60.0


def test_smaller_bodies_respond_faster():
    # Makers' ranges (from memory): glass bead 0.5-5 s < epoxy bead 10-30 s < probe 60-180 s.
    taus = [makers_time_constant(preset(n), 0.0) for n in ("glass-bead-1mm", "epoxy-bead-2mm", "probe-6mm")]
    assert taus[0] < taus[1] < taus[2]


def test_radiative_conductance_linearised_check_value():
    # ASHRAE Handbook Fundamentals: h_r = 4 eps sigma T^3 = 5.51 W/m^2K at eps 0.9, 300 K.
    g = BEAD.radiative_conductance(26.85, 26.85)
    assert g / BEAD.area == pytest.approx(5.51, rel=2e-3)
    # Exact secant form: G (T_s - T_r) = eps sigma A (T_s^4 - T_r^4) (Stefan-Boltzmann law).
    ts, tr = 330.0, 290.0
    q = BEAD.radiative_conductance(tr - 273.15, ts - 273.15) * (ts - tr)
    assert q == pytest.approx(0.9 * 5.670374419e-8 * BEAD.area * (ts ** 4 - tr ** 4), rel=1e-12)


def test_self_heating_of_a_one_milliwatt_per_kelvin_bead():
    # Makers' application pages: a divider drawing ~3 mW self-heats a 1 mW/K bead by ~3 K.
    # Free convection grows with the rise, so the 3 K is reached with a little less: 2.5-3 K.
    bead = SensorBody("bead", 2.4e-3, mass=1.3e-5, specific_heat=900.0, datasheet_dissipation_constant=1e-3)
    assert bead.dissipation_constant(0.0, 25.0, 26.0) == pytest.approx(1e-3, rel=1e-9)
    assert 2.5 <= bead.self_heating_rise(3e-3, 0.0, 25.0) <= 3.0
    # Moving air carries the heat away better: less self-heating.
    assert bead.self_heating_rise(3e-3, 2.0, 25.0) < 0.5 * bead.self_heating_rise(3e-3, 0.0, 25.0)


def test_datasheet_time_constant_defines_the_heat_capacity():
    # A body given by its datasheet time constant reproduces that figure under the makers' test, and
    # its heat capacity makes C / G agree with the mass-based bead of equal C.
    body = SensorBody("bead", 2.4e-3, datasheet_time_constant=BEAD.response_time(STEP_FROM, STEP_END, 0.0,
                                                                                 STEP_AIR))
    assert body.heat_capacity == pytest.approx(BEAD.heat_capacity, rel=1e-9)
    moving = SensorBody("bead", 2.4e-3, datasheet_time_constant=5.0, datasheet_air_speed=2.5)
    assert makers_time_constant(moving, 2.5) == pytest.approx(5.0, rel=1e-9)


# --- step responses ---------------------------------------------------------------------------------------

@pytest.mark.parametrize("air_speed", [0.0, 2.5])
def test_step_response_matches_first_order_form(air_speed):
    # Lumped body, C dT/dt = G (T_air - T) (Incropera & DeWitt section 5.1): theta/theta0 = exp(-t/tau).
    # Integrated numerically with G recomputed from the correlations at each instant (free convection
    # makes it nonlinear), compared with the analytic form using tau = C / G evaluated at the mean film
    # temperature of the first time constant: theta_mean = theta0 (1 - e^-1) (time mean of the
    # exponential over [0, tau]).
    temp_air, theta0 = 22.0, 10.0
    tau = BEAD.time_constant(air_speed, temp_air, temp_air + theta0 * (1.0 - math.exp(-1.0)))
    sol = integrate(BEAD, air_speed, temp_air, temp_air + theta0, 3.0 * tau)
    t = np.linspace(0.0, 3.0 * tau, 301)
    theta = sol.sol(t)[0] - temp_air
    assert np.max(np.abs(theta / theta0 - np.exp(-t / tau))) < 0.02
    # The 63.2 % time found on the numerical solution is within 3 % of tau.
    t63 = _crossing(sol, temp_air + theta0 * math.exp(-1.0))
    assert t63 == pytest.approx(tau, rel=0.03)


def test_still_air_nonlinearity_matters():
    # Free convection in still air: the small-signal tau (sensor at the air temperature, pure conduction
    # Nu = 2) overstates the response time of a 10 K step by more than 10 %.
    temp_air, theta0 = 22.0, 10.0
    tau_small = BEAD.time_constant(0.0, temp_air)
    sol = integrate(BEAD, 0.0, temp_air, temp_air + theta0, 3.0 * tau_small)
    t63 = _crossing(sol, temp_air + theta0 * math.exp(-1.0))
    assert t63 < 0.9 * tau_small


def _crossing(sol, level):
    """Time where the dense solution first falls through ``level`` (bisection on the interpolant)."""
    lo, hi = sol.t[0], sol.t[-1]
    assert sol.sol(lo)[0] > level > sol.sol(hi)[0]
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if sol.sol(mid)[0] > level else (lo, mid)
    return 0.5 * (lo + hi)


@pytest.mark.parametrize("air_speed, power", [(0.0, 0.0), (0.0, 0.6e-3), (1.5, 0.6e-3)])
def test_response_time_quadrature_agrees_with_numerical_integration(air_speed, power):
    # Two independent integrations of the same equation: Gauss-Legendre quadrature in the library and
    # an adaptive Runge-Kutta solution here.
    temp_air, start, end = 22.0, 32.0, 25.0
    sol = integrate(BEAD, air_speed, temp_air, start, 200.0, power=power)
    assert BEAD.response_time(start, end, air_speed, temp_air, power=power) == pytest.approx(
        _crossing(sol, end), rel=1e-4)


# --- the bench check ---------------------------------------------------------------------------------

@pytest.mark.parametrize("power", [0.0, 0.625e-3])
def test_bench_check_warmed_bead_keeps_the_fan_on_for_tens_of_seconds(power):
    # A fact of the trade (bench observation, no published source): a bead warmed a few kelvin past the
    # switch-on point and released into still room air at 22 degC, with 3-4 K of comparator hysteresis,
    # keeps the fan running for about 20-30 s. Here: off at 25 degC, on at 25 + 3.5 = 28.5 degC, bead
    # warmed to 29.5 degC; self-heating 0 or 0.625 mW (10 kOhm NTC against 10 kOhm on 5 V:
    # P = V^2 / (4 R) = 25 / 40000 W, hand-worked). Asserted: 10 s < t < 60 s.
    room, t_off = 22.0, 25.0
    t_on = t_off + 3.5
    start = t_on + 1.0

    def reached_off(_t, y):
        return y[0] - t_off
    reached_off.terminal = True
    reached_off.direction = -1

    sol = integrate(BEAD, 0.0, room, start, 600.0, power=power, events=reached_off)
    assert sol.status == 1, "the sensor never cooled to the off point"
    t_release = sol.t_events[0][0]
    assert 10.0 < t_release < 60.0
    assert BEAD.response_time(start, t_off, 0.0, room, power=power) == pytest.approx(t_release, rel=1e-4)


# --- presets and input checks -------------------------------------------------------------------------------

def test_presets_are_complete_and_named():
    assert set(PRESETS) == {"epoxy-bead-2mm", "glass-bead-1mm", "disc-5mm", "probe-6mm"}
    for name, body in PRESETS.items():
        assert body.heat_capacity > 0.0 and body.area > 0.0 and body.name
    with pytest.raises(ValueError, match="sensor preset must be one of"):
        preset("thermocouple")


def test_disc_uses_the_sphere_of_equal_area():
    # Disc of diameter D and thickness D/2: area pi D^2/2 + pi D^2/2 = pi D^2, so D_eq = D (hand-worked).
    disc = SensorBody("disc", 5e-3, 2.5e-3, mass=1e-4, specific_heat=800.0)
    assert disc.area == pytest.approx(math.pi * 25e-6, rel=1e-12)
    assert disc.convection_diameter == pytest.approx(5e-3, rel=1e-12)


def test_arrays_are_accepted():
    g = BEAD.conductance(np.array([0.0, 1.0, 2.0]), 30.0, np.array([31.0, 31.0, 31.0]), radiation=False)
    assert g.shape == (3,) and np.all(np.diff(g) > 0.0)
    rise = BEAD.self_heating_rise(np.array([0.0, 1e-3]), 0.0, 25.0)
    assert rise[0] == 0.0 and rise[1] > 0.0


@pytest.mark.parametrize("kwargs, message", [
    (dict(shape="cube", diameter=1e-3, mass=1e-5, specific_heat=900.0), "sensor shape"),
    (dict(shape="bead", diameter=0.0, mass=1e-5, specific_heat=900.0), "sensor diameter"),
    (dict(shape="bead", diameter=1e-3, length=1e-3, mass=1e-5, specific_heat=900.0), "length must be 0"),
    (dict(shape="probe", diameter=6e-3, mass=1e-3, specific_heat=500.0), "probe length"),
    (dict(shape="bead", diameter=1e-3), "either mass and specific_heat"),
    (dict(shape="bead", diameter=1e-3, mass=1e-5, specific_heat=900.0, datasheet_time_constant=10.0),
     "either mass"),
    (dict(shape="bead", diameter=1e-3, mass=1e-5), "sensor specific heat"),
    (dict(shape="bead", diameter=1e-3, mass=1e-5, specific_heat=900.0, emittance=1.5), "emittance"),
    (dict(shape="bead", diameter=1e-3, mass=1e-5, specific_heat=900.0, datasheet_dissipation_constant=1e-6),
     "below this body's radiative loss"),
])
def test_bad_body_raises_value_error(kwargs, message):
    with pytest.raises(ValueError, match=message):
        SensorBody(**kwargs)


def test_bad_operating_point_raises_value_error():
    with pytest.raises(ValueError, match="air speed"):
        BEAD.conductance(-1.0, 25.0)
    with pytest.raises(ValueError, match="sensor power"):
        BEAD.self_heating_rise(-1e-3, 0.0, 25.0)
    with pytest.raises(ValueError, match="is not reached"):
        BEAD.response_time(30.0, 22.5, 0.0, 22.0, power=3e-3)   # self-heating keeps it above 22.5
    with pytest.raises(ValueError, match="single number"):
        BEAD.response_time(30.0, 25.0, np.array([0.0, 1.0]), 22.0)
