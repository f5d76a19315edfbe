"""Validation cases: vents, stack and wind, the fan on its curve against the vents, the house's leaks."""

from __future__ import annotations

import math
from functools import lru_cache

from atticsim.validation.registry import Comparison, case

_VENT = "ASHRAE Handbook - Fundamentals, ventilation and infiltration chapter"


def _temp_for_density(rho):
    """Air temperature [degC] at which dry air at standard pressure has density rho (ideal gas)."""
    from atticsim.constants import KELVIN, P_STANDARD, R_DRY_AIR

    return P_STANDARD / (R_DRY_AIR * rho) - KELVIN


@case(group="airflow", name="Vent opening: orifice flow", source=_VENT + ", orifice equation; worked by hand",
      unit="m3/s", tolerance=1e-4, kind="rel", digits=4,
      inputs="1 m2, Cd 0.61, air 1.2 kg/m3, 1 Pa: 0.61 x sqrt(2 x 1 / 1.2) = 0.7875 m3/s")
def orifice():
    from atticsim.airflow.openings import orifice_flow

    return Comparison(float(orifice_flow(1.0, 1.0, cd=0.61, rho=1.2)), 0.61 * math.sqrt(2.0 / 1.2))


@case(group="airflow", name="Stack pressure of a hot attic, per metre of height",
      source=_VENT + ", stack pressure dp = (rho_o - rho_i) g h; worked by hand", unit="Pa", tolerance=1e-6,
      kind="rel", digits=3,
      inputs="attic 60 degC in outdoor air at 35 degC and 101325 Pa, 1 m below the neutral level; "
             "rho_o = 101325 / (287.055 x 308.15), rho_i = rho_o x 308.15 / 333.15")
def stack_pressure():
    from atticsim.airflow.openings import stack_pressure as stack

    rho_o = 101325.0 / (287.055 * 308.15)
    reference = (rho_o - rho_o * 308.15 / 333.15) * 9.80665 * 1.0
    return Comparison(float(stack(0.0, 1.0, 60.0, 35.0, rho_o)), reference)


def _two_openings(a_low, a_high, h, cp_low=0.0, cp_high=0.0, cd=0.65):
    from atticsim.airflow.balance import AtticAirPaths, Vent

    return AtticAirPaths(vents=[Vent(a_low, 0.0, cd=cd, cp=cp_low, name="low"),
                                Vent(a_high, h, cd=cd, cp=cp_high, name="high")])


@case(group="airflow", name="Stack flow through a low and a high vent (neutral level form)",
      source=_VENT + ": Q = Cd A sqrt(2 g dH_NPL (Ti - To)/Ti) with dH_NPL = H / (1 + (A1/A2)^2 Ti/To)",
      unit="m3/s", tolerance=1e-6, kind="rel", digits=4,
      inputs="low vent 0.2 m2, high vent 0.1 m2 2 m above it, Cd 0.65, attic 60 degC, outdoors 35 degC, "
             "no wind; atticsim's pressure balance against the handbook's closed form for the low vent")
def stack_two_openings():
    from atticsim.airflow.balance import solve_attic_balance
    from atticsim.airflow.openings import neutral_level_height, stack_flow_two_openings

    r = solve_attic_balance(_two_openings(0.2, 0.1, 2.0), 60.0, 35.0)
    h_npl = neutral_level_height(2.0, 0.2, 0.1, 60.0, 35.0)
    return Comparison(r.path("low").volume_flow, float(stack_flow_two_openings(0.2, h_npl, 60.0, 35.0, cd=0.65)),
                      note=f"neutral level {h_npl:.3f} m above the low vent")


@case(group="airflow", name="Stack flow, equal vents (the handbook's mid-height form)",
      source=_VENT + ": the same form with dH_NPL = H/2 for equal openings", unit="m3/s", tolerance=0.025,
      kind="rel", digits=4,
      inputs="two 0.1 m2 vents 2 m apart, Cd 0.65, attic 60 degC, outdoors 35 degC. The mid-height form "
             "carries in- and outflow at one density; the exact neutral level moves by Ti/To (the handbook's "
             "own form), about (Ti - To)/(4 Ti) = 1.9 % of the flow here, hence 2.5 %")
def stack_equal_openings():
    from atticsim.airflow.balance import solve_attic_balance
    from atticsim.airflow.openings import stack_flow_two_openings

    r = solve_attic_balance(_two_openings(0.1, 0.1, 2.0), 60.0, 35.0)
    return Comparison(r.path("low").volume_flow, float(stack_flow_two_openings(0.1, 1.0, 60.0, 35.0, cd=0.65)))


def _lower_inflow(t_in, t_out, wind):
    from atticsim.airflow.balance import solve_attic_balance

    paths = _two_openings(0.1, 0.1, 2.0, 0.6, -0.3, cd=0.6)
    return solve_attic_balance(paths, t_in, t_out, wind_speed=wind).path("low").volume_flow


@case(group="airflow", name="Stack and wind together (root-sum-square rule)",
      source=_VENT + ": Q = sqrt(Q_stack^2 + Q_wind^2)", unit="m3/s", tolerance=0.02, kind="rel", digits=4,
      inputs="vents 0.1 m2 low on the windward side (Cp +0.6) and 0.1 m2 2 m higher on the leeward side "
             "(Cp -0.3), Cd 0.6, attic 55 degC, outdoors 35 degC, wind 2 m/s; stack alone and wind alone run "
             "by atticsim, then both. Aiding forces: exact at one density, about 1 % off with the outflow "
             "at attic density, hence 2 %")
def stack_and_wind():
    from atticsim.airflow.openings import combined_flow

    qs, qw = _lower_inflow(55.0, 35.0, 0.0), _lower_inflow(35.0, 35.0, 2.0)
    return Comparison(_lower_inflow(55.0, 35.0, 2.0), float(combined_flow(qs, qw)))


_LINEAR_INPUTS = ("straight fan curve 40 Pa at shut-off, 0.6 m3/s free air (rated at 1.15 kg/m3) exhausting "
                  "through one intake vent of 0.2 m2 at Cd 0.6, no wind or stack: "
                  "40 (1 - Q/0.6) = K Q^2, K = rho / (2 (Cd A)^2), solved by the quadratic formula")


@lru_cache(maxsize=None)
def _linear_point(speed=1.0):
    from atticsim.airflow.balance import AtticAirPaths, Fan, Vent, solve_attic_balance
    from atticsim.airflow.fan import FanCurve

    curve = FanCurve([0.0, 20.0, 40.0], [0.6, 0.3, 0.0], 150.0, rating_density=1.15)
    t = _temp_for_density(1.15)
    paths = AtticAirPaths(vents=[Vent(0.2, 0.0, cd=0.6, cp=0.0)], fan=Fan(curve, 1.0, cp=0.0))
    return solve_attic_balance(paths, t, t, fan_on=True, fan_speed_ratio=speed)


def _linear_closed_form():
    k = 1.15 / (2.0 * (0.6 * 0.2) ** 2)
    q = (-40.0 / 0.6 + math.sqrt((40.0 / 0.6) ** 2 + 4.0 * k * 40.0)) / (2.0 * k)
    return q, k * q * q


@case(group="airflow", name="Fan against its vents: operating flow",
      source="closed form of a straight fan curve against a square-law vent, worked by hand "
             "(orifice law: " + _VENT + ")", unit="m3/s", tolerance=1e-6, kind="rel", digits=4,
      inputs=_LINEAR_INPUTS + " (Q = 0.4685 m3/s)")
def fan_operating_flow():
    return Comparison(_linear_point().fan_flow, _linear_closed_form()[0])


@case(group="airflow", name="Fan against its vents: pressure rise",
      source="the same closed form, worked by hand", unit="Pa", tolerance=1e-6, kind="rel", digits=3,
      inputs=_LINEAR_INPUTS + " (dp = 8.77 Pa)")
def fan_operating_pressure():
    return Comparison(_linear_point().fan_pressure, _linear_closed_form()[1])


@case(group="airflow", name="Fan at 80 % speed: flow ratio (fan laws)",
      source="fan laws (AMCA Publication 201, Fans and Systems): Q ~ N against a square-law system", unit="-",
      tolerance=1e-9, digits=4, inputs="the operating point above with the fan at 0.8 of its speed")
def fan_affinity():
    return Comparison(_linear_point(0.8).fan_flow / _linear_point().fan_flow, 0.8)


@case(group="airflow", name="Fan curve from three published points: operating flow",
      source="closed form: fan dp = p0 (1 - (Q/Qmax)^2) against dp = K Q^2 -> Q = sqrt(p0 / (K + p0/Qmax^2)), "
             "worked by hand", unit="m3/s", tolerance=2e-3, kind="rel", digits=4,
      inputs="a quadratic fan curve (50 Pa shut-off, 0.7 m3/s free air) given as three points at 0, 22.5 and "
             "45 Pa as makers publish it, interpolated monotonically by atticsim, against one 0.15 m2 vent at "
             "Cd 0.6, 1.2 kg/m3; the difference is the interpolation's between the points")
def fan_published_points():
    from atticsim.airflow.balance import AtticAirPaths, Fan, Vent, solve_attic_balance
    from atticsim.airflow.fan import FanCurve

    p0, qmax, rho = 50.0, 0.7, 1.2
    pressures = [0.0, 22.5, 45.0]
    curve = FanCurve(pressures, [qmax * math.sqrt(1.0 - p / p0) for p in pressures], 100.0)
    t = _temp_for_density(rho)
    paths = AtticAirPaths(vents=[Vent(0.15, 0.0, cd=0.6, cp=0.0)], fan=Fan(curve, 1.0, cp=0.0))
    r = solve_attic_balance(paths, t, t, fan_on=True)
    k = rho / (2.0 * (0.6 * 0.15) ** 2)
    return Comparison(r.fan_flow, math.sqrt(p0 / (k + p0 / qmax**2)))


@case(group="airflow", name="House pressure with the fan: ceiling and envelope leaks in series",
      source="closed form of two power-law leaks in series, C_e abs(p_h)^n = C_c abs(p_h - p_a)^n -> "
             "p_h = p_a r / (1 + r), r = (C_c/C_e)^(1/n) (the basis of zonal pressure diagnostics); "
             "power law: ASTM E779", unit="Pa", tolerance=1e-9, kind="rel", digits=4,
      inputs="ceiling C 0.01, envelope C 0.03 m3/(s Pa^0.65), n 0.65, the straight fan curve above with a "
             "0.05 m2 intake, everything at 30 degC, no wind")
def house_pressure_series():
    from atticsim.airflow.balance import AtticAirPaths, CeilingLeak, Fan, HouseEnvelope, Vent, solve_attic_balance
    from atticsim.airflow.fan import FanCurve

    cc, ce, n = 0.01, 0.03, 0.65
    curve = FanCurve([0.0, 20.0, 40.0], [0.6, 0.3, 0.0], 150.0, rating_density=1.15)
    paths = AtticAirPaths(vents=[Vent(0.05, 0.0, cp=0.0)], fan=Fan(curve, 1.0, cp=0.0),
                          ceiling_leaks=[CeilingLeak(cc, n)], house=HouseEnvelope(ce, n, cp=0.0))
    r = solve_attic_balance(paths, 30.0, 30.0, temp_house=30.0, fan_on=True)
    ratio = (cc / ce) ** (1.0 / n)
    return Comparison(r.pressure_house, r.pressure_attic * ratio / (1.0 + ratio),
                      note=f"attic at {r.pressure_attic:.2f} Pa")
