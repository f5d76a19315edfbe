"""Figures per study point and the study's verdict: degree-hours, starts in any hour, net benefit, the Pareto
set and one recommended point by a documented rule.

Everything here works on plain arrays and pandas tables; nothing runs a simulation.
"""

from __future__ import annotations

import math

import numpy as np

from atticsim.results.metrics import max_starts_in_window  # noqa: F401 (part of this module's interface)

#: Cooling COP used to turn avoided ceiling heat gain into avoided air-conditioner electricity when the
#: scenario does not give ``house.cooling_cop`` [W heat / W electric]. A typical residential air
#: conditioner (common practice, no source; from memory: SEER 10-13 units run at COP ~3-3.8).
DEFAULT_COOLING_COP = 3.0

#: Heat figures closer than this to the lowest always tie, in the figure's own unit (K*h or kWh): below it a
#: difference is numerical noise, not a property of the setting (common practice, no source).
HEAT_ABS_TOLERANCE = 0.01

#: How each objective is named for people (axis labels, recommendation.json).
OBJECTIVE_NAMES = {
    "degree_hours_above_limit": "attic degree-hours above the comfort limit [K*h]",
    "ceiling_heat_gain_kwh": "ceiling heat gain into the rooms [kWh]",
    "fan_energy_kwh": "fan electricity [kWh]",
    "starts_per_day": "fan starts per day",
}


def rule_text(starts_limit: float, short_cycles_allowed: int, heat_column: str, rel_tol: float,
              abs_tol: float = HEAT_ABS_TOLERANCE) -> str:
    """The recommendation rule in words, with its numbers, precise enough to apply by hand to points.csv."""
    return (f"1. A point qualifies when it finished, its fan never starts more than {starts_limit:g} times in any "
            f"60-minute window (max_starts_per_hour <= {starts_limit:g}) and it has at most {short_cycles_allowed} "
            f"short cycles (short_cycles <= {short_cycles_allowed}: complete runs shorter than the scenario's "
            f"simulation.short_cycle). 2. Among the qualifying points, every point whose {heat_column} is within "
            f"max({abs_tol:g}, {100.0 * rel_tol:g} % of the lowest) of the lowest qualifying {heat_column} ties "
            f"with it. 3. Of the tied points, the gentlest setting is chosen: the fewest fan starts (fan_starts), "
            f"then the least fan energy (fan_energy_kwh), then the widest hysteresis (hysteresis_k), then the "
            f"lowest point number. The runner-up is the point the same rule chooses when the chosen point is "
            f"left out.")


#: The rule with its default numbers (6 starts an hour, no short cycles, degree-hours within 1 %).
RULE = rule_text(6.0, 0, "degree_hours_above_limit", 0.01)


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
    """The objectives of the Pareto front, both minimised: the heat figure and the fan's electricity (what a
    cooler attic costs). Starts and short cycles are not traded: the front is drawn over qualifying points."""
    return [heat_column, "fan_energy_kwh"]


def qualifying(table, starts_limit: float, short_cycles_allowed: int, heat_column: str):
    """Boolean mask of the points that qualify for the recommendation (step 1 of :func:`rule_text`)."""
    import pandas as pd

    def num(name):
        return pd.to_numeric(table[name], errors="coerce") if name in table else pd.Series(np.nan, index=table.index)

    heat, starts, short = num(heat_column), num("max_starts_per_hour"), num("short_cycles")
    return ((table["status"] == "ok") & (starts <= starts_limit) & (short <= short_cycles_allowed)
            & np.isfinite(heat)).to_numpy()


def _choose(table, mask, heat_column, rel_tol, abs_tol):
    """Steps 2 and 3 of the rule over the rows in ``mask``: (chosen index label, tied count, lowest heat)."""
    import pandas as pd

    rows = table[mask]
    h = pd.to_numeric(rows[heat_column])
    best = float(h.min())
    tied = rows[h <= best + max(abs_tol, rel_tol * abs(best))]
    hyst = pd.to_numeric(tied["hysteresis_k"], errors="coerce") if "hysteresis_k" in tied else \
        pd.Series(np.nan, index=tied.index)
    order = pd.DataFrame({
        "starts": pd.to_numeric(tied["fan_starts"]), "hyst": -hyst.fillna(0.0),
        "energy": pd.to_numeric(tied["fan_energy_kwh"]), "point": tied["point"]}, index=tied.index)
    chosen = order.sort_values(["starts", "energy", "hyst", "point"], kind="mergesort").index[0]
    return chosen, len(tied), best


#: The thermostat's time rules a study may vary (the columns that tell a timer's points from the others).
RULE_KEYS = tuple(f"thermostat.{r}" for r in ("start_delay", "run_on", "min_run", "min_rest"))


def hysteresis_or_timer(table, mask, heat_column, rel_tol, abs_tol=HEAT_ABS_TOLERANCE) -> dict | None:
    """At the same heat figure (the points that tie in step 2 of the rule), the best point that stops the
    short-cycling with hysteresis alone against the best that uses a time rule with no wider a hysteresis,
    each by fewest starts then least fan energy; None when the study varies no time rule or no point
    qualifies.

    Returns
    -------
    dict
        ``hysteresis_point``, ``timer_point`` (None when that side has no tied point), ``winner``
        ("hysteresis" or "timer"; "tie" when equal) and ``text`` (one sentence).
    """
    import pandas as pd

    rules = [k for k in RULE_KEYS if k in table]
    if not rules or not mask.any():
        return None
    rows = table[mask]
    h = pd.to_numeric(rows[heat_column])
    best = float(h.min())
    tied = rows[h <= best + max(abs_tol, rel_tol * abs(best))]
    timed = (tied[rules].apply(pd.to_numeric, errors="coerce").fillna(0.0) > 0.0).any(axis=1)
    def best(part):
        order = part.assign(_s=pd.to_numeric(part["fan_starts"]), _e=pd.to_numeric(part["fan_energy_kwh"]))
        return order.sort_values(["_s", "_e", "point"], kind="mergesort").iloc[0]

    if (~timed).sum() == 0:
        b = best(tied)
        return {"hysteresis_point": None, "timer_point": int(b["point"]), "winner": "timer",
                "text": f"no point with hysteresis alone qualifies and ties on {heat_column}: a time rule is needed "
                        f"here (best: point {int(b['point'])}, {int(b['fan_starts'])} starts)"}
    if timed.sum() == 0:
        a = best(tied)
        return {"hysteresis_point": int(a["point"]), "timer_point": None, "winner": "hysteresis",
                "text": f"no point with a time rule ties on {heat_column} among the qualifying points: hysteresis "
                        f"alone does best here (point {int(a['point'])}, {int(a['fan_starts'])} starts)"}
    a = best(tied[~timed])
    # a timer is the alternative to a wider hysteresis: its points with no wider a band than hysteresis alone needs
    band = pd.to_numeric(tied["hysteresis_k"], errors="coerce") if "hysteresis_k" in tied else None
    narrower = timed & (band <= float(a["hysteresis_k"]) + 1e-9) if band is not None and pd.notna(
        a.get("hysteresis_k")) else timed
    if narrower.sum() == 0:
        return None
    b = best(tied[narrower])
    key_a, key_b = (float(a["fan_starts"]), float(a["fan_energy_kwh"])), (float(b["fan_starts"]), float(b["fan_energy_kwh"]))
    winner = "tie" if key_a == key_b else ("hysteresis" if key_a < key_b else "timer")

    def said(r):
        given = ", ".join(f"{k.split('.')[-1]} {r.get(k + '_given', r[k])}" for k in rules
                          if pd.to_numeric(r[k], errors="coerce") > 0)
        hyst = r.get("hysteresis_k")
        band = f"hysteresis {float(hyst):.2f} K" if hyst is not None and pd.notna(hyst) else "its hysteresis"
        return (f"point {int(r['point'])} ({band}{', ' + given if given else ''}: {int(r['fan_starts'])} starts, "
                f"{float(r['fan_energy_kwh']):.2f} kWh)")

    verdict = {"tie": "they tie", "hysteresis": "the wider hysteresis starts the motor less (or costs less)",
               "timer": "the timer starts the motor less (or costs less)"}[winner]
    text = (f"at the same {heat_column} the best with hysteresis alone is {said(a)}, the best with a time rule "
            f"{said(b)}: {verdict}")
    return {"hysteresis_point": int(a["point"]), "timer_point": int(b["point"]), "winner": winner, "text": text}


def recommend(table, starts_limit: float, heat_column: str, short_cycles_allowed: int = 0, rel_tol: float = 0.01,
              abs_tol: float = HEAT_ABS_TOLERANCE):
    """Pick one point, and a runner-up, by the rule :func:`rule_text`.

    Parameters
    ----------
    table : pandas.DataFrame
        The points table (columns ``point``, ``status``, ``max_starts_per_hour``, ``short_cycles``,
        ``hysteresis_k``, ``fan_starts``, ``fan_energy_kwh`` and ``heat_column``).
    starts_limit : float
        Allowed starts in any hour [1/h].
    heat_column : str
        Column minimised (``degree_hours_above_limit`` [K*h] or ``ceiling_heat_gain_kwh`` [kWh]).
    short_cycles_allowed : int
        Short cycles a qualifying point may have.
    rel_tol, abs_tol : float
        Heat figures within ``max(abs_tol, rel_tol * |lowest|)`` of the lowest qualifying figure tie.

    Returns
    -------
    dict
        ``point`` and ``runner_up`` (point numbers, or None), ``reason``, ``candidates`` (qualifying points),
        ``tied``, ``rule`` and the rule's numbers.
    """
    import pandas as pd

    mask = qualifying(table, starts_limit, short_cycles_allowed, heat_column)
    out = {"rule": rule_text(starts_limit, short_cycles_allowed, heat_column, rel_tol, abs_tol),
           "starts_limit_per_hour": starts_limit, "short_cycles_allowed": short_cycles_allowed,
           "heat_column": heat_column, "heat_tolerance": rel_tol, "heat_tolerance_abs": abs_tol,
           "candidates": int(mask.sum()), "runner_up": None}
    ok = table[table["status"] == "ok"]
    if not mask.any():
        if ok.empty:
            out.update(point=None, reason="no point finished without error")
            return out
        starts = pd.to_numeric(ok["max_starts_per_hour"], errors="coerce")
        short = pd.to_numeric(ok["short_cycles"], errors="coerce") if "short_cycles" in ok else starts * np.nan
        gentlest = ok.loc[(starts.fillna(np.inf) * 1e6 + short.fillna(np.inf)).idxmin()]
        out.update(point=None, reason=(
            f"no point keeps within {starts_limit:g} starts per hour with at most {short_cycles_allowed} short "
            f"cycles; the gentlest is point {int(gentlest['point'])} with {gentlest['max_starts_per_hour']:g} starts "
            f"in one hour and {gentlest.get('short_cycles', float('nan')):g} short cycles: widen the hysteresis "
            f"range, or allow more short cycles (--short-cycles-allowed)"))
        return out
    chosen, n_tied, best = _choose(table, mask, heat_column, rel_tol, abs_tol)
    out["point"] = int(table.loc[chosen, "point"])
    out["tied"] = n_tied
    rest = mask & (table.index != chosen)
    if rest.any():
        out["runner_up"] = int(table.loc[_choose(table, rest, heat_column, rel_tol, abs_tol)[0], "point"])
    n_limit = int(((table["status"] == "ok") & (pd.to_numeric(table["max_starts_per_hour"], errors="coerce")
                                                 <= starts_limit)).sum())
    out["hysteresis_or_timer"] = hysteresis_or_timer(table, mask, heat_column, rel_tol, abs_tol)
    out["reason"] = (f"{n_limit} of {len(table)} points keep within {starts_limit:g} starts per hour, "
                     f"{int(mask.sum())} of them with {'no' if short_cycles_allowed == 0 else f'at most {short_cycles_allowed}'} "
                     f"short cycles; {n_tied} of those "
                     f"tie on {heat_column} (lowest {best:.4g}, tolerance "
                     f"{max(abs_tol, rel_tol * abs(best)):.3g}); the gentlest of them is chosen")
    return out


def _least_allowed(key: str) -> float:
    """The lowest value a scenario key may take (its schema's ``ge`` bound; 0 for a time rule), or -inf when it
    has none."""
    import annotated_types

    from atticsim.scenario.fields import locate
    from atticsim.scenario.schema import Scenario
    from atticsim.scenario.thermostat import CircuitThermostat, SetpointThermostat

    if key in RULE_KEYS:
        return 0.0  # a time rule: 0 (none) to a day
    parts = key.split(".")
    roots = [(Scenario, parts)]
    if parts[0] == "thermostat":
        roots += [(SetpointThermostat, parts[1:]), (CircuitThermostat, parts[1:])]
    for root, loc in roots:
        owner, name, _ = locate(root, loc)
        info = owner.model_fields.get(name) if owner is not None else None
        if info is not None:
            bounds = [m.ge for m in info.metadata if isinstance(m, annotated_types.Ge)]
            return float(bounds[0]) if bounds else -math.inf
    return -math.inf


def edges(table, point: int, axes, sampled: bool = False) -> list[dict]:
    """The varied numeric keys whose value at ``point`` is the lowest or highest the study tried.

    Parameters
    ----------
    table : pandas.DataFrame
        The points table (a column per varied key, in SI).
    point : int
        The chosen point.
    axes : list of Axis
        The study's axes (for the unit and step of the advice).
    sampled : bool
        The points were drawn from the ranges (Latin hypercube), not laid on their grid.

    Returns
    -------
    list of dict
        ``key``, ``side`` ("lowest" or "highest"), ``value`` (as given) and ``advice`` (one sentence).
    """
    import pandas as pd

    out = []
    row = table[table["point"] == point].iloc[0]
    for ax in axes:
        if ax.key not in table:
            continue
        values = pd.to_numeric(table[ax.key], errors="coerce")
        v = pd.to_numeric(pd.Series([row[ax.key]]), errors="coerce").iloc[0]
        if values.notna().sum() < 2 or values.nunique() < 2 or not np.isfinite(v):
            continue
        lo, hi = float(values.min()), float(values.max())
        side = "lowest" if v <= lo else "highest" if v >= hi else None
        if side is None or (side == "lowest" and lo <= _least_allowed(ax.key)):
            continue  # not at an edge, or at the lowest the key can take (a rule of 0 s): nothing lies below
        given = row.get(f"{ax.key}_given", v)
        way = "below" if side == "lowest" else "above"
        unit = f" {ax.unit}" if ax.unit else ""
        nxt = ""
        numbers = [x.number for x in ax.values if x.number is not None]
        if ax.step is not None and numbers:
            edge = min(numbers) if side == "lowest" else max(numbers)
            beyond = edge - abs(ax.step) if side == "lowest" else edge + abs(ax.step)
            if not (min(numbers) > 0.0 >= beyond):  # no zero or negative widths, flows or ratios
                nxt = f" (next: {beyond:g}{unit})"
        advice = (f"{ax.key} = {given} is the {side} value the study tried: the best setting may lie {way} it; "
                  f"widen the range {way} {given}{nxt} and run the study again.")
        if ax.is_range and (sampled or ax.step is None):  # a sampled range: the end itself may not have been tried
            end = min(ax.start, ax.stop) if side == "lowest" else max(ax.start, ax.stop)
            advice = (f"{ax.key} = {given} is the {side} value the study sampled (the range ends at {end:g}{unit}): "
                      f"the best setting may lie {way} it; add points near {end:g}{unit} or widen the range {way} it.")
        out.append({"key": ax.key, "side": side, "value": given, "advice": advice})
    return out


def recommendation_text(rec: dict, table, axes_keys: list[str], units: str = "si") -> str:
    """A few lines for the terminal describing the recommended point, its runner-up and the range's edges."""
    lines = []
    if rec.get("point") is None:
        lines.append(f"recommendation: none - {rec['reason']}")
        lines += [f"  WARNING: {w}" for w in rec.get("warnings", [])]
        return "\n".join(lines)

    def given(point):
        row = table[table["point"] == point].iloc[0]
        return row, ", ".join(f"{k} = {row.get(k + '_given', row.get(k))}" for k in axes_keys)

    row, text = given(rec["point"])
    lines.append(f"recommended point {rec['point']}: {text}")
    parts = rec.get("circuit_parts")
    if parts:
        fixed = (f"; or a fixed {parts['sense_trim_fixed_ohm']:,.0f} ohm -> ON {parts['fixed_on_c']:.2f} degC"
                 if parts.get("sense_trim_fixed_ohm") else "")
        lines.append(f"  standard parts ({parts['series']}): feedback {parts['feedback_ohm']:,.0f} ohm, trimmer set "
                     f"to {parts['sense_trim_ohm']:,.0f} ohm -> ON {parts['realised_on_c']:.2f} degC, OFF "
                     f"{parts['realised_off_c']:.2f} degC{fixed}")

    def f(r, name, fmt, unit):
        v = r.get(name)
        try:
            return f"{float(v):{fmt}} {unit}".rstrip()
        except (TypeError, ValueError):
            return "n/a"

    ip = units == "ip"
    peak = (f"{float(row['attic_air_max_c']) * 9 / 5 + 32:.1f} degF" if ip and row.get("attic_air_max_c") is not None
            else f(row, 'attic_air_max_c', '.1f', 'degC'))
    lines.append(f"  starts {f(row, 'starts_per_day', '.1f', 'per day')}, at most "
                 f"{f(row, 'max_starts_per_hour', '.0f', '')} in any hour (limit {rec['starts_limit_per_hour']:g}); "
                 f"short cycles {f(row, 'short_cycles', '.0f', '')} (allowed {rec.get('short_cycles_allowed', 0)})")
    lines.append(f"  fan {f(row, 'fan_run_hours', '.1f', 'h')}, {f(row, 'fan_energy_kwh', '.2f', 'kWh')}; attic peak "
                 f"{peak}, {f(row, 'degree_hours_above_limit', '.1f', 'K*h')} above the comfort limit; net benefit "
                 f"{f(row, 'net_benefit_kwh', '.2f', 'kWh')}")
    lines.append(f"  why: {rec['reason']}")
    runner_up = rec.get("runner_up")
    runner_up = runner_up.get("point") if isinstance(runner_up, dict) else runner_up
    if runner_up is not None:
        r2, text2 = given(runner_up)
        lines.append(f"  runner-up point {runner_up}: {text2} ({f(r2, 'fan_starts', '.0f', 'starts')}, "
                     f"{f(r2, 'short_cycles', '.0f', 'short cycles')}, {f(r2, rec['heat_column'], '.4g', '')} "
                     f"{rec['heat_column']}, {f(r2, 'fan_energy_kwh', '.2f', 'kWh')})")
    if rec.get("hysteresis_or_timer"):
        lines.append(f"  hysteresis or timer: {rec['hysteresis_or_timer']['text']}")
    for e in rec.get("edges", []):
        lines.append(f"  EDGE: {e['advice']}")
    for w in rec.get("warnings", []):
        lines.append(f"  WARNING: {w}")
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
