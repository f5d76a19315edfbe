"""What a fit tells its user: the terminal text, ``fit.json``, ``calibrated.toml``, the figures and the report page."""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

from atticsim.calibration.keys import format_value

#: How the fit works and its limits, in a few lines (the README's section in short).
FIT_LINES = [
    "The model runs over the logged days (after its own spin-up), the fan following the log when the log has "
    "the fan's state, and is read at the log's stamps; scipy's least_squares (trust-region reflective, within "
    "each key's bounds) adjusts the keys to minimise the squared differences, the first day(s) of the log left "
    "out while the model settles.",
    "Each interval is the least-squares one from the Jacobian at the solution (central differences), widened for "
    "errors that persist from one reading to the next: the misfit is modelled as white noise plus a slow part "
    "with an exponential correlation fitted to it (its variance resting on one degree of freedom per correlation "
    "time), a Newey-West sum over a day of lags checks it, the wider of the two is kept, and Student's t takes "
    "the combined degrees of freedom.",
    "Two keys whose estimates correlate at 0.9 or more cannot be told apart by the log: it fixes a combination of "
    "them. A key whose interval spans half its range or more is poorly identified.",
]
FIT_LIMITS = [
    "The fitted values are the model's: they make this model follow this log, and absorb what the model leaves "
    "out (a value can stand in for a missing heat path).",
    "A fit is only as good as its weather: a typical year, or weather from another place or other days, gives a "
    "poor fit and wide intervals, not the house's values.",
    "Intervals assume the errors are white noise plus a slow, exponentially correlated part; errors of other "
    "shapes (a probe in the sun every afternoon) show as a pattern by hour of the day in the misfit figure.",
    "These are engineering estimates; local building and electrical codes and licensed practice take precedence.",
]


def _k(k, v):
    return str(format_value(k, v))


def _temp(c, units):
    return f"{c * 9 / 5 + 32:.2f} °F" if units == "ip" else f"{c:.2f} °C"


def _diff(k, units):
    return f"{k * 9 / 5:.2f} °F" if units == "ip" else f"{k:.2f} K"


def key_rows(result) -> list[list[str]]:
    """(key, start, fitted, 95 % interval, effective readings, remarks) per key, values in the user's units."""
    rows = []
    for k in result.keys:
        lo, hi = result.interval_95[k.key]
        rows.append([k.key, _k(k, result.start_values[k.key]), _k(k, result.fitted[k.key]),
                     f"{_k(k, lo)} .. {_k(k, hi)}", f"{result.effective_samples[k.key]:,.0f}",
                     ", ".join(f.replace("_", " ") for f in result.flags[k.key]) or "-"])
    return rows


def switching_lines(sw: dict | None, units: str = "si") -> list[str]:
    """The thermostat's switching against the calibrated model, in words."""
    if not sw:
        return []
    out = []
    for name, words in (("switch_on", "switch-ons"), ("switch_off", "switch-offs")):
        d = sw.get(name)
        if d:
            out.append(f"at the {d['switches']} logged {words} the model's sensor was at {_temp(d['sensor_mean_c'], units)} "
                       f"({_temp(d['sensor_min_c'], units)} .. {_temp(d['sensor_max_c'], units)}); the thermostat is "
                       f"set to {_temp(d['setting_c'], units)}: it switches {_diff(abs(d['error_k']), units)} "
                       f"{'above' if d['error_k'] > 0 else 'below'} its setting")
    out.append(f"with its own thermostat the calibrated model starts the fan {sw['model_starts']} times and runs it "
               f"{sw['model_run_hours']:.1f} h over the fitted days; the log: {sw['logged_starts']} starts, "
               f"{sw['logged_run_hours']:.1f} h (the logged switches are known to +-{sw['timing_uncertainty_s']:.0f} s)")
    return out


def fit_text(result, units: str = "si") -> str:
    """The fit on the terminal."""
    r = result
    cols = ", ".join(r.problem.columns)
    fan = "the fan follows the log" if r.problem.fan_log is not None else "the fan under the scenario's thermostat"
    fitted_from = r.series.index[r.series["in_fit"].to_numpy()][0]
    lines = [
        f"fit of {len(r.keys)} key(s) to {r.log.path}: {cols}; {r.fitted_rows:,} readings from "
        f"{fitted_from:%Y-%m-%d %H:%M} to {r.log.end:%Y-%m-%d %H:%M} ({r.spinup_days:g} day(s) of spin-up left out); {fan}",
        f"  weather: {r.weather_text}",
        f"  misfit: {_diff(r.rmse_k, units)} RMS at the fitted values ({_diff(r.rmse_start_k, units)} at the "
        f"scenario's), bias {'+' if r.bias_k >= 0 else '-'}{_diff(abs(r.bias_k), units)} (model - logged); logger "
        f"noise {_diff(r.noise_k, units)}; the fit is {r.verdict.upper()}",
    ]
    rows = key_rows(r)
    head = ["key", "start", "fitted", "95 % interval", "readings' worth"]
    widths = [max(len(head[i]), *(len(row[i]) for row in rows)) for i in range(5)]
    lines.append(("  " + "  ".join(h.ljust(w) for h, w in zip(head, widths))).rstrip())
    for row in rows:
        lines.append(("  " + "  ".join(c.ljust(w) for c, w in zip(row[:5], widths))).rstrip())
    pairs = [(a.key, b.key, r.correlation[i, j]) for i, a in enumerate(r.keys) for j, b in enumerate(r.keys)
             if j > i and abs(r.correlation[i, j]) >= 0.5]
    if pairs:
        lines.append("  correlations: " + "; ".join(f"{a} ~ {b} {c:+.2f}" for a, b, c in pairs))
    when, err = r.worst_hour
    if when is not None:
        lines.append(f"  worst hour: {when:%Y-%m-%d %H:%M}, the model {_diff(abs(err), units)} "
                     f"{'above' if err > 0 else 'below'} the readings")
    lines += [f"  thermostat: {s}" for s in switching_lines(r.switching, units)]
    from atticsim.report.cautions import caution_text

    lines += [f"  WARNING: {w}" for w in r.warnings]
    lines.append(caution_text())
    return "\n".join(lines)


def fit_json(result, units: str = "si") -> dict:
    """``fit.json``: the fit's summary, the values as calibrated.toml writes them, and the cautions."""
    from atticsim.report.cautions import ALL
    from atticsim.results.export import ip_summary

    data = result.summary()
    data["fitted_as_written"] = {k.key: _k(k, result.fitted[k.key]) for k in result.keys}
    return {**ip_summary(data, units), "cautions": list(ALL)}


def write_calibrated(result, scenario_path, overrides, path) -> Path:
    """``calibrated.toml``: the user's scenario (comments kept, ``--set`` applied) with the fitted values written
    in, each with its interval in a comment; validated before it is written."""
    from atticsim.scenario.write import write_scenario

    source = scenario_path
    for i, k in enumerate(result.keys):
        lo, hi = result.interval_95[k.key]
        note = (f"fitted by atticsim fit to {Path(result.log.path).name}: 95 % interval {_k(k, lo)} .. {_k(k, hi)} "
                f"(was {_k(k, result.start_values[k.key])})")
        write_scenario(source, list(overrides) if i == 0 else [], {k.key: format_value(k, result.fitted[k.key])},
                       path, force=True, comment=note)
        source = path
    return Path(path)


def series_csv(result, path, units: str = "si") -> None:
    """``series.csv``: at every stamp the readings, the model at the start and fitted values, the fan and whether
    the stamp counts in the fit."""
    from atticsim.results.export import ip_table, write_csv

    s = ip_table(result.series, units).copy()
    s["in_fit"] = s["in_fit"].astype(int)
    s.index.name = "time"
    write_csv(s, path, index=True)


def fingerprint(result, scenario_path) -> dict:
    """Version, the scenario's, the weather's and the log's sha256, and an identifier over all of them."""
    from atticsim import __version__
    from atticsim.report.inputs import _sha256_file, scenario_digest

    h_log = _sha256_file(result.log.path)
    weather = result.problem.weather[1]
    wpath = getattr(weather, "path", None)
    try:
        h_w, what = _sha256_file(wpath), f"file {Path(wpath).name}"
    except (OSError, TypeError):
        frame = result.problem.weather[0]
        h_w = hashlib.sha256(frame.to_numpy().tobytes() + frame.index.asi8.tobytes()).hexdigest()
        what = "the weather as used"
    sc = scenario_digest(result.start_scenario or result.scenario)
    run_id = hashlib.sha256(json.dumps([__version__, sc, h_w, h_log, result.problem.start, result.problem.end,
                                        [k.key for k in result.keys]]).encode()).hexdigest()[:16]
    return {"atticsim_version": __version__, "run_id": run_id, "scenario_sha256": sc, "weather_hashed": what,
            "weather_sha256": h_w, "measured_file_sha256": h_log}


def fit_page(result, units="si", inputs=None, options=None, command=None, folder=None, scenario_path=None) -> str:
    """The fit's report page (the same section order as every page)."""
    from atticsim.report.html import all_inputs_section, inputs_section, trace_section, warnings_and_cautions
    from atticsim.report.page import Page, answers, bullets, figure, paragraph, table

    r = result
    page = Page(f"Calibration report: {r.scenario.house.name}",
                f"{r.problem.start[:10]} to {r.problem.end[:10]} - fitted to {Path(r.log.path).name}")
    asked = [("house", r.scenario.house.name), ("measured file", f"{r.log.path}: {', '.join(r.problem.columns)}"
              + (", fan state" if r.log.fan is not None else "") + (", outdoor air" if "outdoor_c" in r.log.frame else "")
              + f"; every {r.log.step_s / 60:g} min"), ("period", f"{r.problem.start} to {r.problem.end}"),
             ("left out of the fit", f"the first {r.spinup_days:g} day(s) (spin-up)"), ("weather", r.weather_text),
             ("keys fitted", ", ".join(f"{k.key} ({_k(k, k.low)} .. {_k(k, k.high)})" for k in r.keys))]
    page.section("asked", "What was asked", inputs_section(inputs, asked, options))
    cards = [("misfit at the fitted values, RMS", _diff(r.rmse_k, units), r.verdict == "poor"),
             ("misfit at the scenario's values, RMS", _diff(r.rmse_start_k, units), False),
             ("the fit is", r.verdict, r.verdict != "good")]
    cards += [(k.key, _k(k, r.fitted[k.key]), bool(r.flags[k.key])) for k in r.keys]
    keys = [k.key for k in r.keys]
    corr = [[a] + [f"{r.correlation[i, j]:+.2f}" for j in range(len(keys))] for i, a in enumerate(keys)]
    cols = [[c, _diff(v["rmse_k"], units), _diff(v["bias_k"], units), f"{v['readings']:,}",
             _diff(v["rmse_start_k"], units), _diff(v["logger_noise_k"], units)] for c, v in r.columns.items()]
    parts = [answers(cards), "<h3>Fitted values</h3>",
             table(["key", "start", "fitted", "95 % interval", "readings' worth", "remarks"], key_rows(r), cls="wide small"),
             paragraph("calibrated.toml holds the scenario with these values written in: atticsim run calibrated.toml "
                       "--out DIR predicts a season with them.", "muted"),
             "<h3>Correlation of the estimates</h3>", table([""] + keys, corr, numeric=set(range(1, len(keys) + 1)),
                                                             cls="small"),
             "<h3>Goodness of fit by column</h3>",
             table(["column", "RMS misfit", "bias", "readings", "RMS at the start", "logger noise"], cols,
                   numeric={1, 2, 3, 4, 5}, cls="small")]
    sw = switching_lines(r.switching, units)
    if sw:
        parts += ["<h3>The thermostat against the log</h3>", bullets(sw)]
    page.section("answers", "The answers", *parts)
    page.section("warnings", "Warnings and cautions", warnings_and_cautions(r.warnings, r.notes, None))
    figs = []
    for name, alt, cap in (("overlay.png", "readings and model", "The logged readings, the model at the scenario's "
                            "values and at the fitted values; the fan's running time shaded, the spin-up in grey."),
                           ("misfit.png", "misfit over time and by hour", "The misfit at the fitted values over the "
                            "fitted days and its mean by hour of the day.")):
        png = (Path(folder) / name).read_bytes() if folder is not None and (Path(folder) / name).is_file() else None
        if png:
            figs.append(figure(png, alt, cap))
    if figs:
        page.section("figures", "Figures", *figs)
    page.section("model", "How the fit works, and its limits", bullets(FIT_LINES), "<h3>Limits</h3>",
                 bullets(FIT_LIMITS))
    page.section("trace", "Version and fingerprint", trace_section(fingerprint(r, scenario_path), command))
    if inputs is not None:
        page.section("inputs", "Every input as written", all_inputs_section(inputs))
    return page.html()


def fit_writers(result, scenario_path, overrides, units="si", inputs=None, options=None, command=None) -> dict:
    """file name -> writer(path) for the fit's output folder (``results.output.write_outputs``)."""
    from atticsim.calibration.plots import misfit_figure, overlay_figure
    from atticsim.report.html import report_writer
    from atticsim.report.plots import save_figure
    from atticsim.results.output import write_json

    return {
        "fit.json": lambda p: write_json(p, fit_json(result, units)),
        "calibrated.toml": lambda p: write_calibrated(result, scenario_path, overrides, p),
        "series.csv": lambda p: series_csv(result, p, units),
        "overlay.png": lambda p: save_figure(overlay_figure(result, units), p),
        "misfit.png": lambda p: save_figure(misfit_figure(result, units), p),
        "report.html": report_writer(lambda folder: fit_page(result, units, inputs, options, command, folder,
                                                             scenario_path)),
    }


__all__ = ["fit_json", "fit_page", "fit_text", "fit_writers", "key_rows", "write_calibrated"]
