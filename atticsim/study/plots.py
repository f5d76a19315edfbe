"""The short-cycling map: heatmaps of a study over a one- or two-key grid (e.g. switch-on temperature x
hysteresis) with the cells that break the starts-per-hour limit hatched (matplotlib, drawn off-screen)."""

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
