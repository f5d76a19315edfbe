"""Figures of a run (matplotlib, drawn off-screen)."""

from __future__ import annotations

from pathlib import Path

import numpy as np


def save_figure(fig, path) -> None:
    """Write a figure as PNG at 110 dpi, without the plotting library's name in the file's metadata."""
    fig.savefig(path, dpi=110, metadata={"Software": None})


def _intervals(index, fan_on):
    """Contiguous on-intervals of a sampled fan state as (start, end) index labels."""
    on = np.asarray(fan_on, dtype=bool)
    if not on.any():
        return []
    edges = np.diff(np.concatenate([[0], on.astype(int), [0]]))
    starts, ends = np.flatnonzero(edges == 1), np.flatnonzero(edges == -1) - 1
    return [(index[s], index[e]) for s, e in zip(starts, ends)]


def plot_temperatures(result, path: str | Path, units: str = "si") -> None:
    """Temperatures over the period with the fan's on-intervals shaded, and the heat rates below.

    Parameters
    ----------
    result : SimulationResult
        A finished run.
    path : str or Path
        PNG file to write.
    units : {"si", "ip"}
        degC/W or degF/Btu/h on the axes.
    """
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.dates as mdates
    import matplotlib.pyplot as plt

    ts = result.timeseries
    ip = units == "ip"
    conv = (lambda c: c * 9.0 / 5.0 + 32.0) if ip else (lambda c: c)
    tunit = "°F" if ip else "°C"
    index = ts.index.tz_localize(None)

    fig, (ax, ax2) = plt.subplots(2, 1, figsize=(12, 7.5), sharex=True,
                                  gridspec_kw={"height_ratios": [3, 1.4]})
    for a, b in _intervals(index, ts["fan_on"].to_numpy()):
        ax.axvspan(a, b, color="#9ecae1", alpha=0.35, lw=0)
        ax2.axvspan(a, b, color="#9ecae1", alpha=0.35, lw=0)
    deck_cols = [c for c in ts.columns if c.startswith("deck_")]
    for c in deck_cols:
        ax.plot(index, conv(ts[c]), lw=1.0, label=f"roof deck, {c[5:-2]} plane")
    ax.plot(index, conv(ts["attic_air_c"]), color="#d62728", lw=1.6, label="attic air")
    ax.plot(index, conv(ts["sensor_c"]), color="#ff9896", lw=0.9, ls="--", label="sensor")
    ax.plot(index, conv(ts["ceiling_top_c"]), color="#8c564b", lw=1.0, label="insulation top")
    ax.plot(index, conv(ts["outdoor_air_c"]), color="#2ca02c", lw=1.2, label="outdoor air")
    ax.axhline(conv(result.summary["switch_on_sensor_c"]), color="k", lw=0.7, ls=":", label="switch-on (sensor)")
    ax.axhline(conv(result.summary["switch_off_sensor_c"]), color="0.4", lw=0.7, ls=":", label="switch-off (sensor)")
    ax.set_ylabel(f"temperature [{tunit}]")
    s = result.summary
    house = getattr(getattr(result.scenario, "house", None), "name", "")
    ax.set_title(f"{house}: {s['fan_starts']} fan starts, {s['fan_run_hours']:.1f} h run "
                 f"(shaded = fan on)", fontsize=11)
    ax.grid(alpha=0.3)
    ax.legend(loc="upper left", fontsize=8, ncol=4, framealpha=0.85)

    k = 3.412142 if ip else 1.0  # W -> Btu/h
    punit = "Btu/h" if ip else "W"
    ax2.plot(index, ts["ceiling_heat_gain_w"] * k, color="#8c564b", lw=1.2, label="ceiling heat gain to rooms")
    ax2.plot(index, -ts["ventilation_heat_w"] * k / 10.0, color="#1f77b4", lw=1.0,
             label="heat carried out by ventilation / 10")
    ax2.set_ylabel(f"heat rate [{punit}]")
    ax2.grid(alpha=0.3)
    ax2.legend(loc="upper left", fontsize=8, ncol=2, framealpha=0.85)
    ax2.xaxis.set_major_formatter(mdates.DateFormatter("%m-%d\n%H:%M"))
    ax2.set_xlabel(f"local standard time (UTC{ts.index[0].strftime('%z')[:3]})")
    fig.tight_layout()
    save_figure(fig, path)
    plt.close(fig)


def plot_monthly(result, path: str | Path, units: str = "si") -> None:
    """Bar charts per month: fan run hours and starts; ceiling heat gain with and without the fan."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    m = result.monthly
    ip = units == "ip"
    x = np.arange(len(m))
    fig, (ax1, ax2) = plt.subplots(2, 1, figsize=(10, 6.5), sharex=True)
    ax1.bar(x - 0.2, m["fan_run_hours"], 0.4, color="#1f77b4", label="fan run hours")
    ax1b = ax1.twinx()
    ax1b.bar(x + 0.2, m["fan_starts"], 0.4, color="#ff7f0e", label="starts")
    ax1.set_ylabel("run hours")
    ax1b.set_ylabel("starts")
    h1, l1 = ax1.get_legend_handles_labels()
    h2, l2 = ax1b.get_legend_handles_labels()
    ax1.legend(h1 + h2, l1 + l2, loc="upper left", fontsize=8)
    k = 3412.14163 if ip else 1.0
    unit = "Btu" if ip else "kWh"
    ax2.bar(x - 0.2, m["ceiling_heat_gain_no_fan_kwh"] * k, 0.4, color="#8c564b", label="ceiling gain, no fan")
    ax2.bar(x + 0.2, m["ceiling_heat_gain_kwh"] * k, 0.4, color="#17becf", label="ceiling gain, with fan")
    ax2.set_ylabel(f"ceiling heat gain [{unit}]")
    ax2.legend(loc="upper left", fontsize=8)
    ax2.set_xticks(x, m["month"])
    for a in (ax1, ax2):
        a.grid(axis="y", alpha=0.3)
    house = getattr(getattr(result.scenario, "house", None), "name", "")
    ax1.set_title(f"{house}: by month", fontsize=11)
    fig.tight_layout()
    save_figure(fig, path)
    plt.close(fig)


def plot_placements(results: dict, path: str | Path, units: str = "si") -> None:
    """One day's sensor traces per placement over the attic air, and fan-state strips per placement.

    The day shown is the one with the highest outdoor temperature in the period.
    """
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.dates as mdates
    import matplotlib.pyplot as plt

    ip = units == "ip"
    conv = (lambda c: c * 9.0 / 5.0 + 32.0) if ip else (lambda c: c)
    first = next(iter(results.values())).timeseries
    day = first["outdoor_air_c"].resample("1D").max().idxmax()
    sel = lambda ts: ts[(ts.index >= day) & (ts.index < day + np.timedelta64(1, "D"))]  # noqa: E731
    names = list(results)
    fig, (ax, ax2) = plt.subplots(2, 1, figsize=(12, 7.5), sharex=True,
                                  gridspec_kw={"height_ratios": [3, 0.35 * len(names) + 0.6]})
    ref = sel(first)
    t = ref.index.tz_localize(None)
    upper = ref["air_upper_c"] if "air_upper_c" in ref else ref["attic_air_c"]
    ax.plot(t, conv(upper), color="k", lw=2.0, alpha=0.35, label=f"upper attic air ({names[0]} run)")
    ax.plot(t, conv(ref["outdoor_air_c"]), color="0.2", lw=1.0, ls="--", label="outdoor air")
    colors = plt.rcParams["axes.prop_cycle"].by_key()["color"]
    for k, name in enumerate(names):
        ts = sel(results[name].timeseries)
        ax.plot(ts.index.tz_localize(None), conv(ts["sensor_c"]), lw=1.1, color=colors[k % len(colors)],
                label=f"sensor: {name}")
        on = ts["fan_on"].to_numpy() > 0
        ax2.fill_between(ts.index.tz_localize(None), k - 0.4, k + 0.4, where=on, step="post",
                         color=colors[k % len(colors)], lw=0)
    s = next(iter(results.values())).summary
    ax.axhline(conv(s["switch_on_sensor_c"]), color="k", lw=0.7, ls=":", label="switch-on")
    ax.axhline(conv(s["switch_off_sensor_c"]), color="0.4", lw=0.7, ls=":", label="switch-off")
    ax.set_ylabel(f"temperature [{'°F' if ip else '°C'}]")
    ax.set_title(f"Sensor placements on {day.date()} (hottest day of the period)", fontsize=11)
    ax.grid(alpha=0.3)
    ax.legend(loc="upper left", fontsize=8, ncol=3, framealpha=0.85)
    ax2.set_yticks(range(len(names)), names)
    ax2.set_ylim(-0.6, len(names) - 0.4)
    ax2.invert_yaxis()
    ax2.set_xlabel("local standard time  (bars: fan on)")
    ax2.xaxis.set_major_formatter(mdates.DateFormatter("%H:%M"))
    ax2.grid(axis="x", alpha=0.3)
    fig.tight_layout()
    save_figure(fig, path)
    plt.close(fig)
