"""Figures per study point and the study's verdict: degree-hours, starts in any hour, net benefit, the Pareto
set and one recommended point by a documented rule.

Everything here works on plain arrays and pandas tables; nothing runs a simulation.
"""

from __future__ import annotations

import math

import numpy as np

#: Cooling COP used to turn avoided ceiling heat gain into avoided air-conditioner electricity when the
#: scenario does not give ``house.cooling_cop`` [W heat / W electric]. A typical residential air
#: conditioner (common practice, no source; from memory: SEER 10-13 units run at COP ~3-3.8).
DEFAULT_COOLING_COP = 3.0

#: The recommendation rule, printed and written to recommendation.json.
RULE = ("Among points whose fan never starts more than the limit in any 60-minute window, take those with "
        "the lowest heat figure (values within 1 % or 0.01 of the lowest count as equal); among them the "
        "narrowest hysteresis, then the fewest starts, then the least fan energy, then the lowest point number.")


def degree_hours_above(temps_c, hours, limit_c: float) -> float:
    """Degree-hours of a temperature above a limit [K*h].

    DH = integral of max(T(t) - T_lim, 0) dt, by the trapezoidal rule over the samples (the definition of
    degree-hours above a base temperature; common practice, no source).
    Where the series crosses the limit between two samples the crossing point is inserted, so a
    piecewise-linear series is integrated exactly.

    Parameters
    ----------
    temps_c : array_like
        Temperatures [degC] at the sample times.
    hours : array_like
        Sample times [h], increasing.
    limit_c : float
        Limit [degC].

    Returns
    -------
    float
        Degree-hours above the limit [K*h].
    """
    t = np.asarray(hours, dtype=float)
    x = np.asarray(temps_c, dtype=float) - float(limit_c)
    if t.shape != x.shape or t.ndim != 1:
        raise ValueError("degree_hours_above: temps_c and hours must be 1-D arrays of the same length")
    if t.size < 2:
        return 0.0
    if np.any(np.diff(t) <= 0):
        raise ValueError("degree_hours_above: hours must increase")
    if not np.all(np.isfinite(x)):
        raise ValueError("degree_hours_above: temperatures must be finite")
    x0, x1, t0, t1 = x[:-1], x[1:], t[:-1], t[1:]
    dt = t1 - t0
    p0, p1 = np.maximum(x0, 0.0), np.maximum(x1, 0.0)
    area = 0.5 * (p0 + p1) * dt
    cross = (x0 > 0) != (x1 > 0)
    # On a crossing interval only the triangle above the limit counts: 0.5 * x_pos^2 / |slope|.
    with np.errstate(divide="ignore", invalid="ignore"):
        tri = 0.5 * np.maximum(x0, x1) ** 2 * dt / np.abs(x1 - x0)
    area = np.where(cross, tri, area)
    return float(np.sum(area))


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


def net_benefit_kwh(summary: dict, cop: float = DEFAULT_COOLING_COP) -> float:
    """Electricity the fan saves over the period [kWh]: the summary's ``net_benefit_kwh`` when it has one,
    else avoided ceiling heat gain / COP - fan energy.

    E_net = (Q_ceiling,no fan - Q_ceiling,fan) / COP - E_fan (common practice, no source: the air
    conditioner removes the ceiling gain at its COP; positive means the fan saves energy).

    Parameters
    ----------
    summary : dict
        A run's summary (``ceiling_heat_gain_kwh``, ``ceiling_heat_gain_no_fan_kwh``, ``fan_energy_kwh``).
    cop : float
        Cooling COP [-], > 0.

    Returns
    -------
    float
        [kWh]; NaN when the figures needed are missing.
    """
    if summary.get("net_benefit_kwh") is not None:
        return float(summary["net_benefit_kwh"])
    if not cop > 0:
        raise ValueError(f"cop: must be greater than 0 (got {cop!r})")
    try:
        gain, gain0, fan = (float(summary[k]) for k in ("ceiling_heat_gain_kwh", "ceiling_heat_gain_no_fan_kwh",
                                                       "fan_energy_kwh"))
    except (KeyError, TypeError):
        return math.nan
    return (gain0 - gain) / cop - fan


def pareto_mask(objectives) -> np.ndarray:
    """Which rows are Pareto-optimal when every column is to be minimised.

    A row is dominated when another row is no worse in every objective and strictly better in at least one
    (Pareto dominance, e.g. Deb, Multi-Objective Optimization using Evolutionary Algorithms, 2001, sec. 2.4).
    Rows with a NaN objective are never optimal; identical rows are all kept.

    Parameters
    ----------
    objectives : array_like
        Shape (n_rows, n_objectives).

    Returns
    -------
    numpy.ndarray of bool
        Shape (n_rows,).
    """
    f = np.asarray(objectives, dtype=float)
    if f.ndim != 2:
        raise ValueError("objectives: must be a 2-D array (rows x objectives)")
    valid = np.all(np.isfinite(f), axis=1)
    keep = valid.copy()
    idx = np.flatnonzero(valid)
    g = f[idx]
    for j, i in enumerate(idx):
        no_worse = np.all(g <= g[j], axis=1)
        better = np.any(g < g[j], axis=1)
        if np.any(no_worse & better):
            keep[i] = False
    return keep


def pareto_columns(heat_column: str) -> list[str]:
    """The objective columns of the Pareto set: starts per day, the heat figure and the fan energy."""
    return ["starts_per_day", heat_column, "fan_energy_kwh"]


def recommend(table, starts_limit: float, heat_column: str, rel_tol: float = 0.01, abs_tol: float = 0.01):
    """Pick one point by the rule :data:`RULE`.

    Parameters
    ----------
    table : pandas.DataFrame
        The points table (columns ``point``, ``status``, ``max_starts_per_hour``, ``hysteresis_k``,
        ``fan_starts``, ``fan_energy_kwh`` and ``heat_column``).
    starts_limit : float
        Allowed starts in any hour [1/h].
    heat_column : str
        Column minimised (``degree_hours_above_limit`` [K*h] or ``ceiling_heat_gain_kwh`` [kWh]).
    rel_tol, abs_tol : float
        Heat figures within ``max(abs_tol, rel_tol * |best|)`` of the lowest count as equal.

    Returns
    -------
    dict
        ``point`` (the row's ``point`` number, or None when no point respects the limit), ``reason``,
        ``candidates`` (number of points within the limit) and ``rule``.
    """
    import pandas as pd

    ok = table[(table["status"] == "ok")]
    heat = pd.to_numeric(ok[heat_column], errors="coerce")
    starts = pd.to_numeric(ok["max_starts_per_hour"], errors="coerce")
    within = ok[(starts <= starts_limit) & np.isfinite(heat)]
    out = {"rule": RULE, "starts_limit_per_hour": starts_limit, "heat_column": heat_column,
           "candidates": int(len(within))}
    if within.empty:
        if ok.empty:
            out.update(point=None, reason="no point finished without error")
        else:
            worst = ok.loc[starts.idxmin()] if starts.notna().any() else ok.iloc[0]
            out.update(point=None, reason=(
                f"no point keeps within {starts_limit:g} starts per hour; the fewest is point "
                f"{int(worst['point'])} with {worst['max_starts_per_hour']} starts in one hour"))
        return out
    h = pd.to_numeric(within[heat_column])
    best = float(h.min())
    tied = within[h <= best + max(abs_tol, rel_tol * abs(best))]
    hyst = pd.to_numeric(tied.get("hysteresis_k", pd.Series(np.nan, index=tied.index)), errors="coerce")
    order = pd.DataFrame({
        "hyst": hyst.fillna(np.inf), "starts": pd.to_numeric(tied["fan_starts"]),
        "energy": pd.to_numeric(tied["fan_energy_kwh"]), "point": tied["point"]}, index=tied.index)
    chosen = order.sort_values(["hyst", "starts", "energy", "point"], kind="mergesort").index[0]
    out.update(point=int(table.loc[chosen, "point"]),
               reason=f"{len(within)} of {len(table)} points keep within {starts_limit:g} starts per hour; "
                      f"{len(tied)} share the lowest {heat_column} ({best:.4g})")
    return out


def recommendation_text(rec: dict, table, axes_keys: list[str]) -> str:
    """A few lines for the terminal describing the recommended point."""
    lines = []
    if rec.get("point") is None:
        lines.append(f"recommendation: none - {rec['reason']}")
        return "\n".join(lines)
    row = table[table["point"] == rec["point"]].iloc[0]
    given = ", ".join(f"{k} = {row.get(k + '_given', row.get(k))}" for k in axes_keys)
    lines.append(f"recommended point {rec['point']}: {given}")
    parts = rec.get("circuit_parts")
    if parts:
        fixed = (f"; or a fixed {parts['sense_trim_fixed_ohm']:,.0f} ohm -> ON {parts['fixed_on_c']:.2f} degC"
                 if parts.get("sense_trim_fixed_ohm") else "")
        lines.append(f"  standard parts ({parts['series']}): feedback {parts['feedback_ohm']:,.0f} ohm, trimmer set "
                     f"to {parts['sense_trim_ohm']:,.0f} ohm -> ON {parts['realised_on_c']:.2f} degC, OFF "
                     f"{parts['realised_off_c']:.2f} degC{fixed}")

    def f(name, fmt, unit):
        v = row.get(name)
        try:
            return f"{float(v):{fmt}} {unit}".rstrip()
        except (TypeError, ValueError):
            return "n/a"

    lines.append(f"  starts {f('starts_per_day', '.1f', 'per day')}, at most {f('max_starts_per_hour', '.0f', '')} "
                 f"in any hour (limit {rec['starts_limit_per_hour']:g}); short cycles {f('short_cycles', '.0f', '')}")
    lines.append(f"  fan {f('fan_run_hours', '.1f', 'h')}, {f('fan_energy_kwh', '.2f', 'kWh')}; attic peak "
                 f"{f('attic_air_max_c', '.1f', 'degC')}, {f('degree_hours_above_limit', '.1f', 'K*h')} above the "
                 f"comfort limit; net benefit {f('net_benefit_kwh', '.2f', 'kWh')}")
    lines.append(f"  why: {rec['reason']}")
    return "\n".join(lines)


def circuit_parts(scenario, series: str = "E24") -> dict | None:
    """Standard-value parts that realise a circuit thermostat's switching points.

    For a scenario whose ``[thermostat]`` is a circuit, the recommended point's thresholds (thermistor
    temperatures from the exact node equations) are re-designed with
    :func:`atticsim.circuit.design_circuit`: feedback resistor rounded down to the series (hysteresis at
    least as wide), the trimmer setting for the exact switch-on point, and a series value in its place.
    Returns None for setpoint thermostats.
    """
    th = scenario.thermostat
    if th.kind != "circuit":
        return None
    from atticsim.circuit import design_circuit

    t = th.thresholds()
    d = design_circuit(th.circuit_params(), t.on_c, off_c=t.off_c, series=series)
    return {"series": series, "on_c": t.on_c, "off_c": t.off_c, "feedback_ohm": d.feedback,
            "sense_trim_ohm": d.sense_trim, "sense_trim_fixed_ohm": d.sense_trim_fixed,
            "realised_on_c": d.thresholds.on_c, "realised_off_c": d.thresholds.off_c,
            "fixed_on_c": d.thresholds_fixed.on_c if d.thresholds_fixed else None,
            "fixed_off_c": d.thresholds_fixed.off_c if d.thresholds_fixed else None,
            "findings": list(d.findings)}
