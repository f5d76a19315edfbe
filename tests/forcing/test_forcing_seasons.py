"""The house's seasons day by day (balance point or months) and the rooms' temperature that follows."""

import numpy as np
import pandas as pd
import pytest

from atticsim.forcing.seasons import COOLING, HEATING, NEITHER, day_seasons, room_temperature, seasons_at
from atticsim.scenario import demo_scenario
from conftest import make_weather


def four_days():
    # hand-made hourly weather (test data, not a climate): four days with daily means 10, 16, 19 and 25 degC
    # (a constant day has its constant as its mean)
    temps = np.concatenate([np.full(24, t) for t in (10.0, 16.0, 19.0, 25.0)])
    return make_weather(temps, start="2025-04-01")[0]


def test_balance_point_at_the_degree_day_base():
    # 18.3 degC (65 degF), the base of heating and cooling degree-days (common practice): below it heated,
    # above it cooled
    frame = four_days()
    s = day_seasons(frame.index, frame["temp_air"], demo_scenario().house)
    assert s["season"].tolist() == [HEATING, HEATING, COOLING, COOLING]
    assert s["mean_c"].tolist() == pytest.approx([10.0, 16.0, 19.0, 25.0])


def test_balance_points_with_a_dead_band_and_the_months_rule():
    frame = four_days()
    house = demo_scenario(["house.heating_balance_point=15", "house.cooling_balance_point=21"]).house
    assert day_seasons(frame.index, frame["temp_air"], house)["season"].tolist() == [HEATING, NEITHER, NEITHER,
                                                                                     COOLING]
    months = demo_scenario(['house.season_rule="months"', 'house.cooling_months="may-sep"',
                            'house.heating_months="nov-apr"']).house
    assert set(day_seasons(frame.index, frame["temp_air"], months)["season"]) == {HEATING}  # April
    with pytest.raises(ValueError, match="share month"):
        demo_scenario(['house.cooling_months="apr-sep"', 'house.heating_months="nov-apr"'])


def test_rooms_at_the_setpoint_of_their_season_and_floating_between():
    frame = four_days()
    sc = demo_scenario(["house.heating_setpoint=20", "ceiling.room_temperature=24"])
    s = day_seasons(frame.index, frame["temp_air"], sc.house)
    t = room_temperature(frame.index, s, sc.house, sc.ceiling.room_temperature)
    # heated days 20 degC, cooled days 24 degC
    assert t[::24].tolist() == [20.0, 20.0, 24.0, 24.0]
    sc = demo_scenario(["house.heating_balance_point=15", "house.cooling_balance_point=21",
                        "house.heating_setpoint=17"])
    s = day_seasons(frame.index, frame["temp_air"], sc.house)
    t = room_temperature(frame.index, s, sc.house, sc.ceiling.room_temperature)
    # days of neither float at their mean held between the setpoints (17 and 24): 16 -> 17, 19 -> 19
    assert t[::24].tolist() == [17.0, 17.0, 19.0, 24.0]
    assert seasons_at(frame.index[[0, 30, 95]], s).tolist() == [HEATING, NEITHER, COOLING]


def test_the_forcing_carries_the_rooms_temperature():
    from atticsim.forcing.build import build_forcing

    frame = four_days()
    sc = demo_scenario()
    f = build_forcing(frame, None, sc, frame.index[0], frame.index[-1])
    room = f.values[f.channels.index("temp_room")]
    assert room[0] == sc.house.heating_setpoint and room[-1] == sc.ceiling.room_temperature
    assert f.seasons["season"].tolist() == [HEATING, HEATING, COOLING, COOLING]
