"""The house's seasons: which days its rooms are cooled, which heated, and the rooms' temperature that follows.

The season is decided per local day (standard time), by one of two rules (``house.season_rule``):

``balance-point`` (default)
    A day is in the **heating season** when its mean outdoor air temperature is below
    ``house.heating_balance_point``, in the **cooling season** when it is above ``house.cooling_balance_point``,
    and in neither when it lies between them. Both default to 18.3 degC (65 degF), the base of heating and
    cooling degree-days (common practice, no source): with the defaults every day is in the season it adds
    degree-days to. The day's mean is the mean of the weather file's samples stamped in that day.
``months``
    Days in ``house.cooling_months`` are in the cooling season, in ``house.heating_months`` the heating season,
    others in neither (defaults May-September and November-March).

The rooms below the ceiling are held at the cooling setpoint (``ceiling.room_temperature``) on cooling days,
at ``house.heating_setpoint`` on heating days, and on days of neither they float: their temperature is taken
as the day's mean outdoor temperature held between the two setpoints (our choice, no source: a house that is
neither heated nor cooled follows the outdoors, damped, and stays between the temperatures at which its
heating and its cooling would start).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

#: Season codes per day or sample.
COOLING, NEITHER, HEATING = 1, 0, -1
#: Season codes -> words (as the summary, daily.csv and the terminal write them).
NAMES = {COOLING: "cooling", NEITHER: "neither", HEATING: "heating"}


def rule_text(house, cooling_setpoint: float) -> str:
    """The house's season rule in one sentence (for the summary and the terminal)."""
    if house.season_rule == "months":
        decided = (f"by month: cooling season {house.cooling_months}, heating season {house.heating_months}, "
                   f"other months neither")
    elif house.heating_balance_point == house.cooling_balance_point:
        decided = (f"by balance point: a day whose mean outdoor air is above {house.cooling_balance_point:g} degC is "
                   f"in the cooling season, below it in the heating season (the degree-day base)")
    else:
        decided = (f"by balance points: a day whose mean outdoor air is above {house.cooling_balance_point:g} degC "
                   f"is in the cooling season, below {house.heating_balance_point:g} degC in the heating season, "
                   f"between them in neither")
    return (f"seasons decided per local day {decided}; rooms held at {cooling_setpoint:g} degC when cooled, "
            f"{house.heating_setpoint:g} degC when heated, and at the day's mean outdoor temperature kept between "
            f"those on days of neither")


def rule_label(house, ip: bool = False) -> str:
    """The rule in a few words for the terminal ("balance point 18.3 °C", "months: cooling may-sep, ...")."""
    def t(c):
        return f"{c * 9 / 5 + 32:.0f} °F" if ip else f"{c:g} °C"

    if house.season_rule == "months":
        return f"by month: cooling {house.cooling_months}, heating {house.heating_months}"
    if house.heating_balance_point == house.cooling_balance_point:
        return f"balance point {t(house.cooling_balance_point)}, daily mean outdoor air"
    return (f"balance points: heated below {t(house.heating_balance_point)}, cooled above "
            f"{t(house.cooling_balance_point)}, daily mean outdoor air")


def daily_mean(times: pd.DatetimeIndex, temp_out) -> pd.Series:
    """Mean of the samples stamped in each local day [degC], indexed by the day's midnight (tz-aware)."""
    s = pd.Series(np.asarray(temp_out, dtype=float), index=times)
    return s.groupby(times.normalize()).mean()


def day_seasons(times: pd.DatetimeIndex, temp_out, house) -> pd.DataFrame:
    """Season code of each local day of ``times`` by the house's rule.

    Parameters
    ----------
    times : pandas.DatetimeIndex
        Weather sample instants (tz-aware, local standard time).
    temp_out : array_like
        Outdoor air temperature at those instants [degC].
    house : House
        The scenario's ``[house]`` (``season_rule``, balance points, months).

    Returns
    -------
    pandas.DataFrame
        Indexed by the day's midnight: ``season`` (int code :data:`COOLING`, :data:`NEITHER` or
        :data:`HEATING`) and ``mean_c`` (the day's mean outdoor temperature [degC]).
    """
    from atticsim.scenario.schema import month_set

    means = daily_mean(times, temp_out)
    if house.season_rule == "months":
        cooling = month_set(house.cooling_months, "house.cooling_months")
        heating = month_set(house.heating_months, "house.heating_months")
        month = means.index.month
        code = np.where(month.isin(sorted(cooling)), COOLING, np.where(month.isin(sorted(heating)), HEATING, NEITHER))
    else:
        m = means.to_numpy()
        code = np.where(m > house.cooling_balance_point, COOLING,
                        np.where(m < house.heating_balance_point, HEATING, NEITHER))
    return pd.DataFrame({"season": code.astype(np.int8), "mean_c": means.to_numpy()}, index=means.index)


def seasons_at(times: pd.DatetimeIndex, seasons: pd.DataFrame) -> np.ndarray:
    """Season code at each instant: that of its local day (:data:`NEITHER` for a day not in ``seasons``)."""
    days = pd.DatetimeIndex(times).normalize()
    return seasons["season"].reindex(days).fillna(NEITHER).to_numpy(dtype=np.int8)


def room_temperature(times: pd.DatetimeIndex, seasons: pd.DataFrame, house, cooling_setpoint: float) -> np.ndarray:
    """The rooms' temperature at each instant by the house's season [degC] (see the module notes).

    Parameters
    ----------
    times : pandas.DatetimeIndex
        Instants (tz-aware, local standard time).
    seasons : pandas.DataFrame
        :func:`day_seasons` of the weather.
    house : House
        ``heating_setpoint`` [degC].
    cooling_setpoint : float
        The rooms' temperature when cooled [degC] (``ceiling.room_temperature``).
    """
    days = pd.DatetimeIndex(times).normalize()
    code = seasons["season"].reindex(days).fillna(NEITHER).to_numpy()
    mean = seasons["mean_c"].reindex(days).to_numpy(dtype=float)
    low, high = sorted((house.heating_setpoint, cooling_setpoint))
    floating = np.clip(np.where(np.isfinite(mean), mean, cooling_setpoint), low, high)
    return np.where(code == COOLING, cooling_setpoint, np.where(code == HEATING, house.heating_setpoint, floating))
