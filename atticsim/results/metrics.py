"""Results and metrics: time series, switching events, fan cycles, energy books, summary and daily figures.

Run-time figures come from the exact event times (not from sampled fan states); energies come from
the books integrated with the states; temperatures' maxima and means come from the output samples.
"""

from __future__ import annotations

from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, field

from types import SimpleNamespace

import numpy as np
import pandas as pd

from atticsim.constants import KELVIN
from atticsim.airflow.model import stack_states
from atticsim.network.kernel import AIR_ORDER
from atticsim.network.model import ATTIC_BOOKS, BOOKS, FORCING_BASE

J_PER_KWH = 3.6e6


@dataclass
class SimulationResult:
    """What one simulation gives back.

    Attributes
    ----------
    summary : dict
        Season figures (keys carry their units: ``fan_run_hours``, ``ceiling_heat_gain_kwh``...).
    daily : pandas.DataFrame or None
        The same figures per local day (None for a summary-only result, see :func:`build_result`).
    timeseries : pandas.DataFrame
        States, flows and heat rates at each output step (a summary-only result: attic air and fan state).
    events : pandas.DataFrame
        Every fan switch: time, new state, sensor temperature.
    notes : list of str
        What the run decided or repaired (site used, sky model, weather repairs).
    """

    summary: dict
    daily: pd.DataFrame | None
    timeseries: pd.DataFrame
    events: pd.DataFrame
    notes: list = field(default_factory=list)
    scenario: object = None
    monthly: pd.DataFrame | None = None


def fan_intervals(events, fan_at_start: bool, t_start: float, t_end: float):
    """On-intervals [(t_on, t_off, complete)] from the event list; complete=False where an interval is
    cut by the period's start or end."""
    intervals, t_on, complete_start = [], (t_start if fan_at_start else None), False
    for t, state, *_ in events:
        if state and t_on is None:
            t_on, complete_start = t, True
        elif not state and t_on is not None:
            intervals.append((t_on, t, complete_start))
            t_on = None
    if t_on is not None:
        intervals.append((t_on, t_end, False))
    return intervals


def max_starts_in_window(start_times_s, window_s: float = 3600.0) -> int:
    """Largest number of starts inside any window of the given length (a sliding hour by default).

    Counts starts in [t, t + window) for every start time t; the maximum over all windows is reached by a
    window that opens at a start (common practice, no source: a motor's "starts per hour" limit applies to
    any hour, not only clock hours).

    Parameters
    ----------
    start_times_s : array_like
        Fan start instants [s].
    window_s : float
        Window length [s], > 0.

    Returns
    -------
    int
    """
    if not window_s > 0:
        raise ValueError(f"window_s: must be greater than 0 s (got {window_s!r})")
    t = np.sort(np.asarray(start_times_s, dtype=float))
    if t.size == 0:
        return 0
    ends = np.searchsorted(t, t + window_s, side="left")
    return int(np.max(ends - np.arange(t.size)))



#: Share of complete runs that are short cycles from which a run warns [-] (common practice, no source: one
#: run in ten shorter than the short-cycle time is already a thermostat that hunts, not an odd event).
SHORT_CYCLE_WARN_SHARE = 0.10

#: What helps against short-cycling, said after each cycling warning.
CYCLING_REMEDIES = ("widen the hysteresis (switch-off further from switch-on), move the sensor where the air it "
                    "reads changes less when the fan starts (sensor.placement), or give the thermostat a minimum "
                    "run time")


def cycling_warnings(summary: dict, starts_limit: float) -> list[str]:
    """Warnings when the fan short-cycles: any hour over the starts limit, or 10 % or more of the complete
    runs shorter than the short-cycle time (:data:`SHORT_CYCLE_WARN_SHARE`).

    Parameters
    ----------
    summary : dict
        ``max_starts_per_hour``, ``complete_runs``, ``short_cycles``, ``short_cycle_threshold_min``.
    starts_limit : float
        Starts the motor may make in any 60 minutes [1/h].
    """
    out = []
    peak = summary.get("max_starts_per_hour") or 0
    if peak > starts_limit:
        out.append(f"The fan starts up to {peak} times in one hour, more than the motor's {starts_limit:g} "
                   f"(fan.max_starts_per_hour); frequent starts overheat the winding and wear the capacitor: "
                   f"{CYCLING_REMEDIES}.")
    runs, short = summary.get("complete_runs") or 0, summary.get("short_cycles") or 0
    if runs and short / runs >= SHORT_CYCLE_WARN_SHARE:
        out.append(f"{short} of the {runs} complete fan runs ({100.0 * short / runs:.0f} %) are shorter than "
                   f"{summary['short_cycle_threshold_min']:g} min (short cycles): {CYCLING_REMEDIES}.")
    return out


def energy_balance_error_pct(capacities, y_start, y_end, books_end, n_nodes) -> float:
    """Closure of the building's energy books [% of gross exchange].

    stored = sum C_i (T_i,end - T_i,start) over the building nodes; in = solar + sky + ground + exterior
    convection + ventilation - ceiling gain + triac heat; error = (in - stored) / (sum of |book|) * 100.
    """
    caps = capacities[:n_nodes - 1]  # the sensor (last node) is outside the building books
    stored = float(np.sum(caps * (y_end[:n_nodes - 1] - y_start[:n_nodes - 1])))
    b = dict(zip(BOOKS, books_end))
    inflow = (b["solar"] + b["sky"] + b["ground"] + b["exterior_convection"] + b["ventilation"] - b["ceiling_gain"]
              + b["triac_heat"])
    gross = sum(abs(b[k]) for k in ATTIC_BOOKS)
    return 100.0 * (inflow - stored) / gross if gross > 0 else 0.0


def _cycle_figures(intervals, short_cycle):
    runs = np.array([b - a for a, b, complete in intervals if complete])
    return {
        "complete_runs": int(runs.size),
        "short_cycles": int(np.sum(runs < short_cycle)) if runs.size else 0,
        "cycle_minutes_median": float(np.median(runs) / 60.0) if runs.size else None,
    }


def build_result(scenario, raw, summary_only=False) -> SimulationResult:
    """Assemble the result of :func:`atticsim.pipeline.run_raw`.

    With ``summary_only`` (study points) the summary and events are complete, the time series holds only
    ``attic_air_c`` and ``fan_on``, and ``daily`` and ``monthly`` are None.
    """
    net, forcing, period = raw.network, raw.forcing, raw.period
    run, nofan = raw.with_fan, raw.without_fan
    n = net.n_nodes
    idx = net.index
    times = forcing.times[0] + pd.to_timedelta(run.t, unit="s")
    temps = run.y[:n]
    attic_air = net.mean_air(temps)
    if summary_only:
        # what the summary reads: the outdoor air, the flows the sensor's placement and the airflow figures use
        f = forcing.sample(run.t)
        air = stack_states(run.air_runs, run.t.size, names=AIR_ORDER + ("outdoor_flow",))
        sensor_local_air = net.sensor_local_air(temps, f, run.fan, SimpleNamespace(**air))
        ts = pd.DataFrame({"attic_air_c": attic_air, "fan_on": run.fan.astype(int)},
                          index=pd.DatetimeIndex(times, name="time"))
    else:
        air = held_columns(run, FRAME_AIR)
        ts = _timeseries(net, run, forcing, air, attic_air, times)
        sensor_local_air = ts["sensor_local_air_c"].to_numpy()

    # (as one float array: a list of floats is converted element by element)
    ev_times = forcing.times[0] + pd.to_timedelta(np.array([e[0] for e in run.events], dtype=float), unit="s")
    events = pd.DataFrame({
        "time": ev_times,
        "fan": ["on" if e[1] else "off" for e in run.events],
        "sensor_c": [e[2] for e in run.events],
        "cause": [e[3] for e in run.events],
    })

    fan_start = bool(run.fan[0]) if run.fan.size else False
    intervals = fan_intervals(run.events, fan_start, period.t_start, period.t_end)
    sim = scenario.simulation
    books = dict(zip(BOOKS, run.y_end[n:]))
    books_nf = dict(zip(BOOKS, nofan.y_end[n:])) if nofan is not None else None
    run_seconds = sum(b - a for a, b, _ in intervals)
    summary = {
        "period_start": period.start.isoformat(),
        "period_end": period.end.isoformat(),
        "days": (period.t_end - period.t_start) / 86400.0,
        "fan_run_hours": run_seconds / 3600.0,
        "fan_starts": int(sum(1 for e in run.events if e[1])),
        "fan_energy_kwh": books["fan_electric"] / J_PER_KWH,
        **_start_figures(run, scenario, period),
        **_cycle_figures(intervals, sim.short_cycle),
        "attic_air_max_c": float(np.max(attic_air)),
        "attic_air_mean_c": float(np.mean(attic_air)),
        "attic_upper_air_max_c": float(np.max(temps[net.i_upper])),
        "outdoor_air_max_c": float(np.max(f[0] if summary_only else ts["outdoor_air_c"].to_numpy())),
        "deck_max_c": (net.deck_underside_max(temps, f, run.fan, SimpleNamespace(**air)) if summary_only else
                       float(max(np.max(ts[f"deck_underside_{p}_c"].to_numpy()) for p in net.plane_names))),
        "sensor_max_c": float(np.max(temps[idx["sensor"]])),
        "ceiling_heat_gain_kwh": books["ceiling_gain"] / J_PER_KWH,
        "ceiling_heat_gain_no_fan_kwh": books_nf["ceiling_gain"] / J_PER_KWH if books_nf else None,
        "solar_absorbed_kwh": books["solar"] / J_PER_KWH,
        "ventilation_heat_removed_kwh": -books["ventilation"] / J_PER_KWH,
        "energy_balance_error_pct": energy_balance_error_pct(net.capacities, raw.y_start_fan, run.y_end,
                                                             run.y_end[n:], n),
        "energy_balance_error_no_fan_pct": (energy_balance_error_pct(
            net.capacities, raw.y_start_nofan, nofan.y_end, nofan.y_end[n:], n) if nofan else None),
        "short_cycle_threshold_min": sim.short_cycle / 60.0,
        "max_starts_per_hour": max_starts_in_window([t for t, state, *_ in run.events if state], 3600.0),
        "starts_limit_per_hour": scenario.fan.max_starts_per_hour,
        "thermostat_kind": scenario.thermostat.kind,
        "switch_on_sensor_c": getattr(raw.controller, "on", None),
        "switch_off_sensor_c": getattr(raw.controller, "off", None),
        "sensor_above_local_air_max_k": float(np.max(temps[idx["sensor"]] - sensor_local_air)),
        "sensor_placement": scenario.sensor.placement,
        **airflow_figures(scenario, raw, air, books, books_nf),
    }
    parts = season_days(raw, scenario, times)
    summary.update(season_summary(parts, scenario, summary["fan_energy_kwh"]))
    summary["warnings"] += season_warnings(summary, scenario)
    summary["short_cycle_share"] = (summary["short_cycles"] / summary["complete_runs"]
                                    if summary["complete_runs"] else None)
    summary["warnings"] = (list(getattr(scenario, "input_warnings", ())) +
                           cycling_warnings(summary, scenario.fan.max_starts_per_hour) + summary["warnings"])
    notes = list(raw.notes)
    if summary_only:
        return SimulationResult(summary, None, ts, events, notes, scenario, None)
    daily = _daily(ts, run, nofan, intervals, forcing, period, sim.short_cycle, n)
    daily = _daily_seasons(daily, parts, scenario)
    return SimulationResult(summary, daily, ts, events, notes, scenario, monthly_figures(daily))


def _start_figures(run, scenario, period) -> dict:
    """Starts per day, and the energy the starts cost beyond the running power (``fan.start_energy``, in the
    fan's electricity already), since starts are what wears a small motor."""
    starts = sum(1 for e in run.events if e[1])
    days = (period.t_end - period.t_start) / 86400.0
    each = scenario.fan.start_energy_j if scenario.fan.enabled else 0.0
    return {"fan_starts_per_day": starts / days if days > 0 else None,
            "fan_start_energy_kwh": starts * each / J_PER_KWH}


#: Held airflow quantities the full time series shows (and the airflow figures read) [m3/s, Pa, -].
FRAME_AIR = ("outdoor_flow", "fan_flow", "ceiling_flow", "pressure_attic", "pressure_house", "residual")
#: Output rows whose heat flows are formed at a time: the network's flow rows (26, and 4 per plane) for a
#: year at once would be 140 MB, of which the time series shows twelve.
FLOW_ROWS = 8192
#: The network's flows the time series shows (by :data:`atticsim.network.kernel.FLOWS` name), and per plane.
SERIES_FLOWS = ("solar", "sky", "ground", "exterior_convection", "ventilation", "ceiling_gain", "fan_electric",
                "house_air_sensible", "house_air_latent", "sensor_local_air")
SERIES_PLANE_FLOWS = ("roof_surface", "deck_underside")


def _held_rows(run):
    """(index of the held airflow state at each output row, the states) of a run."""
    starts, states = run.air_runs
    lengths = np.diff(np.append(np.asarray(starts, dtype=np.int64), run.t.size))
    return np.repeat(np.arange(len(states), dtype=np.int64), lengths), states


def held_columns(run, names) -> dict:
    """The held airflow quantities ``names`` at each output row of a run (as
    :func:`atticsim.airflow.model.stack_states` gives them), and ``path_flows`` (paths, rows) when the states
    carry per-path flows."""
    which, states = _held_rows(run)
    out = {name: np.array([getattr(s, name) for s in states], dtype=float)[which] for name in names}
    if states and states[0].path_flows:
        out["path_flows"] = np.array([s.path_flows for s in states], dtype=float).T[:, which]
    return out


def series_flows(net, run, forcing, rows: int = FLOW_ROWS):
    """The heat flows of :data:`SERIES_FLOWS` [W] (the sensor's local air [degC]) and of
    :data:`SERIES_PLANE_FLOWS` per plane [degC] at each output row, formed ``rows`` rows at a time by
    :meth:`atticsim.network.model.AtticNetwork.flows` (column by column, so the same numbers as at once)."""
    which, states = _held_rows(run)
    per_state = {name: np.array([getattr(s, name) for s in states], dtype=float) for name in AIR_ORDER}
    temps, m = run.y[:net.n_nodes], run.t.size
    out = {name: np.empty(m) for name in SERIES_FLOWS}
    planes = {name: np.empty((net.n_planes, m)) for name in SERIES_PLANE_FLOWS}

    def block(a):
        b = min(m, a + rows)
        air = SimpleNamespace(**{name: v[which[a:b]] for name, v in per_state.items()})
        q = net.flows(temps[:, a:b], forcing.sample(run.t[a:b]), run.fan[a:b], air)
        for name, column in out.items():
            column[a:b] = q[name]
        for name, rows_p in planes.items():
            rows_p[:, a:b] = q[name]

    starts = range(0, m, rows)
    net.packed  # noqa: B018 - built here once, not by two threads at once
    if len(starts) > 1:  # blocks write apart; the compiled flows let go of the GIL, so two threads share them
        with ThreadPoolExecutor(max_workers=2, thread_name_prefix="atticsim-flows") as pool:
            list(pool.map(block, starts))
    else:
        for a in starts:
            block(a)
    return out, planes


def _timeseries(net, run, forcing, air, attic_air, times) -> pd.DataFrame:
    """The full time-series frame of a run (states, forcing, air flows, heat rates at each output step).

    Each column is built once and the frame holds it as it is (the node temperatures are rows of the run's
    own states): a year of 1-minute rows is 4.2 MB a column, and no column is copied."""
    temps = run.y[:net.n_nodes]
    idx = net.index
    q, qp = series_flows(net, run, forcing)
    grid = forcing.seconds()

    def channel(i):  # one forcing channel at the output instants (as Forcing.sample gives it)
        return np.interp(run.t, grid, forcing.values[i])

    sky = channel(1)
    sky -= KELVIN
    cols = {"outdoor_air_c": channel(0), "sky_c": sky, "wind_speed_m_s": channel(2)}
    for i, p in enumerate(net.plane_names):
        cols[f"poa_{p}_w_m2"] = channel(len(FORCING_BASE) + i)
    cols["attic_air_c"] = attic_air
    for name, i in idx.items():
        if name != "air":
            cols[name + "_c"] = temps[i]
    for i, p in enumerate(net.plane_names):
        cols[f"roof_surface_{p}_c"] = qp["roof_surface"][i]
        cols[f"deck_underside_{p}_c"] = qp["deck_underside"][i]
    cols["sensor_local_air_c"] = q["sensor_local_air"]
    cols["fan_on"] = run.fan.astype(int)
    cols["outdoor_air_flow_m3_s"] = air["outdoor_flow"]
    cols["fan_flow_m3_s"] = air["fan_flow"]
    cols["ceiling_flow_m3_s"] = air["ceiling_flow"]
    cols["attic_pressure_pa"] = air["pressure_attic"]
    cols["house_pressure_pa"] = air["pressure_house"]
    for j, name in enumerate(net.airflow.path_names):
        cols[f"flow_{name.replace(' ', '_')}_m3_s"] = air["path_flows"][j]
    cols["airflow_mass_residual"] = air["residual"]
    cols["solar_absorbed_w"] = q["solar"]
    longwave = q["sky"]
    longwave += q["ground"]
    cols["roof_longwave_w"] = longwave
    cols["roof_convection_w"] = q["exterior_convection"]
    cols["ventilation_heat_w"] = q["ventilation"]
    cols["ceiling_heat_gain_w"] = q["ceiling_gain"]
    cols["fan_power_w"] = q["fan_electric"]
    load = q["house_air_sensible"]
    load += q["house_air_latent"]
    cols["house_air_load_w"] = load
    # the columns as they are (rows of the run's states, of the flows and forcing sampled once): no copy
    return pd.DataFrame(cols, index=pd.DatetimeIndex(times, name="time"), copy=False)


def monthly_figures(daily: pd.DataFrame) -> pd.DataFrame:
    """Per calendar month: run hours, starts, short cycles, fan kWh, ceiling gain with and without the fan,
    the season books (cooling savings, heating penalty, net benefit and their parts) and the days of each
    season (sums of the days), and the peak attic air temperature (maximum of the days)."""
    if daily.empty:
        return daily
    month = pd.to_datetime(daily["date"]).dt.strftime("%Y-%m")
    sums = ["fan_run_hours", "fan_starts", "short_cycles", "fan_energy_kwh", "ceiling_heat_gain_kwh",
            "ceiling_heat_gain_no_fan_kwh"] + [c for c in SEASON_HEAT + SEASON_ENERGY if c in daily]
    g = daily.groupby(month)
    out = g[sums].sum(min_count=1)
    if "season" in daily:
        for code, name in SEASON_NAMES.items():
            out[f"days_{name}"] = g["season"].apply(lambda x, name=name: int((x == name).sum()))
    out["attic_air_max_c"] = g["attic_air_max_c"].max()
    out["outdoor_air_max_c"] = g["outdoor_air_max_c"].max()
    out["days"] = g.size()
    return out.reset_index(names="month")


def held_integral(updates, t_end, name, positive=False):
    """Integral over time of a held airflow quantity (exact: flows are constant between updates)."""
    total = 0.0
    for (t0, state), (t1, _) in zip(updates, updates[1:] + [(t_end, None)]):
        v = getattr(state, name)
        total += (max(v, 0.0) if positive else v) * (t1 - t0)
    return total


def airflow_figures(scenario, raw, air, books, books_nf):
    """Airflow summary: fan flow, natural air changes, conditioned air drawn, depressurisation, and the vent
    and depressurisation checks (the net benefit is the season books': :func:`season_summary`)."""
    from atticsim.airflow import checks

    run, period = raw.with_fan, raw.period
    fan_on = run.fan.astype(bool)
    volume = scenario.attic.volume
    off = ~fan_on
    load = (books["house_air_sensible"] + books["house_air_latent"]) / J_PER_KWH
    load_nf = ((books_nf["house_air_sensible"] + books_nf["house_air_latent"]) / J_PER_KWH
               if books_nf else None)
    depress = [s.depressurisation for _, s in run.air_updates if np.isfinite(s.depressurisation)]
    figures = {
        "airflow_model": raw.network.airflow.kind,
        "fan_flow_mean_m3s": float(np.mean(air["fan_flow"][fan_on])) if fan_on.any() else None,
        "natural_ach_mean": float(np.mean(air["outdoor_flow"][off]) * 3600.0 / volume) if off.any() else None,
        "conditioned_air_drawn_m3": held_integral(run.air_updates, period.t_end, "ceiling_flow", positive=True),
        "conditioned_air_drawn_no_fan_m3": (held_integral(raw.without_fan.air_updates, period.t_end, "ceiling_flow",
                                                          positive=True) if raw.without_fan else None),
        "conditioned_air_load_kwh": load,
        "conditioned_air_load_no_fan_kwh": load_nf,
        "house_depressurisation_max_pa": max(depress) if depress else 0.0,
    }
    warnings = []
    openings = scenario.vents.openings
    if openings:
        total = sum(o.net_free_area for o in openings)
        upper = sum(o.net_free_area for o in openings if o.kind in ("ridge", "roof-vent", "gable")
                    and o.role != "intake")
        warnings += checks.check_code_vent_area(scenario.attic.floor_area, total, upper)
        intake = sum(o.net_free_area for o in openings if (o.role or ("intake" if o.kind == "soffit" else
                                                                        "exhaust")) == "intake")
        if scenario.fan.enabled:
            warnings += checks.check_intake_area(intake, scenario.fan.rated_flow)
    warnings += checks.check_house_depressurisation(figures["house_depressurisation_max_pa"],
                                                    scenario.house.depressurisation_limit,
                                                    scenario.house.atmospheric_appliances)
    figures["warnings"] = warnings
    return figures


# --- the season books: cooling savings, heating penalty, net benefit ------------------------------------

#: Heat figures of the season books [kWh of heat at the rooms], summed over the days by the sign of each day's
#: net flow and the day's season. Flows into the rooms are positive (the ceiling gain and the house air books).
SEASON_HEAT = ("ceiling_heat_kept_out_cooling_kwh", "air_heat_added_cooling_kwh",
               "ceiling_heat_loss_added_heating_kwh", "air_heat_loss_added_heating_kwh",
               "uncounted_ceiling_loss_added_cooling_kwh", "uncounted_ceiling_gain_kept_out_heating_kwh")
#: Energy figures in their carriers [kWh]: electricity at the meter, or the heating's carrier.
SEASON_ENERGY = ("cooling_savings_kwh", "cooling_air_cost_kwh", "heating_penalty_ceiling_kwh",
                 "heating_penalty_air_kwh", "heating_penalty_kwh", "net_benefit_kwh")
SEASON_NAMES = {1: "cooling", 0: "neither", -1: "heating"}


def season_days(raw, scenario, times) -> pd.DataFrame | None:
    """Per local day: its season and its season books [kWh of heat], from the energy books integrated with
    the states, with and without the fan. None without a no-fan run.

    Each day's net flows are summed first (the ceiling gain; the house air load, sensible + latent, and its
    sensible part), with (f) and without (n) the fan; then, with pos(x) = max(x, 0) and neg(x) = max(-x, 0):

    - cooling days: ceiling heat kept out pos(ceiling_n) - pos(ceiling_f); air heat added pos(air_f) -
      pos(air_n); and, not counted, ceiling loss added neg(ceiling_f) - neg(ceiling_n)
    - heating days: ceiling heat loss added neg(ceiling_f) - neg(ceiling_n); air heat loss added
      neg(sensible_f) - neg(sensible_n) (the latent part is left out: no humidifier is assumed); and, not
      counted, ceiling gain kept out pos(ceiling_n) - pos(ceiling_f)
    - days of neither: nothing (the rooms are neither cooled nor heated)

    A day, not each minute, is the unit (the rooms' heating or cooling makes up the day's net flow: a midday
    gain on a heated day offsets the night's loss). It also keeps the solver's noise out: the with-fan and
    no-fan runs differ by some 0.01-0.05 K for weeks after the fan's last switch (different segment grids of
    the fast solver), a difference that follows the day's cycle; split minute by minute it added some
    0.01 kWh of heating penalty a day in months the fan never ran (measured on the mixed-humid typical year);
    a day's sums cancel it.
    """
    nofan = raw.without_fan
    if nofan is None or raw.with_fan.t.size < 2:
        return None
    from atticsim.forcing.seasons import COOLING, HEATING, day_seasons, seasons_at

    n = raw.network.n_nodes
    forcing = raw.forcing
    seasons = forcing.seasons if getattr(forcing, "seasons", None) is not None else \
        day_seasons(forcing.times, forcing.values[0], scenario.house)

    # a day's net flow is its book's change from the day's first output instant to the next day's (the last
    # day's: to the period's end): the sum of the steps' increments, without forming them
    days = pd.DatetimeIndex(times[:-1]).normalize()
    first = np.flatnonzero(np.r_[True, days[1:] != days[:-1]])
    t_edges = raw.with_fan.t[np.append(first, raw.with_fan.t.size - 1)]

    def net(run, book):
        # the no-fan run's output grid is coarser but holds these instants (pipeline.no_fan_output_times)
        at = np.interp(t_edges, run.t, run.y[n + BOOKS.index(book)])
        return np.diff(at) / J_PER_KWH

    d = pd.DataFrame({
        "cf": net(raw.with_fan, "ceiling_gain"), "cn": net(nofan, "ceiling_gain"),
        "sf": net(raw.with_fan, "house_air_sensible"), "sn": net(nofan, "house_air_sensible"),
        "lf": net(raw.with_fan, "house_air_latent"), "ln": net(nofan, "house_air_latent")}, index=days[first])
    code = seasons_at(d.index, seasons)
    cool, heat = code == COOLING, code == HEATING
    af, an = d["sf"] + d["lf"], d["sn"] + d["ln"]

    def pos(x):
        return np.maximum(x, 0.0)

    def neg(x):
        return np.maximum(-x, 0.0)

    out = pd.DataFrame({
        "season": code,
        "ceiling_heat_kept_out_cooling_kwh": np.where(cool, pos(d["cn"]) - pos(d["cf"]), 0.0),
        "air_heat_added_cooling_kwh": np.where(cool, pos(af) - pos(an), 0.0),
        "ceiling_heat_loss_added_heating_kwh": np.where(heat, neg(d["cf"]) - neg(d["cn"]), 0.0),
        "air_heat_loss_added_heating_kwh": np.where(heat, neg(d["sf"]) - neg(d["sn"]), 0.0),
        "uncounted_ceiling_loss_added_cooling_kwh": np.where(cool, neg(d["cf"]) - neg(d["cn"]), 0.0),
        "uncounted_ceiling_gain_kept_out_heating_kwh": np.where(heat, pos(d["cn"]) - pos(d["cf"]), 0.0),
    }, index=d.index)
    return out


def season_energy(heat: dict, house, fan_energy_kwh: float) -> dict:
    """Energy figures of the season books from their heat figures [kWh].

    cooling_savings = ceiling heat kept out while cooling / cooling COP [electricity];
    cooling_air_cost = air heat added while cooling / cooling COP [electricity];
    heating_penalty = (ceiling heat loss added + air heat loss added while heating) / heating efficiency
    [the heating's carrier: fuel for a furnace, electricity for resistance heat or a heat pump];
    net_benefit = cooling_savings - cooling_air_cost - fan energy - heating_penalty when the heating runs on
    electricity [electricity at the meter; positive: the fan saves] (common practice, no source: each
    system delivers or removes heat at its efficiency).
    """
    cop, eff = house.cooling_cop, house.heating_efficiency
    out = {
        "cooling_savings_kwh": heat["ceiling_heat_kept_out_cooling_kwh"] / cop,
        "cooling_air_cost_kwh": heat["air_heat_added_cooling_kwh"] / cop,
        "heating_penalty_ceiling_kwh": heat["ceiling_heat_loss_added_heating_kwh"] / eff,
        "heating_penalty_air_kwh": heat["air_heat_loss_added_heating_kwh"] / eff,
    }
    out["heating_penalty_kwh"] = out["heating_penalty_ceiling_kwh"] + out["heating_penalty_air_kwh"]
    electric_heat = house.heating_energy_carrier == "electricity"
    out["net_benefit_kwh"] = (out["cooling_savings_kwh"] - out["cooling_air_cost_kwh"] - fan_energy_kwh
                              - (out["heating_penalty_kwh"] if electric_heat else 0.0))
    return out


def season_summary(parts, scenario, fan_energy_kwh: float) -> dict:
    """The season books over the whole period, their days and how every figure is converted."""
    from atticsim.forcing.seasons import rule_text

    house = scenario.house
    out = {"season_rule": rule_text(house, scenario.ceiling.room_temperature),
           "cooling_cop": house.cooling_cop, "heating_efficiency": house.heating_efficiency,
           "heating_penalty_carrier": house.heating_energy_carrier}
    if parts is None:
        return {**out, **{k: None for k in SEASON_HEAT + SEASON_ENERGY}}
    for code, name in SEASON_NAMES.items():
        out[f"days_{name}"] = int((parts["season"] == code).sum())
    heat = {k: float(parts[k].sum()) for k in SEASON_HEAT}
    out.update(heat)
    out.update(season_energy(heat, house, fan_energy_kwh))
    carrier = "fuel" if house.heating_energy_carrier == "fuel" else "electricity"
    out["energy_basis"] = [
        f"cooling_savings_kwh: electricity = ceiling_heat_kept_out_cooling_kwh / cooling COP {house.cooling_cop:g}",
        f"cooling_air_cost_kwh: electricity = air_heat_added_cooling_kwh / cooling COP {house.cooling_cop:g}",
        f"heating_penalty_kwh: {carrier} = (ceiling_heat_loss_added_heating_kwh + air_heat_loss_added_heating_kwh) "
        f"/ heating efficiency {house.heating_efficiency:g}",
        "net_benefit_kwh: electricity at the meter = cooling_savings_kwh - cooling_air_cost_kwh - fan_energy_kwh"
        + (" - heating_penalty_kwh" if carrier == "electricity" else
           " (the heating penalty is fuel, reported apart and not added)"),
        "by season and sign, day by day: on a cooled day only a net flow into the rooms counts, on a heated day "
        "only a net flow out of them; the opposite flows are given as uncounted_... figures",
    ]
    return out


#: The heating penalty [kWh of its carrier over the period] from which the run warns that the fan adds heating:
#: below it the figure is the two runs' rounding-level differences on days the fan hardly runs, not advice
#: (a threshold of practice, no source).
HEATING_PENALTY_WARN_KWH = 1.0


def season_warnings(summary: dict, scenario) -> list[str]:
    """Warnings from the season books: the fan costs more electricity than it saves; it adds heating (from
    :data:`HEATING_PENALTY_WARN_KWH`)."""
    out = []
    if not scenario.fan.enabled or summary.get("net_benefit_kwh") is None:
        return out
    net, pen = summary["net_benefit_kwh"], summary.get("heating_penalty_kwh") or 0.0
    fuel = summary["heating_penalty_carrier"] == "fuel"
    if net < 0:
        extra = (f", and it adds {pen:.2f} kWh of fuel for heating" if fuel and pen >= 0.005 else "")
        out.append(f"The fan costs more electricity than it saves over this period (net benefit {net:.2f} kWh at "
                   f"the meter, cooling COP {scenario.house.cooling_cop:g}{extra}); a lower-flow fan, a higher "
                   f"switch-on temperature or more ceiling insulation changes the balance.")
    if pen >= HEATING_PENALTY_WARN_KWH and summary.get("days_heating"):
        out.append(f"In the heating season the fan adds {pen:.2f} kWh of {summary['heating_penalty_carrier']} for "
                   f"heating (heat drawn out through the ceiling and with the air it pulls from the house): "
                   f"switch it off for the winter.")
    return out


def _daily_seasons(daily: pd.DataFrame, parts, scenario) -> pd.DataFrame:
    """The daily table with each day's season and its season books (:func:`season_days`)."""
    if parts is None or daily.empty:
        return daily
    sums = parts[list(SEASON_HEAT)].copy()
    sums["season"] = parts["season"].map(SEASON_NAMES)
    sums.index = [d.date().isoformat() for d in sums.index]
    daily = daily.join(sums, on="date")
    energy = season_energy({k: daily[k] for k in SEASON_HEAT}, scenario.house, daily["fan_energy_kwh"])
    for k, v in energy.items():
        daily[k] = v
    cols = ["date", "season"] + [c for c in daily.columns if c not in ("date", "season")]
    return daily[cols]


def _daily(ts, run, nofan, intervals, forcing, period, short_cycle, n):
    """Per local day: run hours, starts, short cycles, median cycle, kWh, attic max/mean, ceiling gains."""
    base = forcing.times[0]
    day0 = period.start.normalize()
    edges = pd.date_range(day0, period.end + pd.Timedelta("1D"), freq="1D")
    edges = edges[(edges >= day0)]
    rows = []

    def cum(book_series_run, t):
        return np.interp(t, book_series_run.t, book_series_run.y[n + BOOKS.index("ceiling_gain")])

    # sorted arrays and positions instead of per-day filters (intervals and events are in time order)
    starts = np.array([s for s, _, _ in intervals], dtype=float)
    ends = np.array([e for _, e, _ in intervals], dtype=float)
    on_times = np.array([t for t, st, *_ in run.events if st], dtype=float)
    index = ts.index
    attic, outdoor = ts["attic_air_c"].to_numpy(), ts["outdoor_air_c"].to_numpy()
    fan_e = run.y[n + BOOKS.index("fan_electric")]
    for a, b in zip(edges[:-1], edges[1:]):
        lo = max((a - base).total_seconds(), period.t_start)
        hi = min((b - base).total_seconds(), period.t_end)
        if hi <= lo:
            continue
        overlap = np.clip(np.minimum(ends, hi) - np.maximum(starts, lo), 0.0, None)
        first, last = np.searchsorted(starts, lo, side="left"), np.searchsorted(starts, hi, side="left")
        started = intervals[first:last]
        i0, i1 = index.searchsorted(a, side="left"), index.searchsorted(b, side="left")
        row = {
            "date": a.date().isoformat(),
            "fan_run_hours": float(overlap.sum()) / 3600.0,
            "fan_starts": int(np.searchsorted(on_times, hi, side="left") - np.searchsorted(on_times, lo, side="left")),
            **_cycle_figures(started, short_cycle),
            "fan_energy_kwh": (np.interp(hi, run.t, fan_e) - np.interp(lo, run.t, fan_e)) / J_PER_KWH,
            "attic_air_max_c": float(attic[i0:i1].max()) if i1 > i0 else None,
            "attic_air_mean_c": float(attic[i0:i1].mean()) if i1 > i0 else None,
            "outdoor_air_max_c": float(outdoor[i0:i1].max()) if i1 > i0 else None,
            "ceiling_heat_gain_kwh": (cum(run, hi) - cum(run, lo)) / J_PER_KWH,
            "ceiling_heat_gain_no_fan_kwh": ((cum(nofan, hi) - cum(nofan, lo)) / J_PER_KWH
                                             if nofan is not None else None),
        }
        rows.append(row)
    return pd.DataFrame(rows)
