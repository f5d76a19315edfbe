"""Results and metrics: time series, switching events, fan cycles, energy books, summary and daily figures.

Run-time figures come from the exact event times (not from sampled fan states); energies come from
the books integrated with the states; temperatures' maxima and means come from the output samples.
"""

from __future__ import annotations

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
    for t, state, _ in events:
        if state and t_on is None:
            t_on, complete_start = t, True
        elif not state and t_on is not None:
            intervals.append((t_on, t, complete_start))
            t_on = None
    if t_on is not None:
        intervals.append((t_on, t_end, False))
    return intervals


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
        air = stack_states(run.air, names=AIR_ORDER + ("outdoor_flow",), runs=run.air_runs)
        sensor_local_air = net.sensor_local_air(temps, f, run.fan, SimpleNamespace(**air))
        ts = pd.DataFrame({"attic_air_c": attic_air, "fan_on": run.fan.astype(int)},
                          index=pd.DatetimeIndex(times, name="time"))
    else:
        f = forcing.sample(run.t)
        air = stack_states(run.air, runs=run.air_runs)
        ts = _timeseries(net, run, f, air, attic_air, times)
        sensor_local_air = ts["sensor_local_air_c"].to_numpy()

    # (as one float array: a list of floats is converted element by element)
    ev_times = forcing.times[0] + pd.to_timedelta(np.array([e[0] for e in run.events], dtype=float), unit="s")
    events = pd.DataFrame({
        "time": ev_times,
        "fan": ["on" if e[1] else "off" for e in run.events],
        "sensor_c": [e[2] for e in run.events],
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
        **_cycle_figures(intervals, sim.short_cycle),
        "attic_air_max_c": float(np.max(attic_air)),
        "attic_air_mean_c": float(np.mean(attic_air)),
        "attic_upper_air_max_c": float(np.max(temps[net.i_upper])),
        "outdoor_air_max_c": float(np.max(f[0])),
        "deck_max_c": net.deck_underside_max(temps),
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
        "thermostat_kind": scenario.thermostat.kind,
        "switch_on_sensor_c": raw.controller.on,
        "switch_off_sensor_c": raw.controller.off,
        "sensor_above_local_air_max_k": float(np.max(temps[idx["sensor"]] - sensor_local_air)),
        "sensor_placement": scenario.sensor.placement,
        **airflow_figures(scenario, raw, air, books, books_nf),
    }
    notes = list(raw.notes)
    if summary_only:
        return SimulationResult(summary, None, ts, events, notes, scenario, None)
    daily = _daily(ts, run, nofan, intervals, forcing, period, sim.short_cycle, n, scenario.house.cooling_cop)
    return SimulationResult(summary, daily, ts, events, notes, scenario, monthly_figures(daily))


def _timeseries(net, run, f, air, attic_air, times) -> pd.DataFrame:
    """The full time-series frame of a run (states, forcing, air flows, heat rates at each output step)."""
    temps = run.y[:net.n_nodes]
    idx = net.index
    q = net.flows(temps, f, run.fan, SimpleNamespace(**air))

    cols = {"outdoor_air_c": f[0], "sky_c": f[1] - KELVIN, "wind_speed_m_s": f[2]}
    for i, p in enumerate(net.plane_names):
        cols[f"poa_{p}_w_m2"] = f[len(FORCING_BASE) + i]
    cols["attic_air_c"] = attic_air
    for name, i in idx.items():
        if name != "air":
            cols[name + "_c"] = temps[i]
    for i, p in enumerate(net.plane_names):
        cols[f"roof_surface_{p}_c"] = q["roof_surface"][i]
        cols[f"deck_underside_{p}_c"] = q["deck_underside"][i]
    cols["sensor_local_air_c"] = q["sensor_local_air"]
    cols["fan_on"] = run.fan.astype(int)
    cols["outdoor_air_flow_m3_s"] = air["outdoor_flow"]
    cols["fan_flow_m3_s"] = air["fan_flow"]
    cols["ceiling_flow_m3_s"] = air["ceiling_flow"]
    cols["attic_pressure_pa"] = air["pressure_attic"]
    cols["house_pressure_pa"] = air["pressure_house"]
    for j, name in enumerate(net.airflow.path_names):
        cols[f"flow_{name.replace(' ', '_')}_m3_s"] = air["path_flows"][:, j]
    cols["airflow_mass_residual"] = air["residual"]
    cols["solar_absorbed_w"] = q["solar"]
    cols["roof_longwave_w"] = q["sky"] + q["ground"]
    cols["roof_convection_w"] = q["exterior_convection"]
    cols["ventilation_heat_w"] = q["ventilation"]
    cols["ceiling_heat_gain_w"] = q["ceiling_gain"]
    cols["fan_power_w"] = q["fan_electric"]
    cols["house_air_load_w"] = q["house_air_sensible"] + q["house_air_latent"]
    return pd.DataFrame(cols, index=pd.DatetimeIndex(times, name="time"))


def monthly_figures(daily: pd.DataFrame) -> pd.DataFrame:
    """Per calendar month: run hours, starts, short cycles, fan kWh, ceiling gain with and without the fan,
    conditioned-air load and net benefit (sums of the days), and the peak attic air temperature (maximum
    of the days)."""
    if daily.empty:
        return daily
    month = pd.to_datetime(daily["date"]).dt.strftime("%Y-%m")
    sums = [c for c in ("fan_run_hours", "fan_starts", "short_cycles", "fan_energy_kwh", "ceiling_heat_gain_kwh",
                        "ceiling_heat_gain_no_fan_kwh", "conditioned_air_load_kwh", "net_benefit_kwh") if c in daily]
    g = daily.groupby(month)
    out = g[sums].sum(min_count=1)
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
    """Airflow summary: fan flow, natural air changes, conditioned air drawn, depressurisation, net benefit.

    ``net_benefit_kwh`` is on the basis of electricity at the meter: (ceiling heat gain avoided minus the
    extra load of conditioned air drawn from the house) divided by the cooling system's COP
    (``house.cooling_cop``), minus the fan's electric energy. Positive means the fan saves electricity.
    """
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
    if books_nf:
        avoided = (books_nf["ceiling_gain"] - books["ceiling_gain"]) / J_PER_KWH
        figures["net_benefit_kwh"] = (avoided - (load - load_nf)) / scenario.house.cooling_cop - \
            books["fan_electric"] / J_PER_KWH
    else:
        figures["net_benefit_kwh"] = None
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
    if figures["net_benefit_kwh"] is not None and figures["net_benefit_kwh"] < 0 and scenario.fan.enabled:
        warnings.append(f"The fan costs more electricity than it saves over this period "
                        f"(net benefit {figures['net_benefit_kwh']:.2f} kWh at the meter, "
                        f"cooling COP {scenario.house.cooling_cop:g}).")
    figures["warnings"] = warnings
    return figures


def _daily(ts, run, nofan, intervals, forcing, period, short_cycle, n, cop=3.0):
    """Per local day: run hours, starts, short cycles, median cycle, kWh, attic max/mean, ceiling gains,
    the load of conditioned air drawn through the ceiling and the net benefit (as in the summary)."""
    base = forcing.times[0]
    day0 = period.start.normalize()
    edges = pd.date_range(day0, period.end + pd.Timedelta("1D"), freq="1D")
    edges = edges[(edges >= day0)]
    rows = []

    def cum(book_series_run, t, books=("ceiling_gain",)):
        return sum(np.interp(t, book_series_run.t, book_series_run.y[n + BOOKS.index(b)]) for b in books)

    house_air = ("house_air_sensible", "house_air_latent")

    # sorted arrays and positions instead of per-day filters (intervals and events are in time order)
    starts = np.array([s for s, _, _ in intervals], dtype=float)
    ends = np.array([e for _, e, _ in intervals], dtype=float)
    on_times = np.array([t for t, st, _ in run.events if st], dtype=float)
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
            "conditioned_air_load_kwh": (cum(run, hi, house_air) - cum(run, lo, house_air)) / J_PER_KWH,
        }
        if nofan is not None:
            load_nf = (cum(nofan, hi, house_air) - cum(nofan, lo, house_air)) / J_PER_KWH
            avoided = row["ceiling_heat_gain_no_fan_kwh"] - row["ceiling_heat_gain_kwh"]
            row["net_benefit_kwh"] = (avoided - (row["conditioned_air_load_kwh"] - load_nf)) / cop - row["fan_energy_kwh"]
        rows.append(row)
    return pd.DataFrame(rows)
