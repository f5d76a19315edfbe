"""Figures of a run (matplotlib, drawn off-screen), readable at any period length.

Over a few days the temperatures are drawn as traces with the fan's running time shaded; over longer
periods (more than :data:`LONG_PERIOD_DAYS`) as daily min-max bands with the run hours and starts of each
day, and the hottest week drawn in full below. Every series in a figure has a colour of its own
(:data:`COLOURS`), and legends sit outside the plotting area.
"""

from __future__ import annotations

import io
from pathlib import Path

import numpy as np

#: A period longer than this many days is drawn as daily bands plus the hottest week.
LONG_PERIOD_DAYS = 10.0

#: One colour per series role. Built on the colour-blind-safe set of Okabe & Ito (2008, "Color Universal
#: Design"), extended with darker hues of Tol (2021, "Colour Schemes", SRON/EPS/TN/09-002, muted set) for
#: roof planes. A figure never gives two of its series the same colour (tests check this).
COLOURS = {
    "outdoor": "#0072B2",
    "attic": "#D55E00",
    "sensor": "#CC79A7",
    "insulation": "#009E73",
    "fan_on": "#56B4E9",
    "hysteresis": "#BBBBBB",
    "ceiling_gain": "#000000",
    "ventilation": "#661100",
    "run_hours": "#44AA99",
    "starts": "#000000",
    "gain_no_fan": "#D55E00",
    "gain_fan": "#E69F00",
    "fan_kwh": "#0072B2",
    "net_benefit": "#999933",
    "upper_air": "#000000",
    "deck": "#882255",
}
HOTTEST_DECK = "deck underside, hottest plane"
#: Roof planes' deck colours, in plane order.
PLANE_COLOURS = ["#E69F00", "#882255", "#999933", "#332288", "#AA7744", "#44AA99"]
#: A second set of colours for comparisons (series of run B).
B_COLOURS = {"outdoor": "#332288", "attic": "#E69F00", "sensor": "#882255", "deck": "#999933",
             "fan_on": "#44AA99"}


def save_figure(fig, path) -> None:
    """Write a figure as PNG at 110 dpi, without the plotting library's name in the file's metadata."""
    fig.savefig(path, dpi=110, metadata={"Software": None})


def figure_png(fig) -> bytes:
    """The PNG bytes :func:`save_figure` would write."""
    buf = io.BytesIO()
    save_figure(fig, buf)
    return buf.getvalue()


def _new_figure(width, height):
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.figure import Figure

    return Figure(figsize=(width, height), layout="constrained")


def _temp(units):
    ip = units == "ip"
    return ((lambda c: np.asarray(c, float) * 9.0 / 5.0 + 32.0) if ip else (lambda c: np.asarray(c, float)),
            "°F" if ip else "°C")


def _legend(ax, **kw):
    """A legend outside the axes, to the right: never over the data."""
    handles, labels = ax.get_legend_handles_labels()
    if handles:
        ax.legend(handles, labels, loc="upper left", bbox_to_anchor=(1.01, 1.0), borderaxespad=0.0, fontsize=8,
                  frameon=False, **kw)


def _dates(ax, tz_label=None):
    import matplotlib.dates as mdates

    locator = mdates.AutoDateLocator(minticks=4, maxticks=10)
    ax.xaxis.set_major_locator(locator)
    ax.xaxis.set_major_formatter(mdates.ConciseDateFormatter(locator, show_offset=True))
    if tz_label:
        ax.set_xlabel(tz_label, fontsize=9)


def _tz_label(index):
    off = index[0].strftime("%z") if getattr(index, "tz", None) is not None else ""
    return f"local standard time (UTC{off[:3]}:{off[3:]})" if off else "local time"


def deck_columns(ts) -> dict:
    """plane -> column of the deck's underside temperature (older results: the deck layer's centre)."""
    planes = {c[len("deck_underside_"):-2]: c for c in ts.columns
              if c.startswith("deck_underside_") and c.endswith("_c")}
    if not planes:
        planes = {c[len("deck_"):-2]: c for c in ts.columns
                  if c.startswith("deck_") and c.endswith("_c") and not c.startswith("deck_underside_")}
    return planes


def fan_shading(ax, index, fan_on, colour=COLOURS["fan_on"], label="fan running"):
    """Shade the times the fan runs, as one series (a single filled area over the axes' height)."""
    on = np.asarray(fan_on) > 0
    if not on.any():
        return
    # times as a plain datetime64 array: matplotlib converts that at once, a DatetimeIndex one time at a time
    # (0.18 s for a week of minutes, measured)
    index = index.to_numpy() if hasattr(index, "to_numpy") else index
    ax.fill_between(index, 0, 1, where=on, step="post", transform=ax.get_xaxis_transform(), color=colour,
                    alpha=0.28, lw=0, label=label)


def hysteresis_band(ax, on_c, off_c, conv, label="between switch-off and switch-on (sensor)"):
    if on_c is None or off_c is None:
        return
    lo, hi = sorted((float(conv(on_c)), float(conv(off_c))))
    ax.axhspan(lo, hi, color=COLOURS["hysteresis"], alpha=0.45, lw=0, label=label)


def hottest_week(ts, days: int = 7):
    """(first, last) local timestamps of the ``days`` whole days with the highest mean daily outdoor
    maximum (the whole period when it is shorter)."""
    daily_max = ts["outdoor_air_c"].resample("1D").max().dropna()
    if len(daily_max) <= days:
        return ts.index[0], ts.index[-1]
    mean = daily_max.rolling(days).mean()
    end_day = mean.idxmax()
    first = end_day - np.timedelta64(days - 1, "D")
    return max(first, ts.index[0]), min(end_day + np.timedelta64(1, "D"), ts.index[-1])


def _traces(ax, ts, conv, summary, with_insulation=True, hottest_deck_only=False):
    """Temperature traces of a short stretch: outdoor, attic air, sensor, deck underside per plane (or of
    the hottest plane at each instant, with ``hottest_deck_only`` or more planes than colours)."""
    index = ts.index.tz_localize(None)
    fan_shading(ax, index, ts["fan_on"].to_numpy())
    hysteresis_band(ax, summary.get("switch_on_sensor_c"), summary.get("switch_off_sensor_c"), conv)
    planes = deck_columns(ts)
    if hottest_deck_only or len(planes) > len(PLANE_COLOURS):
        deck = hottest_deck(ts)
        if deck is not None:
            ax.plot(index, conv(deck), lw=1.0, color=COLOURS["deck"], label=HOTTEST_DECK)
        planes = {}
    for k, (plane, col) in enumerate(planes.items()):
        ax.plot(index, conv(ts[col]), lw=1.0, color=PLANE_COLOURS[k], label=f"deck underside, {plane}")
    ax.plot(index, conv(ts["outdoor_air_c"]), lw=1.2, color=COLOURS["outdoor"], label="outdoor air")
    ax.plot(index, conv(ts["attic_air_c"]), lw=1.6, color=COLOURS["attic"], label="attic air")
    if "sensor_c" in ts:
        ax.plot(index, conv(ts["sensor_c"]), lw=0.9, ls="--", color=COLOURS["sensor"], label="sensor")
    if with_insulation and "ceiling_top_c" in ts:
        ax.plot(index, conv(ts["ceiling_top_c"]), lw=1.0, color=COLOURS["insulation"], label="insulation top")
    ax.grid(alpha=0.3)


def temperature_figure(ts, summary: dict, daily=None, title: str = "", units: str = "si"):
    """The temperature figure of a run as a matplotlib Figure.

    Parameters
    ----------
    ts : pandas.DataFrame
        Time series with a tz-aware index (``outdoor_air_c``, ``attic_air_c``, ``fan_on``, deck columns;
        optionally ``sensor_c``, ``ceiling_top_c``, ``ceiling_heat_gain_w``, ``ventilation_heat_w``).
    summary : dict
        The run's summary (switching points, starts, run hours).
    daily : pandas.DataFrame, optional
        Per-day figures (``date``, ``fan_run_hours``, ``fan_starts``); computed from ``fan_on`` if absent.
    title : str
        The house's name, shown in the title.
    units : {"si", "ip"}
        degC, W or degF, Btu/h on the axes.
    """
    days = (ts.index[-1] - ts.index[0]).total_seconds() / 86400.0
    if days > LONG_PERIOD_DAYS:
        return _long_figure(ts, summary, daily, title, units)
    return _short_figure(ts, summary, title, units)


def _short_figure(ts, summary, title, units):
    conv, tunit = _temp(units)
    ip = units == "ip"
    heat = "ceiling_heat_gain_w" in ts
    fig = _new_figure(12, 8.0 if heat else 5.5)
    if heat:
        axes = fig.subplots(3, 1, sharex=True, gridspec_kw={"height_ratios": [3, 1.1, 1.1]})
    else:
        axes = [fig.subplots(1, 1)]
    ax = axes[0]
    _traces(ax, ts, conv, summary)
    ax.set_ylabel(f"temperature [{tunit}]")
    s = summary
    ax.set_title(f"{title}: {s.get('fan_starts', 0)} fan starts, {s.get('fan_run_hours', 0.0):.1f} h run",
                 fontsize=11, loc="left")
    _legend(ax)
    index = ts.index.tz_localize(None)
    if heat:
        k, unit = (3.412142, "Btu/h") if ip else (1.0, "W")  # 1 W = 3.412142 Btu_IT/h (NIST SP 811 app. B)
        ax2, ax3 = axes[1], axes[2]
        fan_shading(ax2, index, ts["fan_on"].to_numpy())
        ax2.plot(index, ts["ceiling_heat_gain_w"] * k, color=COLOURS["ceiling_gain"], lw=1.2,
                 label="heat into the rooms\nthrough the ceiling")
        ax2.set_ylabel(f"[{unit}]")
        ax2.axhline(0.0, color="0.6", lw=0.6, label="_zero")
        k3, unit3 = (3.412142, "kBtu/h") if ip else (1.0, "kW")
        fan_shading(ax3, index, ts["fan_on"].to_numpy())
        ax3.plot(index, -ts["ventilation_heat_w"] * k3 / 1000.0, color=COLOURS["ventilation"], lw=1.0,
                 label="heat carried out of\nthe attic by its air")
        ax3.set_ylabel(f"[{unit3}]")
        for a in (ax2, ax3):
            a.grid(alpha=0.3)
            _legend(a)
    _dates(axes[-1], _tz_label(ts.index))
    return fig


def _daily_from_ts(ts):
    """Run hours and starts per local day from a sampled fan state (when no exact daily table is given)."""
    import pandas as pd

    on = ts["fan_on"].astype(int)
    step_h = float(np.median(np.diff(ts.index.asi8))) / 3.6e12 if len(ts) > 1 else 0.0
    starts = (on.diff() > 0).astype(int)
    g = pd.DataFrame({"h": on * step_h, "s": starts}, index=ts.index).resample("1D").sum()
    return pd.DataFrame({"date": g.index.strftime("%Y-%m-%d"), "fan_run_hours": g["h"].to_numpy(),
                         "fan_starts": g["s"].to_numpy()})


def hottest_deck(ts):
    """The deck underside of the hottest plane at each instant [degC] (None without deck columns)."""
    planes = deck_columns(ts)
    return ts[list(planes.values())].max(axis=1) if planes else None


def daily_bands(ts):
    """Per local day: min and max of outdoor air, attic air and the hottest plane's deck underside."""
    import pandas as pd

    cols = {"outdoor": ts["outdoor_air_c"], "attic": ts["attic_air_c"]}
    deck = hottest_deck(ts)
    if deck is not None:
        cols["deck"] = deck
    r = pd.DataFrame(cols).resample("1D")
    lo, hi = r.min(), r.max()
    out = pd.DataFrame(index=lo.index)
    for name in cols:
        out[f"{name}_min"], out[f"{name}_max"] = lo[name], hi[name]
    return out.dropna(how="all")


def _long_figure(ts, summary, daily, title, units):
    import pandas as pd

    conv, tunit = _temp(units)
    fig = _new_figure(12, 10.5)
    ax, axd, axw = fig.subplots(3, 1, gridspec_kw={"height_ratios": [2.6, 1.2, 2.4]})
    axd.sharex(ax)
    bands = daily_bands(ts)
    days = bands.index.tz_localize(None) + pd.Timedelta("12h")
    hysteresis_band(ax, summary.get("switch_on_sensor_c"), summary.get("switch_off_sensor_c"), conv)
    spec = [("outdoor", "outdoor air", COLOURS["outdoor"]), ("attic", "attic air", COLOURS["attic"])]
    if "deck_min" in bands:
        spec.insert(0, ("deck", HOTTEST_DECK, COLOURS["deck"]))
    for name, label, colour in spec:
        ax.fill_between(days, conv(bands[f"{name}_min"]), conv(bands[f"{name}_max"]), color=colour, alpha=0.35,
                        lw=0.8, edgecolor=colour, label=label)
    s = summary
    ax.set_title(f"{title}: {s.get('fan_starts', 0)} fan starts, {s.get('fan_run_hours', 0.0):.0f} h run "
                 f"over {len(bands)} days", fontsize=11, loc="left")
    ax.set_ylabel(f"temperature [{tunit}]")
    ax.grid(alpha=0.3)
    _legend(ax)
    _dates(ax)

    d = daily if daily is not None and len(daily) else _daily_from_ts(ts)
    dd = pd.to_datetime(d["date"]) + pd.Timedelta("12h")
    # (as plain arrays: matplotlib converts a pandas column of times one time at a time)
    axd.bar(dd.to_numpy(), d["fan_run_hours"].to_numpy(), width=0.9, color=COLOURS["run_hours"],
            label="fan run hours per day")
    axd.set_ylabel("run [h/day]")
    axd.set_ylim(0, max(24.0 * 1.02, 0.0))
    axd.set_yticks([0, 6, 12, 18, 24])
    axs = axd.twinx()
    some = np.asarray(d["fan_starts"]) > 0
    axs.plot(dd[some], np.asarray(d["fan_starts"])[some], ls="none", marker="o", ms=2.5, color=COLOURS["starts"],
             label="fan starts per day (right scale)")
    from matplotlib.ticker import MaxNLocator

    axs.yaxis.set_major_locator(MaxNLocator(integer=True))
    axs.set_ylim(bottom=0)
    axs.set_ylabel("starts/day")
    axd.grid(alpha=0.3)
    h1, l1 = axd.get_legend_handles_labels()
    h2, l2 = axs.get_legend_handles_labels()
    axd.legend(h1 + h2, l1 + l2, loc="upper left", bbox_to_anchor=(1.06, 1.0), borderaxespad=0.0, fontsize=8,
               frameon=False)
    _dates(axd)

    a, b = hottest_week(ts)
    week = ts[(ts.index >= a) & (ts.index <= b)]
    _traces(axw, week, conv, summary, with_insulation=False, hottest_deck_only=True)
    axw.set_ylabel(f"temperature [{tunit}]")
    axw.set_title(f"the hottest week in full: {a:%Y-%m-%d} to {(b - np.timedelta64(1, 's')):%Y-%m-%d} "
                  f"(highest mean daily outdoor maximum)", fontsize=10, loc="left")
    _legend(axw)
    _dates(axw, _tz_label(ts.index))
    return fig


def plot_temperatures(result, path: str | Path, units: str = "si") -> None:
    """Write a run's temperature figure (see :func:`temperature_figure`) to a PNG file."""
    house = getattr(getattr(result.scenario, "house", None), "name", "")
    fig = temperature_figure(result.timeseries, result.summary, result.daily, house, units)
    save_figure(fig, path)


def _period_table(result):
    """The monthly table, or the daily one when the period lies within one calendar month (one row of
    months would say nothing), with a net benefit column; and the name of the period unit."""
    m = result.monthly
    if m is not None and len(m) >= 2:
        return m, "month", [str(x) for x in m["month"]]
    d = result.daily
    labels = [str(x)[5:] for x in d["date"]]
    return d, "day", labels


def net_benefit_column(table, cop: float):
    """Net benefit per row [kWh]: the table's own ``net_benefit_kwh`` when it has one, else
    (ceiling gain without the fan - with it) / COP - fan energy (the summary's definition without the
    conditioned-air term, which per-row tables of older results do not carry)."""
    if "net_benefit_kwh" in table:
        return np.asarray(table["net_benefit_kwh"], float)
    avoided = np.asarray(table["ceiling_heat_gain_no_fan_kwh"], float) - np.asarray(table["ceiling_heat_gain_kwh"], float)
    return avoided / cop - np.asarray(table["fan_energy_kwh"], float)


def monthly_figure(result, units: str = "si"):
    """Per month (per day when the period lies within one month): run hours and starts; fan electricity
    and ceiling heat gain with and without the fan; the fan's net benefit at the meter."""
    from matplotlib.ticker import MaxNLocator

    table, unit, labels = _period_table(result)
    ip = units == "ip"
    cop = getattr(getattr(result.scenario, "house", None), "cooling_cop", 3.0)
    x = np.arange(len(table))
    fig = _new_figure(max(8.0, min(14.0, 3.0 + 0.45 * len(x))), 8.5)
    ax1, ax2, ax3 = fig.subplots(3, 1, sharex=True)
    ax1.bar(x - 0.2, table["fan_run_hours"], 0.4, color=COLOURS["run_hours"], label="fan run hours")
    ax1b = ax1.twinx()
    ax1b.bar(x + 0.2, table["fan_starts"], 0.4, color=COLOURS["starts"], label="fan starts (right scale)")
    ax1b.yaxis.set_major_locator(MaxNLocator(integer=True))
    ax1b.set_ylim(0, max(1.0, float(np.nanmax(table["fan_starts"])) * 1.1) if len(x) else 1.0)
    ax1.set_ylabel("run hours [h]")
    ax1b.set_ylabel("starts")
    h1, l1 = ax1.get_legend_handles_labels()
    h2, l2 = ax1b.get_legend_handles_labels()
    ax1.legend(h1 + h2, l1 + l2, loc="upper left", bbox_to_anchor=(1.08, 1.0), borderaxespad=0.0, fontsize=8,
               frameon=False)
    k, eunit = (3.41214163, "kBtu") if ip else (1.0, "kWh")  # 1 kWh = 3412.14 Btu_IT (NIST SP 811 app. B)
    ax2.bar(x - 0.27, table["ceiling_heat_gain_no_fan_kwh"].astype(float) * k, 0.27,
            color=COLOURS["gain_no_fan"], label=f"ceiling heat gain, no fan [{eunit}]")
    ax2.bar(x, table["ceiling_heat_gain_kwh"] * k, 0.27, color=COLOURS["gain_fan"],
            label=f"ceiling heat gain, with the fan [{eunit}]")
    ax2.bar(x + 0.27, table["fan_energy_kwh"], 0.27, color=COLOURS["fan_kwh"], label="fan electricity [kWh]")
    ax2.set_ylabel(f"energy [{eunit}, kWh]" if ip else "energy [kWh]")
    ax2.axhline(0.0, color="0.5", lw=0.6, label="_zero")
    net = net_benefit_column(table, cop)
    ax3.bar(x, net, 0.6, color=COLOURS["net_benefit"], label="net benefit at the meter\n(+ = the fan saves)")
    ax3.axhline(0.0, color="0.5", lw=0.6, label="_zero")
    ax3.set_ylabel("net benefit [kWh]")
    for a in (ax2, ax3):
        _legend(a)
    for a in (ax1, ax2, ax3):
        a.grid(axis="y", alpha=0.3)
    ax3.set_xticks(x, labels, rotation=45 if len(x) > 14 else 0, fontsize=8)
    ax3.set_xlabel("month" if unit == "month" else "day (the period lies within one month)")
    house = getattr(getattr(result.scenario, "house", None), "name", "")
    total = float(np.nansum(net))
    ax1.set_title(f"{house}: by {unit}; net benefit over the period {total:+.1f} kWh "
                  f"(cooling COP {cop:g})", fontsize=11, loc="left")
    return fig


def plot_monthly(result, path: str | Path, units: str = "si") -> None:
    """Write the figure of :func:`monthly_figure` to a PNG file."""
    save_figure(monthly_figure(result, units), path)


PLACEMENT_COLOURS = {"ridge": "#E69F00", "mid": "#56B4E9", "exhaust": "#009E73", "intake": "#882255",
                     "deck": "#D55E00", "board": "#CC79A7"}


def placements_figure(results: dict, units: str = "si"):
    """One day's sensor traces per placement over the attic air, and fan-state strips per placement.

    The day shown is the one with the highest outdoor temperature in the period.
    """
    import matplotlib.dates as mdates

    conv, tunit = _temp(units)
    first = next(iter(results.values())).timeseries
    day = first["outdoor_air_c"].resample("1D").max().idxmax()
    sel = lambda ts: ts[(ts.index >= day) & (ts.index < day + np.timedelta64(1, "D"))]  # noqa: E731
    names = list(results)
    fig = _new_figure(12, 7.5)
    ax, ax2 = fig.subplots(2, 1, sharex=True, gridspec_kw={"height_ratios": [3, 0.35 * len(names) + 0.6]})
    ref = sel(first)
    t = ref.index.tz_localize(None)
    upper = ref["air_upper_c"] if "air_upper_c" in ref else ref["attic_air_c"]
    s = next(iter(results.values())).summary
    hysteresis_band(ax, s.get("switch_on_sensor_c"), s.get("switch_off_sensor_c"), conv)
    ax.plot(t, conv(upper), color=COLOURS["upper_air"], lw=2.0, alpha=0.35, label=f"upper attic air ({names[0]} run)")
    ax.plot(t, conv(ref["outdoor_air_c"]), color=COLOURS["outdoor"], lw=1.0, ls="--", label="outdoor air")
    extra = iter(PLANE_COLOURS[1:])
    for k, name in enumerate(names):
        colour = PLACEMENT_COLOURS.get(name) or next(extra)
        ts = sel(results[name].timeseries)
        ax.plot(ts.index.tz_localize(None), conv(ts["sensor_c"]), lw=1.1, color=colour, label=f"sensor: {name}")
        on = ts["fan_on"].to_numpy() > 0
        ax2.fill_between(ts.index.tz_localize(None), k - 0.4, k + 0.4, where=on, step="post", color=colour, lw=0,
                         label=f"sensor: {name}")
    ax.set_ylabel(f"temperature [{tunit}]")
    ax.set_title(f"Sensor placements on {day.date()} (hottest day of the period)", fontsize=11, loc="left")
    ax.grid(alpha=0.3)
    _legend(ax)
    ax2.set_yticks(range(len(names)), names)
    ax2.set_ylim(-0.6, len(names) - 0.4)
    ax2.invert_yaxis()
    ax2.set_xlabel(f"{_tz_label(first.index)}  (bars: fan running)")
    ax2.xaxis.set_major_formatter(mdates.DateFormatter("%H:%M"))
    ax2.grid(axis="x", alpha=0.3)
    return fig


def plot_placements(results: dict, path: str | Path, units: str = "si") -> None:
    """Write the figure of :func:`placements_figure` to a PNG file."""
    save_figure(placements_figure(results, units), path)


def hysteresis_loop_figure(report: dict, units: str = "si"):
    """The thermostat's hysteresis loop: the fan's state against the thermistor's temperature, with the
    5-95 % spread of the parts around each switching point and the air temperatures at the switches.

    Parameters
    ----------
    report : dict
        :func:`atticsim.report.thermostat.thermostat_report` (``on_c``, ``off_c``, ``on_band_c``,
        ``off_band_c``, ``on_worst_c``, ``off_worst_c``, ``on_air_c``, ``off_air_c``, ``action``).
    """
    conv, tunit = _temp(units)
    on, off = float(conv(report["on_c"])), float(conv(report["off_c"]))
    rise = report["action"] == "close-on-rise"
    lo, hi = min(on, off), max(on, off)
    pad = max(2.0, 0.8 * (hi - lo))
    x0, x1 = lo - pad, hi + pad
    fig = _new_figure(9, 4.6)
    ax = fig.subplots(1, 1)
    for key, colour, name in (("on", "#E69F00", "switch-on"), ("off", "#56B4E9", "switch-off")):
        b = [float(conv(v)) for v in report[f"{key}_band_c"]]
        w = [float(conv(v)) for v in report[f"{key}_worst_c"]]
        ax.axvspan(w[0], w[1], color=colour, alpha=0.18, lw=0, label=f"{name}, worst case of the parts")
        ax.axvspan(b[0], b[1], color=COLOURS["hysteresis"] if key == "on" else "#999933", alpha=0.55, lw=0,
                   label=f"{name}, 5-95 % of the parts")
    # the loop: warming along the bottom (off) to the switch-on, then along the top (on) back to the switch-off
    if rise:
        xs = [x0, on, on, x1, off, off, x0]
        ys = [0, 0, 1, 1, 1, 0, 0]
    else:
        xs = [x1, on, on, x0, off, off, x1]
        ys = [0, 0, 1, 1, 1, 0, 0]
    ax.plot(xs, ys, color=COLOURS["attic"], lw=2.2, label="fan state (nominal parts)")
    warm, cool = (on, off) if rise else (off, on)
    ax.annotate("", xy=(warm, 0.5 + (0.12 if rise else -0.12)), xytext=(warm, 0.5 - (0.12 if rise else -0.12)),
                arrowprops={"arrowstyle": "->", "color": COLOURS["attic"], "lw": 1.8})
    ax.annotate("", xy=(cool, 0.5 - (0.12 if rise else -0.12)), xytext=(cool, 0.5 + (0.12 if rise else -0.12)),
                arrowprops={"arrowstyle": "->", "color": COLOURS["attic"], "lw": 1.8})
    ax.axvline(float(conv(report["on_air_c"])), color=COLOURS["outdoor"], lw=1.0, ls="--",
               label="air temperature at switch-on (self-heating)")
    ax.axvline(float(conv(report["off_air_c"])), color=COLOURS["sensor"], lw=1.0, ls="--",
               label="air temperature at switch-off (self-heating)")
    ax.text(on, 1.06, f"on {on:.2f} {tunit}", ha="center", fontsize=9)
    ax.text(off, -0.12, f"off {off:.2f} {tunit}", ha="center", va="top", fontsize=9)
    ax.set_xlim(x0, x1)
    ax.set_ylim(-0.25, 1.2)
    ax.set_yticks([0, 1], ["fan off", "fan on"])
    ax.set_xlabel(f"thermistor temperature [{tunit}]")
    ax.set_title(f"Hysteresis loop: {abs(on - off):.2f} {'°F' if units == 'ip' else 'K'} wide "
                 f"(switch closes on {'rise' if rise else 'fall'})", fontsize=11, loc="left")
    ax.grid(alpha=0.3)
    _legend(ax)
    return fig


def compare_figure(a, b, units: str = "si"):
    """Two runs overlaid: temperatures and fan state (traces over up to 10 days, else each day's attic
    maximum and run hours). ``a`` and ``b`` have ``timeseries``, ``summary`` and ``name``."""
    import pandas as pd

    conv, tunit = _temp(units)
    ta, tb = a.timeseries, b.timeseries
    days = max((t.index[-1] - t.index[0]).total_seconds() / 86400.0 for t in (ta, tb))
    fig = _new_figure(12, 7.5)
    ax, ax2 = fig.subplots(2, 1, sharex=True, gridspec_kw={"height_ratios": [3, 1.2]})
    la, lb = f"A ({a.name})", f"B ({b.name})"
    if days <= LONG_PERIOD_DAYS:
        for run, lab, col, style in ((a, la, COLOURS, "-"), (b, lb, B_COLOURS, "--")):
            ts = run.timeseries
            idx = ts.index.tz_localize(None)
            ax.plot(idx, conv(ts["attic_air_c"]), color=col["attic"], lw=1.5, ls=style, label=f"attic air, {lab}")
            if "sensor_c" in ts:
                ax.plot(idx, conv(ts["sensor_c"]), color=col["sensor"], lw=0.9, ls=style, label=f"sensor, {lab}")
            ax.plot(idx, conv(ts["outdoor_air_c"]), color=col["outdoor"], lw=1.0, ls=style, label=f"outdoor air, {lab}")
        for k, (run, lab, col) in enumerate(((a, la, COLOURS["fan_on"]), (b, lb, B_COLOURS["fan_on"]))):
            ts = run.timeseries
            ax2.fill_between(ts.index.tz_localize(None), k - 0.4, k + 0.4, where=ts["fan_on"].to_numpy() > 0,
                             step="post", color=col, lw=0, label=f"fan running, {lab}")
        ax2.set_yticks([0, 1], ["A", "B"])
        ax2.set_ylim(-0.6, 1.6)
        ax2.invert_yaxis()
        ax2.set_ylabel("fan running")
    else:
        for run, lab, col, style in ((a, la, COLOURS, "-"), (b, lb, B_COLOURS, "--")):
            ts = run.timeseries
            g = ts[["attic_air_c", "outdoor_air_c"]].resample("1D").max()
            d = g.index.tz_localize(None) + pd.Timedelta("12h")
            ax.plot(d, conv(g["attic_air_c"]), color=col["attic"], ls=style, lw=1.3, label=f"attic air, daily max, {lab}")
            ax.plot(d, conv(g["outdoor_air_c"]), color=col["outdoor"], ls=style, lw=1.0,
                    label=f"outdoor air, daily max, {lab}")
            run_h = _daily_from_ts(ts)
            ax2.plot(pd.to_datetime(run_h["date"]) + pd.Timedelta("12h"), run_h["fan_run_hours"], color=col["fan_on"],
                     ls=style, lw=1.2, label=f"fan run hours per day, {lab}")
        ax2.set_ylabel("run [h/day]")
    ax.set_ylabel(f"temperature [{tunit}]")
    ax.set_title(f"A: {a.name} (solid)   B: {b.name} (dashed)", fontsize=11, loc="left")
    ax.grid(alpha=0.3)
    ax2.grid(alpha=0.3)
    _legend(ax)
    _legend(ax2)
    _dates(ax2, _tz_label(ta.index))
    return fig
