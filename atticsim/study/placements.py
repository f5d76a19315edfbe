"""Side-by-side comparison of sensor placements: one scenario, the same weather, one run per placement."""

from __future__ import annotations

from concurrent.futures import as_completed

import numpy as np
import pandas as pd

from atticsim.network.placement import PLACEMENTS

#: Plain-language reasons a technician understands, by placement (from the placement records).
WHY = {name: p.why for name, p in PLACEMENTS.items()}


def _one(args):
    scenario, placement, start, end, months, year = args
    from atticsim.pipeline import run_raw
    from atticsim.results.metrics import build_result

    sc = scenario.model_copy(update={"sensor": scenario.sensor.model_copy(update={"placement": placement})})
    raw = run_raw(sc, start=start, end=end, include_no_fan=False, months=months, year=year)
    return placement, build_result(sc, raw)


def run_placements(scenario, placements=None, start=None, end=None, months=None, year=None, workers=1,
                   on_done=None):
    """Run the scenario once per placement (fan under thermostat control; no no-fan run needed).

    ``on_done()``, when given, is called as each placement's run finishes (a progress bar's ``update``).

    Returns
    -------
    dict
        placement -> SimulationResult, in the order asked.
    """
    placements = list(placements or PLACEMENTS)
    unknown = [p for p in placements if p not in PLACEMENTS]
    if unknown:
        raise ValueError(f"--only: unknown placement(s) {', '.join(unknown)}; known: {', '.join(PLACEMENTS)}")
    jobs = [(scenario, p, start, end, months, year) for p in placements]
    done = {}
    if workers > 1 and len(jobs) > 1:
        from atticsim.processes import process_pool

        pool = process_pool(min(workers, len(jobs)))  # workers end with this process
        try:
            for fut in as_completed([pool.submit(_one, job) for job in jobs]):
                name, result = fut.result()
                done[name] = result
                if on_done is not None:
                    on_done()
        except BaseException:  # Ctrl-C, SIGTERM, a failed run: do not wait for the other placements
            pool.shutdown(wait=False, cancel_futures=True)
            raise
        pool.shutdown()
    else:
        for job in jobs:
            name, result = _one(job)
            done[name] = result
            if on_done is not None:
                on_done()
    return {p: done[p] for p in placements}


def sensor_lag_minutes(sensor, reference, max_lag=60):
    """Lag of a sensor trace behind a reference trace [min], both sampled every minute: the shift that
    minimises the RMS difference after removing the mean offset (common practice, no source)."""
    s, r = np.asarray(sensor, float), np.asarray(reference, float)
    best, best_err = 0, np.inf
    for k in range(0, min(max_lag, len(s) - 2) + 1):
        d = s[k:] - r[:len(r) - k]
        err = np.sqrt(np.mean((d - d.mean()) ** 2))
        if err < best_err - 1e-12:
            best, best_err = k, err
    return float(best)


def placement_table(results: dict) -> pd.DataFrame:
    """One row per placement: starts per day, short cycles, median on-time, run hours, attic peak, ceiling
    heat gain, mean sensor offset from and lag behind the upper air, overshoot of the upper air at switch-on."""
    rows = []
    for name, r in results.items():
        s, ts = r.summary, r.timeseries
        upper = ts["air_upper_c"] if "air_upper_c" in ts else ts["attic_air_c"]
        step_min = (ts.index[1] - ts.index[0]).total_seconds() / 60.0
        ev = r.events
        ons = ev[ev.fan == "on"]
        upper_at_on = np.interp((ons.time - ts.index[0]).dt.total_seconds(),
                                (ts.index - ts.index[0]).total_seconds(), upper) if len(ons) else np.array([])
        rows.append({
            "placement": name,
            "starts_per_day": s["fan_starts"] / s["days"],
            "fan_starts": s["fan_starts"],
            "short_cycles": s["short_cycles"],
            "median_on_minutes": s["cycle_minutes_median"],
            "fan_run_hours": s["fan_run_hours"],
            "attic_air_max_c": s["attic_air_max_c"],
            "ceiling_heat_gain_kwh": s["ceiling_heat_gain_kwh"],
            "fan_energy_kwh": s["fan_energy_kwh"],
            "sensor_minus_upper_air_mean_k": float(np.mean(ts["sensor_c"] - upper)),
            "sensor_lag_min": sensor_lag_minutes(ts["sensor_c"], upper) * step_min,
            "overshoot_at_switch_on_k": float(np.mean(upper_at_on - s["switch_on_sensor_c"])) if len(ons) else None,
        })
    return pd.DataFrame(rows)


def placement_findings(table: pd.DataFrame, short_cycle_min: float) -> list[str]:
    """Sentences for the terminal: which placements short-cycle and why; which run longest."""
    lines = []
    for _, row in table.iterrows():
        name = row["placement"]
        if row["short_cycles"] > 0:
            lines.append(f"{name}: SHORT-CYCLES ({row['short_cycles']} runs under {short_cycle_min:.0f} min, "
                         f"{row['starts_per_day']:.1f} starts a day) because {WHY[name]}.")
    air = [name for name, p in PLACEMENTS.items() if p.reads_attic_air]
    base = table.loc[table["placement"].isin(air), "fan_run_hours"]
    ref = float(base.mean()) if len(base) else float(table["fan_run_hours"].median())
    for _, row in table.iterrows():
        name = row["placement"]
        if row["short_cycles"] == 0 and ref > 0 and row["fan_run_hours"] > 1.15 * ref:
            lines.append(f"{name}: runs the fan {row['fan_run_hours'] / ref:.1f}x as long as the air placements "
                         f"because {WHY[name]}.")
    if not lines:
        lines.append("no placement short-cycles on this scenario and period.")
    return lines
