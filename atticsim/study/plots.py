"""A study's figures (matplotlib, drawn off-screen): the short-cycling map, heatmaps over a one- or two-key
grid (e.g. switch-on temperature x hysteresis) with the cells that break the starts-per-hour limit hatched;
and the Pareto front of the heat figure against the fan's electricity."""

from __future__ import annotations

from pathlib import Path

import numpy as np

#: Panels of the map: (column, title, colour map). Titles carry the units.
PANELS = [
    ("starts_per_day", "fan starts per day", "viridis"),
    ("short_cycles", "short cycles (runs < short-cycle time)", "viridis"),
    ("fan_run_hours", "fan run time [h]", "viridis"),
    ("attic_air_max_c", "attic air peak [°C]", "inferno"),
    ("degree_hours_above_limit", "attic degree-hours above {comfort:g} °C [K·h]", "inferno"),
    ("net_benefit_kwh", "net benefit [kWh] (+ = fan saves)", "RdBu"),
]


def map_axes(study) -> tuple[list[str] | None, str]:
    """The keys a map can be drawn over (x first), or None and the reason it cannot."""
    if study.sample != "grid":
        return None, "heatmaps need --sample grid"
    keys = [ax.key for ax in study.axes if len(ax.values) > 1]
    if not keys:
        return None, "no key takes more than one value"
    if len(keys) > 2:
        return None, f"{len(keys)} keys take several values; a map shows one or two"
    return keys, ""


def _grid(table, keys):
    """Category order of each key's given values (order of first appearance) and each row's cell."""
    import pandas as pd

    xs = list(pd.unique(table[f"{keys[0]}_given"]))
    ys = list(pd.unique(table[f"{keys[1]}_given"])) if len(keys) > 1 else [""]
    col = [xs.index(v) for v in table[f"{keys[0]}_given"]]
    row = [ys.index(v) for v in table[f"{keys[1]}_given"]] if len(keys) > 1 else [0] * len(table)
    return xs, ys, np.array(row), np.array(col)


def short_cycling_map(table, keys: list[str], path: str | Path, starts_limit: float, recommended=None,
                      comfort_limit_c: float = 38.0) -> None:
    """Draw the heatmaps of a study grid to a PNG.

    The figure stays readable at any grid size: at most about 1700 px wide, values written in the cells
    only while they fit, tick labels thinned to about a dozen. A panel whose values spread less than a
    meaningful amount (``min_span`` below) gets at least that span of colour and says "all within ...", so
    that a small spread does not look large; the net-benefit panel says when every point is negative.

    Parameters
    ----------
    table : pandas.DataFrame
        The points table (``<key>_given`` columns, the panel columns, ``max_starts_per_hour``, ``status``).
    keys : list of str
        One or two varied keys: x, then y.
    path : str or Path
        PNG file to write.
    starts_limit : float
        Starts in any hour above which a cell is hatched [1/h].
    recommended : int, optional
        Point number to outline.
    comfort_limit_c : float
        Comfort limit in the degree-hour panel's title [degC].
    """
    import re

    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.colors import Normalize
    from matplotlib.figure import Figure
    from matplotlib.patches import Patch, Rectangle

    #: the smallest spread of colour per panel: differences below these are too small to matter to a
    #: fan's owner (common practice, no source)
    min_span = {"starts_per_day": 1.0, "short_cycles": 2.0, "fan_run_hours": 2.0, "attic_air_max_c": 1.0,
                "degree_hours_above_limit": 10.0, "net_benefit_kwh": 1.0}
    words = {"thermostat.on": "switch-on temperature", "thermostat.off": "switch-off temperature",
             "thermostat.hysteresis": "hysteresis (switch-on minus switch-off)", "fan.flow": "fan flow",
             "sensor.placement": "sensor placement", "ceiling.insulation": "ceiling insulation"}
    pretty = {"degC": "°C", "degF": "°F", "K": "K", "delta_degC": "K"}

    def axis(key):
        """Tick texts (numbers without a shared unit) and the axis title in words with the unit."""
        given = [str(v) for v in pd_unique(table[f"{key}_given"])]
        split = [re.match(r"^\s*([-+0-9.eE]+)\s*(.*?)\s*$", g) for g in given]
        units = {m.group(2) for m in split if m}
        name = words.get(key, key.split(".")[-1].replace("_", " "))
        if all(split) and len(units) == 1:
            u = units.pop()
            return [m.group(1) for m in split], f"{name} [{pretty.get(u, u)}]" if u else name
        return given, name

    def thin(ax_set, n, labels, rotation=0):
        step = max(1, -(-n // 12))
        ax_set([i for i in range(n) if i % step == 0], [labels[i] for i in range(n) if i % step == 0],
               fontsize=8, rotation=rotation)

    from pandas import unique as pd_unique

    xs, ys, rows, cols = _grid(table, keys)
    ok = (table["status"] == "ok").to_numpy()
    starts_h = np.asarray(table["max_starts_per_hour"], dtype=float) if "max_starts_per_hour" in table \
        else np.full(len(table), np.nan)
    violates = np.zeros((len(ys), len(xs)), bool)
    violates[rows, cols] = ok & (starts_h > starts_limit)
    panels = [p for p in PANELS if p[0] in table]
    ncol = 3
    nrow = -(-len(panels) // ncol)
    w = min(5.4, max(4.0, 0.22 * len(xs) + 2.6))
    h = min(4.4, max(2.9, 0.2 * len(ys) + 2.0))
    fig = Figure(figsize=(ncol * w, nrow * h + 1.0), layout="constrained")
    axes = fig.subplots(nrow, ncol, squeeze=False).ravel()
    annotate = len(xs) <= 10 and len(ys) <= 12
    xticks, xlabel = axis(keys[0])
    yticks, ylabel = axis(keys[1]) if len(keys) > 1 else ([""], "")
    for ax, (column, title, cmap) in zip(axes, panels):
        z = np.full((len(ys), len(xs)), np.nan)
        vals = np.asarray(table[column], dtype=float)
        z[rows[ok], cols[ok]] = vals[ok]
        finite = z[np.isfinite(z)]
        title = title.format(comfort=comfort_limit_c)
        norm = None
        if finite.size:
            lo, hi = float(finite.min()), float(finite.max())
            span = min_span.get(column, 0.0)
            if column == "net_benefit_kwh":
                # symmetric about zero so that the colour tells the sign (blue: the fan saves energy)
                reach = max(float(np.max(np.abs(finite))), span / 2.0)
                norm = Normalize(-reach, reach)
                if hi < 0:
                    title += "\nnegative at every point: the fan costs more than it saves"
                elif lo > 0:
                    title += "\npositive at every point: the fan saves at each"
            elif hi - lo < span:
                mid = 0.5 * (lo + hi)
                norm = Normalize(mid - span / 2.0, mid + span / 2.0)
            if column != "net_benefit_kwh" and hi - lo < span:
                title += f"\nspread only {hi - lo:.2g}: colour scale widened to {span:g}"
        im = ax.imshow(z, origin="lower", aspect="auto", cmap=cmap, norm=norm, interpolation="nearest")
        fig.colorbar(im, ax=ax, shrink=0.9)
        if annotate and finite.size:
            for i in range(len(ys)):
                for j in range(len(xs)):
                    if np.isfinite(z[i, j]):
                        frac = float(im.norm(z[i, j]))
                        # dark cells (low end of viridis/inferno, both ends of RdBu) get white text
                        dark = (frac < 0.2 or frac > 0.8) if cmap == "RdBu" else frac < 0.5
                        ax.text(j, i, f"{z[i, j]:.3g}", ha="center", va="center", fontsize=7,
                                color="white" if dark else "black")
        for i, j in zip(*np.nonzero(violates)):
            ax.add_patch(Rectangle((j - 0.5, i - 0.5), 1, 1, fill=False, hatch="///", edgecolor="0.55", lw=0))
        if recommended is not None and recommended in set(table["point"]):
            k = int(np.flatnonzero(table["point"].to_numpy() == recommended)[0])
            ax.add_patch(Rectangle((cols[k] - 0.5, rows[k] - 0.5), 1, 1, fill=False, edgecolor="#00c000", lw=2.5))
        ax.set_title(title, fontsize=9)
        thin(ax.set_xticks, len(xs), xticks, rotation=45 if len(xs) > 8 else 0)
        ax.set_xlabel(xlabel, fontsize=9)
        if len(keys) > 1:
            thin(ax.set_yticks, len(ys), yticks)
            ax.set_ylabel(ylabel, fontsize=9)
        else:
            ax.set_yticks([])
    for ax in axes[len(panels):]:
        ax.set_visible(False)
    handles = [Patch(facecolor="white", edgecolor="0.55", hatch="///",
                     label=f"more than {starts_limit:g} fan starts in some hour"),
               Patch(facecolor="white", edgecolor="#00c000", lw=2.5, label="recommended point")]
    fig.legend(handles=handles, loc="outside lower center", ncol=2, fontsize=9, frameon=False)
    fig.suptitle(f"Short-cycling map: {len(table)} points", fontsize=11)
    from atticsim.report.plots import save_figure

    save_figure(fig, path)


def pareto_figure(table, eligible, front, columns, path, rec) -> None:
    """Draw the Pareto front of a study to a PNG: every finished point by its heat figure against its fan
    electricity, the points that break the starts limit or short-cycle marked apart, the front joined, the
    recommended point and the runner-up outlined.

    Parameters
    ----------
    table : pandas.DataFrame
        The points table.
    eligible, front : numpy.ndarray of bool
        Which rows qualify (step 1 of the rule) and which of those are on the front.
    columns : list of str
        The two objectives: the heat figure (y) and the fan energy (x).
    path : str or Path
        PNG file to write.
    rec : dict
        The recommendation (``point``, ``runner_up``, ``starts_limit_per_hour``, ``short_cycles_allowed``).
    """
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.figure import Figure

    from atticsim.report.plots import save_figure
    from atticsim.study.analysis import OBJECTIVE_NAMES

    heat_col, energy_col = columns
    ok = (table["status"] == "ok").to_numpy()
    x = np.asarray(table[energy_col], dtype=float)
    y = np.asarray(table[heat_col], dtype=float)
    fig = Figure(figsize=(7.5, 5.2), layout="constrained")
    ax = fig.subplots()
    other = ok & ~eligible
    ax.scatter(x[other], y[other], marker="x", color="0.6", s=22,
               label=f"breaks the limits (> {rec['starts_limit_per_hour']:g} starts in an hour or "
                     f"> {rec.get('short_cycles_allowed', 0)} short cycles)")
    ax.scatter(x[eligible & ~front], y[eligible & ~front], color="#4a7ab5", s=22, label="qualifies")
    order = np.argsort(x[front], kind="mergesort")
    fx, fy = x[front][order], y[front][order]
    if fx.size:
        ax.step(fx, fy, where="post", color="#d9822b", lw=1.2, zorder=2)
        ax.scatter(fx, fy, color="#d9822b", s=36, zorder=3, label="Pareto front (no qualifying point is better "
                                                                   "in both)")
        if fx.size <= 15:
            for px, py, n in zip(fx, fy, table["point"].to_numpy()[front][order]):
                ax.annotate(f"{n}", (px, py), textcoords="offset points", xytext=(4, 5), fontsize=7, color="#8a4a10")
    points = table["point"].to_numpy()
    for key, style, label in (("point", dict(marker="*", s=260, facecolors="none", edgecolors="#00a000", lw=1.8),
                               "recommended"),
                              ("runner_up", dict(marker="s", s=110, facecolors="none", edgecolors="#7a3fa0", lw=1.5),
                               "runner-up")):
        p = rec.get(key)
        p = p.get("point") if isinstance(p, dict) else p
        if p is not None and p in set(points):
            k = int(np.flatnonzero(points == p)[0])
            ax.scatter([x[k]], [y[k]], zorder=4, label=f"{label} (point {p})", **style)
    ax.set_xlabel(OBJECTIVE_NAMES.get(energy_col, energy_col) + " (minimise)")
    ax.set_ylabel(OBJECTIVE_NAMES.get(heat_col, heat_col) + " (minimise)")
    ax.set_title("Study points: attic heat against fan electricity", fontsize=11)
    ax.grid(True, color="0.9")
    ax.legend(fontsize=7, loc="upper right", frameon=False)
    save_figure(fig, path)
