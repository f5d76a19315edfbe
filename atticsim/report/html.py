"""Report pages a user hands a client: ``report.html`` beside a command's files.

Each page says, in order: what was asked (in the user's own units), the answers, warnings and cautions,
figures, the month table, how the model works and its limits, and the version and fingerprint that trace
the result. The summary and its warnings are rendered generically (every key with words and a unit), so
figures added to the summary later appear without a change here.
"""

from __future__ import annotations

from pathlib import Path

from atticsim.version import __version__
from atticsim.report.labels import label, scalar_items, unit
from atticsim.report.page import Page, answers, box, bullets, figure, fmt, key_values, paragraph, table
from atticsim.units import c_to_f, ip_companion

#: How the model works and its limits, in a few lines (the README's "How the model works" in short).
MODEL_LINES = [
    "The attic is a lumped thermal network: per roof plane a covering and a sheathing node, the attic air "
    "in two layers (or one), the framing, the top of the ceiling insulation and the ceiling board, and the "
    "sensor. Weather and sun on each plane (sun position by NREL's SPA, Hay-Davies sky diffuse) drive it.",
    "The fan switches at the exact instants the sensor crosses its switch-on and switch-off temperatures; "
    "a circuit thermostat switches at its circuit's own thresholds and heats its sensor by the divider's power.",
    "The same period is run again with the fan disabled: the ceiling heat the fan keeps out of the rooms "
    "and the net benefit at the meter come from the difference.",
    "Net benefit = (ceiling heat gain avoided - extra load of conditioned air drawn from the house) / the "
    "cooling system's COP - the fan's electricity. Positive means the fan saves electricity.",
]
LIMITS_LINES = [
    "A simplified model: one air temperature per layer, surfaces of one temperature each, no moisture "
    "stored in the wood or insulation, the rooms held at the cooling setpoint.",
    "Results depend on the weather file: a typical year is typical, not a forecast; invented demo weather "
    "is for demonstration only.",
    "Airflow from a rated flow or the fan's curve against the vents; real vents, screens and duct runs "
    "may give less.",
    "These are engineering estimates; local building and electrical codes and licensed practice take "
    "precedence.",
]


def _value(key, value, units):
    """A figure with its unit, and (IP units asked) its IP companion beside it."""
    u = unit(key)
    text = f"{fmt(value)} {u}".strip() if not isinstance(value, str) else value
    if units == "ip" and isinstance(value, (int, float)) and not isinstance(value, bool):
        comp = ip_companion(key)
        if comp is not None:
            ip_key, convert = comp
            text += f"  ({fmt(float(convert(value)))} {unit(ip_key)})"
    return text


def summary_table(summary: dict, units: str = "si") -> str:
    """Every single figure of a summary with its words and unit."""
    rows = [(label(k), _value(k, v, units), k) for k, v in scalar_items(summary)]
    return table(["figure", "value", "key in summary.json"], rows, cls="wide small")


def _temp(c, units):
    if c is None:
        return "n/a"
    return f"{fmt(c_to_f(c))} °F" if units == "ip" else f"{fmt(c)} °C"


def _kwh(v):
    return "n/a" if v is None else f"{fmt(v)} kWh"


def answer_cards(s: dict, units: str = "si") -> str:
    """The headline answers of a run (those the summary holds)."""
    cards = []

    def add(key, text, bad=False):
        if key in s and s[key] is not None:
            cards.append((label(key), text, bad))

    add("fan_run_hours", f"{fmt(s.get('fan_run_hours'))} h")
    add("fan_starts", fmt(s.get("fan_starts")))
    add("short_cycles", fmt(s.get("short_cycles")), bool(s.get("short_cycles")))
    add("fan_energy_kwh", _kwh(s.get("fan_energy_kwh")))
    gain, nofan = s.get("ceiling_heat_gain_kwh"), s.get("ceiling_heat_gain_no_fan_kwh")
    if gain is not None and nofan is not None:
        cards.append(("ceiling heat kept out of the rooms by the fan", _kwh(nofan - gain), False))
    for k, v in s.items():  # figures of the heating and cooling seasons, whatever they are called
        if (k.startswith(("cooling_", "heating_")) and k.endswith("_kwh") and isinstance(v, (int, float))
                and not isinstance(v, bool) and _season_card(s, k, v)):
            cards.append((label(k), _kwh(v), False))
    net = s.get("net_benefit_kwh")
    add("net_benefit_kwh", f"{net:+.2f} kWh" if net is not None else "n/a", net is not None and net < 0)
    add("attic_air_max_c", _temp(s.get("attic_air_max_c"), units))
    add("deck_max_c", _temp(s.get("deck_max_c"), units))
    return answers(cards)


#: The seasons' totals, shown whenever their season has days in the period; their parts only when not zero.
SEASON_TOTALS = ("cooling_savings_kwh", "heating_penalty_kwh")


def _season_card(s: dict, key: str, value: float) -> bool:
    """Whether a season's figure earns a headline card: not for a season with no day in the period (a summer
    week's heating penalty), nor for a part of a total that is zero (the total says it)."""
    days = s.get("days_cooling" if key.startswith("cooling_") else "days_heating")
    if days is not None and days == 0:
        return False
    return key in SEASON_TOTALS or abs(value) >= 0.005


def net_benefit_parts(s: dict, cop: float) -> str:
    """The net benefit worked out from its parts, so a client can follow the arithmetic."""
    need = ("ceiling_heat_gain_kwh", "ceiling_heat_gain_no_fan_kwh", "fan_energy_kwh", "net_benefit_kwh")
    if any(s.get(k) is None for k in need):
        return ""
    avoided = s["ceiling_heat_gain_no_fan_kwh"] - s["ceiling_heat_gain_kwh"]
    load, load_nf = s.get("conditioned_air_load_kwh") or 0.0, s.get("conditioned_air_load_no_fan_kwh") or 0.0
    extra = load - load_nf
    rows = [
        ("ceiling heat kept out of the rooms (without the fan - with it)", f"{fmt(avoided)} kWh of heat"),
        ("extra load of conditioned air drawn from the house by the fan", f"{fmt(extra)} kWh of heat"),
        (f"cooling electricity saved: ({fmt(avoided)} - {fmt(extra)}) / COP {cop:g}", f"{fmt((avoided - extra) / cop)} kWh"),
        ("fan electricity", f"- {fmt(s['fan_energy_kwh'])} kWh"),
        ("net benefit at the meter", f"{s['net_benefit_kwh']:+.2f} kWh"),
    ]
    return "<h3>Net benefit and its parts</h3>" + key_values(rows)


def warnings_and_cautions(warnings, notes, cautions) -> str:
    from atticsim.report.cautions import ALL

    parts = []
    if warnings:
        parts.append(box("Warnings", bullets(warnings), "warning"))
    else:
        parts.append(paragraph("No warnings for this run."))
    parts.append(box("Cautions", bullets(cautions if cautions is not None else ALL), "caution"))
    if notes:
        parts.append("<h3>Notes from the run</h3>" + bullets(notes))
    return "".join(parts)


def inputs_section(inputs, asked_rows, options) -> str:
    """What was asked: the short list (in the user's own units) and the options as typed."""
    parts = [key_values(asked_rows)]
    if options:
        parts.append("<h3>Options given to the command</h3>" + key_values(options))
    if inputs is not None:
        parts.append(paragraph("Every scenario value as written is listed at the end of this report.", "muted"))
    return "".join(parts)


def all_inputs_section(inputs) -> str:
    """Every scenario value as the user wrote it, beside the value the model used (SI)."""
    if inputs is None:
        return ""
    over = f" with --set {', '.join(inputs.overrides)}" if inputs.overrides else ""
    return (paragraph(f"From {inputs.source}{over}. Keys not listed take their defaults (see the README's "
                      f"scenario table).", "muted")
            + table(["key", "as written", "as used (SI)"], inputs.rows, cls="wide small"))


def _written(inputs, key, fallback=""):
    if inputs is None:
        return fallback
    for k, w, _ in inputs.rows:
        if k == key:
            return w
    return fallback


def asked_rows(scenario, summary, inputs, weather_text=None) -> list:
    """The short answer to 'what was asked': house, site, weather, period, thermostat, fan, ceiling."""
    sc = scenario
    w = lambda k, f="": _written(inputs, k, f)  # noqa: E731
    th = sc.thermostat
    if th.kind == "setpoints":
        thermo = (f"set points: fan on at {w('thermostat.on', fmt(th.on))}, off at {w('thermostat.off', fmt(th.off))} "
                  f"(sensor temperature; {th.action})")
    else:
        thermo = f"circuit thermostat ({th.action}): switch points from its parts, see the circuit report"
    fan = (f"{w('fan.flow', fmt(sc.fan.flow) + ' m3/s' if sc.fan.flow else 'from its curve')}, "
           f"{w('fan.power', fmt(sc.fan.power) + ' W')}" if sc.fan.enabled else "disabled")
    rows = [
        ("house", f"{sc.house.name}" + (f" - {sc.house.note}" if sc.house.note else "")),
        ("site", f"{sc.site.name}: {fmt(sc.site.latitude, 4)}° N, {fmt(sc.site.longitude, 4)}° E, "
                 f"{fmt(sc.site.altitude)} m, UTC{sc.site.utc_offset:+g} h"),
        ("weather", weather_text or sc.weather.file),
        ("period", f"{summary.get('period_start', '')} to {summary.get('period_end', '')} "
                   f"({fmt(summary.get('days'))} days)"),
        ("thermostat", thermo),
        ("sensor placement", sc.sensor.placement),
        ("fan", fan),
        ("ceiling insulation", w("ceiling.insulation", fmt(sc.ceiling.insulation) + " m2K/W")),
        ("vents", f"{len(sc.vents.openings)} openings described" if sc.vents.openings
                  else f"{w('vents.passive_ach', fmt(sc.vents.passive_ach))} passive air changes per hour"),
    ]
    return rows


def versions() -> dict:
    """Installed versions of the libraries a result depends on."""
    from importlib import metadata

    out = {}
    for name in ("numpy", "scipy", "pandas", "numba", "pvlib", "pydantic", "pint", "matplotlib"):
        try:
            out[name] = metadata.version(name)
        except metadata.PackageNotFoundError:
            out[name] = None
    return out


def trace_section(fp: dict, command=None) -> str:
    rows = [("atticsim version", fp.get("atticsim_version")), ("run identifier", fp.get("run_id"))]
    if fp.get("scenario_sha256"):
        rows.append(("scenario (sha256 of its validated JSON)", fp["scenario_sha256"]))
    if fp.get("weather_sha256"):
        rows.append((f"weather (sha256 of {fp.get('weather_hashed')})", fp["weather_sha256"]))
    for k, v in fp.items():
        if k not in ("atticsim_version", "run_id", "scenario_sha256", "weather_sha256", "weather_hashed") and v:
            rows.append((k.replace("_", " "), v))
    if command:
        rows.append(("command", command))
    import platform

    lib = ", ".join([f"python {platform.python_version()}"] + [f"{k} {v}" for k, v in versions().items() if v])
    rows.append(("libraries", lib))
    return (key_values(rows, "mono small")
            + paragraph("The same scenario and weather give the same identifier with the same version; "
                        "check a weather file with sha256sum.", "muted"))


#: Short column titles for the month and day tables.
SHORT = {"fan_run_hours": "run", "fan_starts": "starts", "short_cycles": "short cycles", "fan_energy_kwh": "fan",
         "ceiling_heat_gain_kwh": "ceiling gain, fan", "ceiling_heat_gain_no_fan_kwh": "ceiling gain, no fan",
         "conditioned_air_load_kwh": "house air load", "net_benefit_kwh": "net benefit",
         "attic_air_max_c": "attic max", "outdoor_air_max_c": "outdoor max"}


def month_table(result, units="si") -> str:
    """The month table (the day table when the period lies within one month)."""
    from atticsim.report.plots import net_benefit_column

    m = result.monthly if result.monthly is not None and len(result.monthly) >= 2 else result.daily
    if m is None or not len(m):
        return ""
    cop = result.scenario.house.cooling_cop if result.scenario is not None else 3.0
    m = m.copy()
    if "net_benefit_kwh" not in m:
        m["net_benefit_kwh"] = net_benefit_column(m, cop)
    cols = [c for c in ("month", "date", "days", "fan_run_hours", "fan_starts", "short_cycles", "fan_energy_kwh",
                        "ceiling_heat_gain_kwh", "ceiling_heat_gain_no_fan_kwh", "conditioned_air_load_kwh",
                        "net_benefit_kwh", "attic_air_max_c", "outdoor_air_max_c") if c in m]
    head = [f"{SHORT.get(c, label(c))} [{unit(c)}]" if unit(c) else SHORT.get(c, label(c)) for c in cols]
    rows = [[fmt(r[c]) if not isinstance(r[c], str) else r[c] for c in cols] for _, r in m.iterrows()]
    if units == "ip":
        for c in ("attic_air_max_c", "outdoor_air_max_c"):
            if c in cols:
                i = cols.index(c)
                head[i] = SHORT.get(c, label(c)) + " [°F]"
                for row, (_, r) in zip(rows, m.iterrows()):
                    row[i] = fmt(c_to_f(r[c])) if r[c] is not None else "n/a"
    return table(head, rows, numeric=set(range(1, len(cols))), cls="wide small")


def _read(folder, name):
    p = Path(folder) / name if folder is not None else None
    return p.read_bytes() if p is not None and p.is_file() else None


def run_page(result, units="si", inputs=None, options=None, command=None, figures_dir=None, kind="run",
             design=None) -> str:
    """The report page of a run or a design day.

    Parameters
    ----------
    result : SimulationResult
    units : {"si", "ip"}
    inputs : ScenarioInputs, optional
        The scenario as written (see :func:`atticsim.report.inputs.scenario_inputs`).
    options : list of (str, str), optional
        The command's options as the user typed them.
    command : str, optional
        The command line, for the trace.
    figures_dir : path, optional
        Folder holding ``temperatures.png`` and ``monthly.png`` (drawn by the run's writers; drawn here
        when absent).
    kind : {"run", "design day"}
    design : dict, optional
        The design day's description (date, maximum, range...).
    """
    from atticsim.report.inputs import fingerprint
    from atticsim.report.plots import figure_png, monthly_figure, temperature_figure

    s, sc = result.summary, result.scenario
    title = f"Attic fan report: {sc.house.name}" if kind == "run" else f"Design-day report: {sc.house.name}"
    page = Page(title, f"{s.get('period_start', '')[:10]} to {s.get('period_end', '')[:10]} - "
                       f"{sc.site.name}")
    weather = None
    if design is not None:
        weather = "clear design day: " + ", ".join(f"{k} {v}" for k, v in design.items())
    page.section("asked", "What was asked", inputs_section(inputs, asked_rows(sc, s, inputs, weather), options))
    page.section("answers", "The answers", answer_cards(s, units), net_benefit_parts(s, sc.house.cooling_cop),
                 "<h3>Every figure of the run</h3>", summary_table(s, units))
    page.section("warnings", "Warnings and cautions",
                 warnings_and_cautions(s.get("warnings", []), result.notes, None))
    temps = _read(figures_dir, "temperatures.png") or figure_png(
        temperature_figure(result.timeseries, s, result.daily, sc.house.name, units))
    months = _read(figures_dir, "monthly.png") or figure_png(monthly_figure(result, units))
    page.section("figures", "Figures",
                 figure(temps, "temperatures over the period", "Temperatures over the period with the fan's "
                        "running time shaded; over more than 10 days, each day's range and the hottest week."),
                 figure(months, "run hours, starts, energy and net benefit by month",
                        "Run hours and starts, ceiling heat gain with and without the fan, fan electricity and "
                        "net benefit, by month (by day when the period lies within one month)."))
    page.section("months", "Month by month" if result.monthly is not None and len(result.monthly) >= 2
                 else "Day by day", month_table(result, units))
    page.section("model", "How the model works, and its limits",
                 bullets(MODEL_LINES), "<h3>Limits</h3>", bullets(LIMITS_LINES))
    fp = fingerprint(sc, result.timeseries, f"{s.get('period_start')} to {s.get('period_end')}", design)
    page.section("trace", "Version and fingerprint", trace_section(fp, command))
    if inputs is not None:
        page.section("inputs", "Every input as written", all_inputs_section(inputs))
    return page.html()


def report_writer(build):
    """A writer (path -> None) for :func:`atticsim.results.output.write_outputs` that writes the page
    ``build(folder)`` returns; ``folder`` is where the other files of the same output are being written."""

    def write(path):
        path.write_text(build(path.parent), encoding="utf-8")

    return write


# --- a study ------------------------------------------------------------------------------------------

def table_html(head, rows):
    return table(head, rows, numeric=set(range(1, len(head))), cls="wide small")


# --- sensor placements ------------------------------------------------------------------------------

def circuit_page(scenario, report: dict, units="si", inputs=None, options=None, command=None, folder=None,
                 design: dict | None = None) -> str:
    """The circuit thermostat: thresholds, tolerance bands, the hysteresis loop, mains-side checks."""
    from atticsim.report.inputs import scenario_digest

    r = report
    t = lambda c: _temp(c, units)  # noqa: E731
    page = Page(f"Thermostat circuit report: {scenario.house.name}",
                f"switch closes on {r['action'].removeprefix('close-on-')}; feedback on the {r['feedback_on']} divider")
    asked = [("house", scenario.house.name), ("thermistor position", r["thermistor_position"]),
             ("action", r["action"]), ("tolerances", f"{r['tolerance_samples']} Monte-Carlo samples, seed "
                                                    f"{r['tolerance_seed']}")]
    page.section("asked", "What was asked", inputs_section(inputs, asked, options))
    cards = [("fan switches ON at (thermistor)", t(r["on_c"]), False),
             ("fan switches OFF at (thermistor)", t(r["off_c"]), False),
             ("hysteresis", f"{fmt(r['hysteresis_k'])} K", False),
             ("air at switch-on (with self-heating)", t(r["on_air_c"]), False),
             ("air at switch-off", t(r["off_air_c"]), False),
             ("LED current when on", f"{fmt(r['led_current_on_a'] * 1e3)} mA", False)]
    rows = [("switch-on, 5-95 % of parts", f"{t(r['on_band_c'][0])} to {t(r['on_band_c'][1])}"),
            ("switch-on, worst case", f"{t(r['on_worst_c'][0])} to {t(r['on_worst_c'][1])}"),
            ("switch-off, 5-95 % of parts", f"{t(r['off_band_c'][0])} to {t(r['off_band_c'][1])}"),
            ("switch-off, worst case", f"{t(r['off_worst_c'][0])} to {t(r['off_worst_c'][1])}"),
            ("hysteresis, 5-95 %", f"{fmt(r['hysteresis_band_k'][0])} to {fmt(r['hysteresis_band_k'][1])} K"),
            ("thermistor resistance at switch-on / off", f"{r['thermistor_r_on_ohm']:,.0f} / {r['thermistor_r_off_ohm']:,.0f} ohm"),
            ("comparator inputs at switch-on (+ / -)", f"{fmt(r['v_plus_on_v'])} / {fmt(r['v_minus_on_v'])} V"),
            ("comparator inputs at switch-off (+ / -)", f"{fmt(r['v_plus_off_v'])} / {fmt(r['v_minus_off_v'])} V"),
            ("thermistor power at switch-on / off", f"{fmt(r['sense_power_on_w'] * 1e3)} / {fmt(r['sense_power_off_w'] * 1e3)} mW")]
    parts = [answers(cards), "<h3>Thresholds and tolerance bands</h3>", key_values(rows), bullets(r["findings"])]
    if "mains" in r:
        m = r["mains"]
        mrows = [("dropper current (ac)", f"{fmt(m['dropper_current'] * 1e3)} mA"),
                 ("dc available at low / high line", f"{fmt(m['dc_available_low'] * 1e3)} / {fmt(m['dc_available_high'] * 1e3)} mA"),
                 ("circuit load", f"{fmt(m['load_current'] * 1e3)} mA"),
                 ("zener dissipation, worst case", f"{fmt(m['zener_power'])} W"),
                 ("voltage 1 s after unplugging", f"{fmt(m['discharge_voltage_1s'])} V"),
                 ("triac loss", f"{fmt(m['triac_loss'])} W"),
                 ("heat sink needed", f"{fmt(m['heatsink_rth_needed'])} K/W or better")]
        parts += ["<h3>Mains-side checks</h3>", key_values(mrows), bullets(m["findings"])]
    else:
        parts.append(paragraph("No [thermostat.mains] table: the mains side was not checked.", "muted"))
    if design:
        drows = [("wanted", f"ON {t(design['wanted_on_c'])}, OFF {t(design['wanted_off_c'])}"),
                 ("feedback resistor", f"{design['feedback_ohm']:,.0f} ohm ({design['series']}; exact "
                                       f"{design['feedback_exact_ohm']:,.0f} ohm)"),
                 ("trimmer setting", f"{design['sense_trim_ohm']:,.0f} ohm -> ON {t(design['on_c'])}, OFF {t(design['off_c'])}")]
        if design.get("sense_trim_fixed_ohm"):
            drows.append(("or a fixed resistor", f"{design['sense_trim_fixed_ohm']:,.0f} ohm -> ON {t(design['fixed_on_c'])}"))
        parts += ["<h3>Design for the wanted temperatures</h3>", key_values(drows), bullets(design["findings"])]
    page.section("answers", "The answers", *parts)
    page.section("warnings", "Warnings and cautions", warnings_and_cautions([], [], r.get("cautions")))
    png = _read(folder, "hysteresis_loop.png")
    if png:
        page.section("figures", "Figures", figure(png, "hysteresis loop", "The fan's state against the thermistor's "
                                                  "temperature: up the right edge when warming, down the left edge "
                                                  "when cooling; shaded, the spread of the parts (5-95 %)."))
    page.section("model", "How the model works, and its limits", bullets([
        "Thresholds from Kirchhoff's current law at the comparator's inputs, the LED pull-up solved with the "
        "diode law; the thermistor by its Beta, Steinhart-Hart or table model.",
        "Tolerances: the worst-case corners and a Monte-Carlo spread of the resistors, thermistor, rail and "
        "offset.", "Self-heating: the thermistor's power over its dissipation constant."]))
    fp = {"atticsim_version": __version__, "scenario_sha256": scenario_digest(scenario)}
    fp["run_id"] = fp["scenario_sha256"][:16]
    page.section("trace", "Version and fingerprint", trace_section(fp, command))
    if inputs is not None:
        page.section("inputs", "Every input as written", all_inputs_section(inputs))
    return page.html()


# --- two runs compared -----------------------------------------------------------------------------

def compare_page(a, b, diff_rows, units="si", command=None, folder=None) -> str:
    """Two result folders side by side: the summary differences and the overlaid traces."""
    page = Page("Comparison of two runs", f"A: {a.name}  -  B: {b.name}")
    page.section("asked", "What was compared", key_values([
        ("A", f"{a.folder} ({a.title}, {a.period})"), ("B", f"{b.folder} ({b.title}, {b.period})"),
        ("time series read", f"A: {a.series_file}; B: {b.series_file}")]))
    head = ["figure", "A", "B", "B - A", "key"]
    page.section("answers", "The differences", table(head, diff_rows, numeric={1, 2, 3}, cls="wide small"))
    warns = [f"A: {w}" for w in a.summary.get("warnings", [])] + [f"B: {w}" for w in b.summary.get("warnings", [])]
    page.section("warnings", "Warnings and cautions", warnings_and_cautions(warns, [], a.summary.get("cautions")))
    png = _read(folder, "compare.png")
    if png:
        page.section("figures", "Figures", figure(png, "A and B overlaid", "Temperatures of A and B overlaid, and "
                                                  "when each one runs the fan."))
    fp = {"atticsim_version": __version__, "run_id": ""}
    page.section("trace", "Version and fingerprint", trace_section(fp, command))
    return page.html()


# --- any other command ----------------------------------------------------------------------------

def generic_page(title: str, subtitle: str, asked: list, summary: dict, warnings=(), notes=(), figures=None,
                 units: str = "si", command=None, fp: dict | None = None, inputs=None) -> str:
    """A report page for a command without a page of its own (e.g. a validation run): what was asked,
    the summary's figures (words and units from the keys), warnings, notes and cautions, figures
    (``{caption: png bytes}``), the model's limits and the trace, in the same order as every page."""
    page = Page(title, subtitle)
    page.section("asked", "What was asked", inputs_section(inputs, asked, None))
    page.section("answers", "The answers", answer_cards(summary, units), summary_table(summary, units))
    page.section("warnings", "Warnings and cautions", warnings_and_cautions(list(warnings), list(notes), None))
    if figures:
        page.section("figures", "Figures", *(figure(png, cap, cap) for cap, png in figures.items()))
    page.section("model", "How the model works, and its limits", bullets(MODEL_LINES), "<h3>Limits</h3>",
                 bullets(LIMITS_LINES))
    page.section("trace", "Version and fingerprint", trace_section(fp or {"atticsim_version": __version__}, command))
    if inputs is not None:
        page.section("inputs", "Every input as written", all_inputs_section(inputs))
    return page.html()
