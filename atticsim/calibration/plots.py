"""The fit's figures: the readings against the model (at the start and at the fitted values), and the misfit
over time and by hour of the day. One colour per series (the run figures' palette), legends outside the axes.
"""

from __future__ import annotations

import numpy as np

from atticsim.calibration.fit import model_column, start_column
from atticsim.report.plots import COLOURS, _dates, _legend, _new_figure, _tz_label, fan_shading

#: Words for each measured column.
COLUMN_WORDS = {"sensor_c": "sensor", "attic_air_c": "attic air (volume mean)", "attic_upper_air_c": "upper attic air",
                "attic_lower_air_c": "lower attic air", "deck_c": "deck underside"}
#: A colour per measured column (the misfit figure), from the run figures' palette.
COLUMN_COLOURS = {"sensor_c": COLOURS["sensor"], "attic_air_c": COLOURS["attic"],
                  "attic_upper_air_c": COLOURS["upper_air"], "attic_lower_air_c": COLOURS["insulation"],
                  "deck_c": COLOURS["deck"]}
#: Colours of the overlay's roles (the same in every panel: one label, one colour).
LOGGED, START, FITTED, SPINUP = "#4D4D4D", "#E69F00", "#009E73", "#DDDDDD"


def _conv(units):
    ip = units == "ip"
    temp = (lambda c: np.asarray(c, float) * 9.0 / 5.0 + 32.0) if ip else (lambda c: np.asarray(c, float))
    diff = (lambda k: np.asarray(k, float) * 9.0 / 5.0) if ip else (lambda k: np.asarray(k, float))
    return temp, diff, ("°F" if ip else "°C"), ("°F" if ip else "K")


def _spinup(ax, index, in_fit):
    """Shade the stretch left out of the fit (the spin-up days)."""
    out = ~np.asarray(in_fit, bool)
    if out.any():
        ax.fill_between(index, 0, 1, where=out, step="post", transform=ax.get_xaxis_transform(), color=SPINUP,
                        alpha=0.6, lw=0, label="left out of the fit (spin-up)")


def overlay_figure(result, units: str = "si"):
    """Readings and model, one panel per measured column (and the outdoor air below), fan running shaded."""
    s = result.series
    cols = list(result.problem.columns)
    conv, _, unit, _ = _conv(units)
    fig = _new_figure(11.0, 2.3 * (len(cols) + 1) + 0.6)
    axes = fig.subplots(len(cols) + 1, 1, sharex=True)
    index = s.index.tz_localize(None)
    for ax, c in zip(axes, cols):
        fan_shading(ax, index, s["fan_on"].to_numpy())
        _spinup(ax, index, s["in_fit"].to_numpy())
        ax.plot(index, conv(s[c]), lw=0.7, color=LOGGED, label="logged readings")
        ax.plot(index, conv(s[start_column(c)]), lw=1.0, ls="--", color=START, label="model, the scenario's values")
        ax.plot(index, conv(s[model_column(c)]), lw=1.2, color=FITTED, label="model, fitted values")
        ax.set_title(COLUMN_WORDS.get(c, c), fontsize=10, loc="left")
        ax.set_ylabel(unit)
        ax.grid(alpha=0.3)
        _legend(ax)
    ax = axes[-1]
    if "outdoor_c" in s:
        ax.plot(index, conv(s["outdoor_c"]), lw=0.7, color=COLOURS["outdoor"], label="outdoor air, logged")
    ax.plot(index, conv(s["outdoor_weather_c"]), lw=1.2, color=COLOURS["attic"], label="outdoor air, the weather's")
    ax.set_title("outdoor air", fontsize=10, loc="left")
    ax.set_ylabel(unit)
    ax.grid(alpha=0.3)
    _legend(ax)
    _dates(ax, _tz_label(s.index))
    fig.suptitle(f"Logged readings and the model: {result.log.path}", fontsize=11)
    return fig


def misfit_figure(result, units: str = "si"):
    """The misfit (model minus readings) over the fitted days, and its mean by hour of the day."""
    s = result.series[result.series["in_fit"]]
    cols = list(result.problem.columns)
    _, diff, _, dunit = _conv(units)
    fig = _new_figure(11.0, 6.2)
    top, bottom = fig.subplots(2, 1, height_ratios=[1.3, 1.0])
    index = s.index.tz_localize(None)
    for c in cols:
        d = (s[model_column(c)] - s[c])
        colour = COLUMN_COLOURS.get(c, COLOURS["ventilation"])
        top.plot(index, diff(d), lw=0.6, color=colour, label=COLUMN_WORDS.get(c, c))
        hourly = d.groupby(s.index.hour).mean()
        bottom.plot(hourly.index, diff(hourly), marker="o", ms=3, lw=1.2, color=colour, label=COLUMN_WORDS.get(c, c))
    for ax in (top, bottom):
        ax.axhline(0.0, color="#000000", lw=0.6, label="_zero")
        ax.set_ylabel(f"model - logged [{dunit}]")
        ax.grid(alpha=0.3)
        _legend(ax)
    _dates(top, _tz_label(s.index))
    bottom.set_xlabel("hour of the day (local standard time)")
    bottom.set_xticks(range(0, 24, 3))
    top.set_title(f"Misfit at the fitted values: {float(diff(result.rmse_k)):.2f} {dunit} RMS, bias "
                  f"{float(diff(result.bias_k)):+.2f} {dunit}",
                  fontsize=10, loc="left")
    bottom.set_title("mean misfit by hour of the day (a pattern here is something the model misses each day)",
                     fontsize=10, loc="left")
    return fig


__all__ = ["misfit_figure", "overlay_figure"]
