"""Study analysis: degree-hours, starts in any hour, net benefit, Pareto set and the recommendation rule."""

import math

import numpy as np
import pandas as pd
import pytest

from atticsim.study.analysis import (degree_hours_above, edges, max_starts_in_window, net_benefit_kwh,
                                     pareto_mask, recommend, rule_text)


# --- degree-hours -------------------------------------------------------------------------------------

def test_degree_hours_of_a_sine_day_match_the_integral():
    # T(t) = L + A sin(2 pi t / 24 h): the positive half-wave integrates to A * 24 / pi K*h
    # (elementary calculus: integral_0^12 A sin(pi t / 12) dt = 24 A / pi).
    t = np.arange(0, 24 * 60 + 1) / 60.0  # 1-min samples, h
    A, L = 8.0, 38.0
    dh = degree_hours_above(L + A * np.sin(2 * np.pi * t / 24.0), t, L)
    assert dh == pytest.approx(A * 24.0 / math.pi, rel=1e-5)  # 61.115 K*h


def test_degree_hours_count_only_the_part_above_the_limit_between_samples():
    # Straight line from 30 degC at 0 h to 50 degC at 2 h, limit 40 degC: the triangle above the limit
    # is 1 h wide and 10 K high -> 5 K*h (geometry). A plain trapezoid of max(T - 40, 0) would give 10.
    assert degree_hours_above([30.0, 50.0], [0.0, 2.0], 40.0) == pytest.approx(5.0, rel=1e-12)
    # and falling through the limit: 46 -> 36 degC over 1 h, limit 40: 0.6 h x 6 K / 2 = 1.8 K*h
    assert degree_hours_above([46.0, 36.0], [0.0, 1.0], 40.0) == pytest.approx(1.8, rel=1e-12)
    # entirely above: a plain trapezoid, (2 + 4) / 2 K x 3 h = 9 K*h; entirely below: 0
    assert degree_hours_above([42.0, 44.0], [0.0, 3.0], 40.0) == pytest.approx(9.0, rel=1e-12)
    assert degree_hours_above([20.0, 39.0], [0.0, 3.0], 40.0) == 0.0


def test_degree_hours_reject_bad_input():
    with pytest.raises(ValueError, match="increase"):
        degree_hours_above([40, 41, 42], [0, 2, 1], 38)
    with pytest.raises(ValueError, match="same length"):
        degree_hours_above([40, 41], [0, 1, 2], 38)


# --- starts in any hour -------------------------------------------------------------------------------

def test_starts_every_ten_minutes_make_six_in_any_hour():
    # Starts at 0, 10, ..., 120 min: any 60-min window [t, t + 60 min) holds 6 of them (counting by hand).
    assert max_starts_in_window(np.arange(0, 121, 10) * 60.0, 3600.0) == 6


def test_sliding_hour_catches_a_burst_across_a_clock_hour():
    # 4 starts at 0:50-0:58 and 4 at 1:02-1:10: clock hours hold 4 each, the window from 0:50 holds all 8.
    starts = np.array([50, 53, 56, 58, 62, 65, 68, 70]) * 60.0
    assert max_starts_in_window(starts, 3600.0) == 8
    assert max_starts_in_window([], 3600.0) == 0
    assert max_starts_in_window([0.0, 3600.0], 3600.0) == 1  # the window is half-open: [t, t + 1 h)


# --- net benefit --------------------------------------------------------------------------------------

def test_net_benefit_from_avoided_ceiling_gain():
    # (10 - 7) kWh of heat avoided / COP 3 = 1 kWh electric saved, minus 0.5 kWh of fan energy = 0.5 kWh.
    s = {"ceiling_heat_gain_kwh": 7.0, "ceiling_heat_gain_no_fan_kwh": 10.0, "fan_energy_kwh": 0.5}
    assert net_benefit_kwh(s, 3.0) == pytest.approx(0.5)
    assert net_benefit_kwh({**s, "net_benefit_kwh": -1.25}) == -1.25  # the model's own figure wins
    assert math.isnan(net_benefit_kwh({"fan_energy_kwh": 1.0}))


# --- Pareto set ---------------------------------------------------------------------------------------

def test_pareto_mask_on_a_hand_made_table():
    # Minimise both columns. By the definition of dominance (Deb 2001, sec. 2.4):
    f = np.array([
        [1.0, 5.0],     # 0 optimal (fewest starts)
        [2.0, 3.0],     # 1 optimal
        [3.0, 4.0],     # 2 dominated by 1
        [4.0, 1.0],     # 3 optimal (least heat)
        [2.0, 3.0],     # 4 optimal (ties with 1: neither is strictly better)
        [2.0, 3.5],     # 5 dominated by 1 (equal starts, more heat)
        [np.nan, 0.0],  # 6 incomplete: never optimal
        [5.0, 5.0],     # 7 dominated by everything
    ])
    assert pareto_mask(f).tolist() == [True, True, False, True, True, False, False, False]


def test_pareto_mask_three_objectives():
    f = np.array([[1, 1, 9], [1, 1, 8], [0, 5, 9], [2, 2, 2]], float)
    # row 0 is dominated by row 1 (better in the third objective, equal elsewhere)
    assert pareto_mask(f).tolist() == [False, True, True, True]


# --- recommendation ---------------------------------------------------------------------------------

def table(rows):
    cols = ["point", "status", "max_starts_per_hour", "short_cycles", "degree_hours_above_limit", "hysteresis_k",
            "fan_starts", "fan_energy_kwh"]
    return pd.DataFrame(rows, columns=cols)


def test_recommendation_qualifies_by_starts_and_short_cycles_then_takes_the_gentlest_of_the_tied():
    # Applying the rule by hand (rule_text): step 1 drops points 0 (9 starts in an hour) and 2 (3 short
    # cycles: within the starts limit, but the fan hunts); step 2: lowest qualifying heat 12.0, tolerance
    # max(0.01, 1 % x 12.0) = 0.12, so 12.0, 12.05 and 12.1 tie and 12.5 does not; step 3: fewest starts
    # among 1, 3 and 5 -> points 1 and 5 (5 starts each); least fan energy -> point 1 (1.2 kWh against 1.4).
    t = table([
        (0, "ok", 9, 0, 10.0, 0.5, 30, 1.0),    # lowest heat, too many starts in one hour
        (1, "ok", 2, 0, 12.05, 3.0, 5, 1.2),    # tied, 5 starts, less energy than point 5 -> chosen
        (2, "ok", 3, 3, 11.9, 1.0, 12, 1.1),    # short-cycles (the old rule's pick: narrowest, lowest heat)
        (3, "ok", 2, 0, 12.0, 2.0, 8, 1.1),     # tied, 8 starts
        (4, "ok", 1, 0, 12.5, 5.0, 4, 1.3),     # the fewest starts, but not tied (12.5 > 12.12)
        (5, "ok", 1, 0, 12.1, 4.0, 5, 1.4),     # tied, 5 starts, wider than point 1 but more energy
        (6, "error", None, None, None, 1.0, None, None),
    ])
    rec = recommend(t, starts_limit=6, heat_column="degree_hours_above_limit")
    assert rec["point"] == 1 and rec["candidates"] == 4 and rec["tied"] == 3
    # the runner-up is the rule applied without point 1: of 3 and 5 (12.0, tolerance 0.12), point 5 (5 starts)
    assert rec["runner_up"] == 5
    # allowing 3 short cycles lets point 2 in: lowest heat 11.9, tolerance 0.119, so only 2 and 3 (12.0 <=
    # 12.019) tie, not 1 (12.05); the fewer starts of the two: point 3 (8 against 12)
    rec = recommend(t, starts_limit=6, heat_column="degree_hours_above_limit", short_cycles_allowed=3)
    assert rec["point"] == 3 and rec["candidates"] == 5 and rec["tied"] == 2
    # with no tolerance beyond the 0.01 floor only point 2 has the lowest heat
    rec = recommend(t, 6, "degree_hours_above_limit", short_cycles_allowed=3, rel_tol=0.0)
    assert rec["point"] == 2 and rec["runner_up"] == 3


def test_equal_starts_and_width_go_to_the_least_energy():
    t = table([(0, "ok", 1, 0, 100.0, 3.0, 7, 12.5), (1, "ok", 1, 0, 100.5, 3.0, 7, 11.0)])
    assert recommend(t, 6, "degree_hours_above_limit")["point"] == 1


def test_recommendation_when_no_point_qualifies():
    t = table([(0, "ok", 9, 0, 10.0, 0.5, 30, 1.0), (1, "ok", 5, 2, 12.0, 1.0, 20, 1.2)])
    rec = recommend(t, starts_limit=6, heat_column="degree_hours_above_limit")
    assert rec["point"] is None and rec["runner_up"] is None
    assert "point 1 with 5 starts in one hour and 2 short cycles" in rec["reason"]
    assert "--short-cycles-allowed" in rec["reason"]


def test_rule_text_states_its_numbers():
    text = rule_text(4.0, 2, "ceiling_heat_gain_kwh", 0.005)
    assert "max_starts_per_hour <= 4" in text and "short_cycles <= 2" in text
    assert "max(0.01, 0.5 % of the lowest)" in text and "ceiling_heat_gain_kwh" in text
    assert text.index("fewest fan starts") < text.index("least fan energy") < text.index("widest hysteresis")


def test_hysteresis_or_timer_at_the_same_heat_figure():
    # worked by hand: points 0-2 use hysteresis alone, 3-5 a minimum run; all qualify; the heat figures 20.0 to
    # 20.15 tie (tolerance max(0.01, 1 % of 20.0) = 0.2), 25.0 does not. Hysteresis alone: fewest starts
    # point 1 (3.0 K, 40 starts); a timer with no wider band: point 4 (1.0 K, 5 min, 30 starts) beats point 5
    # (4.0 K is wider than 3.0 K) -> the timer wins on starts
    cols = ["point", "status", "max_starts_per_hour", "short_cycles", "degree_hours_above_limit", "hysteresis_k",
            "fan_starts", "fan_energy_kwh", "thermostat.min_run", "thermostat.min_run_given"]
    t = pd.DataFrame([
        (0, "ok", 3, 0, 20.0, 1.0, 90, 5.0, 0.0, "0 min"),
        (1, "ok", 2, 0, 20.1, 3.0, 40, 5.5, 0.0, "0 min"),
        (2, "ok", 1, 0, 25.0, 5.0, 20, 4.0, 0.0, "0 min"),   # not tied: too hot
        (3, "ok", 2, 0, 20.05, 1.0, 35, 5.6, 180.0, "3 min"),
        (4, "ok", 2, 0, 20.15, 1.0, 30, 5.7, 300.0, "5 min"),
        (5, "ok", 1, 0, 20.1, 4.0, 10, 5.2, 300.0, "5 min"),  # a timer with a wider band than hysteresis alone
    ], columns=cols)
    rec = recommend(t, 6, "degree_hours_above_limit")
    ht = rec["hysteresis_or_timer"]
    assert (ht["hysteresis_point"], ht["timer_point"], ht["winner"]) == (1, 4, "timer")
    assert "point 1 (hysteresis 3.00 K: 40 starts" in ht["text"] and "min_run 5 min: 30 starts" in ht["text"]
    assert rec["point"] == 5  # the rule itself still takes the fewest starts of all tied points
    # a study that varies no time rule has no such comparison
    assert recommend(t.drop(columns=["thermostat.min_run"]), 6, "degree_hours_above_limit")["hysteresis_or_timer"] is None
    # every tied point needs its timer: said so
    only = recommend(t[t["thermostat.min_run"] > 0], 6, "degree_hours_above_limit")["hysteresis_or_timer"]
    assert only["winner"] == "timer" and only["hysteresis_point"] is None and "a time rule is needed" in only["text"]


def test_no_edge_advice_below_a_rule_of_zero():
    from atticsim.study.analysis import edges
    from atticsim.study.spec import parse_vary

    axes = [parse_vary("thermostat.min_run=0,5,10min")]
    t = pd.DataFrame({"point": [0, 1, 2], "thermostat.min_run": [0.0, 300.0, 600.0],
                      "thermostat.min_run_given": ["0 min", "5 min", "10 min"]})
    assert edges(t, 0, axes) == []  # nothing lies below no minimum run
    assert [e["side"] for e in edges(t, 2, axes)] == ["highest"]


# --- edges of the searched range ----------------------------------------------------------------------

def test_edges_name_the_key_and_the_way_to_widen():
    from atticsim.study.spec import parse_vary

    axes = [parse_vary("thermostat.on=36:40:2degC"), parse_vary("thermostat.hysteresis=1,2,3K"),
            parse_vary("weather.sky_model=berdahl-martin,swinbank")]
    rows = []
    for i, (on, w) in enumerate([(36, 1), (36, 3), (38, 2), (40, 3)]):
        rows.append({"point": i, "thermostat.on": float(on), "thermostat.on_given": f"{on} degC",
                     "thermostat.hysteresis": float(w), "thermostat.hysteresis_given": f"{w} K",
                     "weather.sky_model": "swinbank", "weather.sky_model_given": "swinbank"})
    t = pd.DataFrame(rows)
    e = edges(t, 1, axes)  # 36 degC is the lowest switch-on tried, 3 K the widest hysteresis
    assert [(x["key"], x["side"]) for x in e] == [("thermostat.on", "lowest"), ("thermostat.hysteresis", "highest")]
    assert "below 36 degC (next: 34 degC)" in e[0]["advice"] and "above 3 K" in e[1]["advice"]
    assert edges(t, 2, axes) == []  # 38 degC and 2 K lie inside the ranges; text keys have no edge
    assert [x["side"] for x in edges(t, 3, axes)] == ["highest", "highest"]


def test_edges_of_a_sampled_range_point_to_the_range_end():
    from atticsim.study.spec import parse_vary

    axes = [parse_vary("thermostat.on=36:44degC")]
    t = pd.DataFrame({"point": [0, 1], "thermostat.on": [36.56, 41.2],
                      "thermostat.on_given": ["36.56 degC", "41.2 degC"]})
    (e,) = edges(t, 0, axes, sampled=True)
    assert e["side"] == "lowest" and "the range ends at 36 degC" in e["advice"] and "near 36 degC" in e["advice"]
