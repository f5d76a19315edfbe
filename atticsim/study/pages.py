"""The report pages of a tuning study and of a placements comparison (the page's building blocks come from
:mod:`atticsim.report.html` and :mod:`atticsim.report.page`)."""

from __future__ import annotations

from pathlib import Path

from atticsim.version import __version__
from atticsim.report.html import (LIMITS_LINES, MODEL_LINES, _read, all_inputs_section, asked_rows, inputs_section,
                                  table_html, trace_section, warnings_and_cautions)
from atticsim.report.labels import label, unit
from atticsim.report.page import Page, answers, bullets, figure, fmt, key_values, paragraph, table


def _point_rows(table, points, keys, heat_col):
    cols = [f"{k}_given" for k in keys] + [c for c in (
        "starts_per_day", "max_starts_per_hour", "short_cycles", "fan_run_hours", "fan_energy_kwh", heat_col,
        "attic_air_max_c", "net_benefit_kwh") if c in table]
    cols = list(dict.fromkeys(cols))
    head = ["point"] + [k for k in keys] + [f"{label(c)} [{unit(c)}]" if unit(c) else label(c)
                                            for c in cols[len(keys):]]
    rows = []
    for p in points:
        r = table[table["point"] == p]
        if r.empty:
            continue
        r = r.iloc[0]
        rows.append([str(p)] + [fmt(r[c]) if not isinstance(r[c], str) else r[c] for c in cols])
    return head, rows


def study_page(study, outcome, inputs=None, options=None, command=None, folder=None) -> str:
    """The report page of a tuning study: what was varied, the map, the recommendation and why, the
    runner-up, the Pareto front, warnings and cautions, the fingerprint."""
    import json

    from atticsim.study.spec import HEAT_METRICS

    table, rec = outcome.table, outcome.recommendation
    keys = [a.key for a in study.axes]
    heat_col = HEAT_METRICS[study.heat_metric]
    page = Page("Tuning study report", f"{len(table)} points over {', '.join(keys)}")
    d = study.describe()
    asked = [("scenario", inputs.source if inputs else (study.scenario or "the built-in demo house (fictional)")),
             ("period", f"{d['period']['start'] or 'the scenario own'} to {d['period']['end'] or ''}"),
             ("sampling", f"{d['sample']}" + (f", {d['points']} points, seed {d['seed']}" if d["sample"] == "lhs" else "")),
             ("starts limit", f"{study.starts_limit:g} starts in any 60 minutes"),
             ("comfort limit", f"{study.comfort_limit_c:g} °C (attic degree-hours above it)"),
             ("heat figure minimised", heat_col)]
    for ax in d["vary"]:
        asked.append((f"varied: {ax['key']}", f"{ax['text']}  ->  {', '.join(map(str, ax['values']))}"))
    page.section("asked", "What was asked", inputs_section(None, asked, options))
    parts = []
    if rec.get("point") is not None:
        given = ", ".join(f"{k} = {v}" for k, v in (rec.get("given") or {}).items())
        f = rec.get("figures") or {}
        cards = [("recommended point", f"{rec['point']}: {given}", False)]
        for k in ("starts_per_day", "max_starts_per_hour", "fan_run_hours", "fan_energy_kwh", "attic_air_max_c",
                  "net_benefit_kwh"):
            if f.get(k) is not None:
                cards.append((label(k), f"{fmt(f[k])} {unit(k)}".strip(), k == "net_benefit_kwh" and f[k] < 0))
        parts.append(answers(cards))
    parts.append("<h3>Why</h3>" + paragraph(rec.get("reason", "")) + paragraph("Rule: " + rec.get("rule", ""), "muted"))
    if rec.get("hysteresis_or_timer"):
        parts.append("<h3>Hysteresis or timer</h3>" + paragraph(rec["hysteresis_or_timer"]["text"][:1].upper()
                                                                + rec["hysteresis_or_timer"]["text"][1:] + "."))
    cp = rec.get("circuit_parts")
    if cp:
        parts.append("<h3>Standard parts for the recommended point</h3>" + key_values([
            ("series", cp["series"]), ("feedback resistor", f"{cp['feedback_ohm']:,.0f} ohm"),
            ("trimmer set to", f"{cp['sense_trim_ohm']:,.0f} ohm -> ON {fmt(cp['realised_on_c'])} °C, OFF "
                               f"{fmt(cp['realised_off_c'])} °C")]))
    second = rec.get("runner_up")  # the study's own: the same rule with the recommended point set aside
    if second and second.get("point") is not None:
        head, rows = _point_rows(table, [rec["point"], second["point"]], keys, heat_col)
        parts.append("<h3>Recommended point and runner-up</h3>" + table_html(head, rows)
                     + paragraph(f"Runner-up: point {second['point']}, what the same rule picks with the "
                                 f"recommended point set aside.", "muted"))
    if rec.get("edges"):
        parts.append(paragraph("On the edge of the range studied: " + "; ".join(
            e.get("advice", e.get("key", "")) if isinstance(e, dict) else str(e) for e in rec["edges"]) + "."))
    front = rec.get("pareto_points") or []
    if front:
        head, rows = _point_rows(table, front, keys, heat_col)
        parts.append(f"<h3>The front: {len(front)} points no other point beats on every one of "
                     f"{', '.join(o['meaning'] if isinstance(o, dict) else str(o) for o in rec.get('pareto_objectives', []))}"
                     "</h3>" + table_html(head, rows))
    page.section("answers", "The answers", *parts)
    warns = list(outcome.notes)
    ok = table[table["status"] == "ok"]
    if "net_benefit_kwh" in ok and len(ok) and (ok["net_benefit_kwh"] < 0).all():
        warns.append("Every point's net benefit is negative: at every setting studied the fan costs more "
                     "electricity than it saves.")
    if rec.get("point") is None:
        warns.append(f"No point is recommended: {rec.get('reason')}")
    page.section("warnings", "Warnings and cautions", warnings_and_cautions(warns, [], None))
    png = _read(folder, "short_cycling_map.png")
    page.section("figures", "Figures", figure(png, "short-cycling map", "Each panel one figure over the grid; "
                 "hatched cells start the fan more than the limit in some hour; the green frame is the "
                 "recommended point.") if png else paragraph("No map: the study is not a one- or two-key grid."))
    page.section("model", "How the model works, and its limits", bullets(MODEL_LINES),
                 paragraph("Each point is a whole simulation of the period with that point's values; the "
                           "recommendation follows the rule above, nothing else."), "<h3>Limits</h3>",
                 bullets(LIMITS_LINES))
    fp = {"atticsim_version": __version__}
    if folder is not None and (Path(folder) / "study.json").is_file():
        fp["study_fingerprint"] = json.loads((Path(folder) / "study.json").read_text()).get("fingerprint")
    fp["run_id"] = fp.get("study_fingerprint", "")[:16]
    page.section("trace", "Version and fingerprint", trace_section(fp, command))
    if inputs is not None:
        page.section("inputs", "Every input as written", all_inputs_section(inputs))
    return page.html()




def placements_page(scenario, results, table_df, findings, units="si", inputs=None, options=None,
                    command=None, folder=None) -> str:
    """Sensor placements side by side, with the reasons each behaves as it does."""
    from atticsim.report.inputs import fingerprint
    from atticsim.study.placements import WHY

    first = next(iter(results.values()))
    s = first.summary
    page = Page(f"Sensor placement report: {scenario.house.name}",
                f"{s.get('period_start', '')[:10]} to {s.get('period_end', '')[:10]} - {scenario.site.name}")
    page.section("asked", "What was asked", inputs_section(inputs, asked_rows(scenario, s, inputs), options))
    cols = [c for c in ("starts_per_day", "short_cycles", "median_on_minutes", "fan_run_hours", "fan_energy_kwh",
                        "attic_air_max_c", "ceiling_heat_gain_kwh", "sensor_minus_upper_air_mean_k",
                        "sensor_lag_min", "overshoot_at_switch_on_k") if c in table_df]
    head = ["placement"] + [f"{label(c)} [{unit(c)}]" if unit(c) else label(c) for c in cols] + ["what the sensor sees"]
    rows = [[r["placement"]] + [fmt(r[c]) for c in cols] + [WHY.get(r["placement"], "")]
            for _, r in table_df.iterrows()]
    page.section("answers", "The placements side by side", table(head, rows, numeric=set(range(1, len(cols) + 1)),
                                                                  cls="wide small"),
                 "<h3>Why</h3>", bullets(findings) or paragraph("No placement short-cycles or runs unusually long."))
    warns = sorted({w for r in results.values() for w in r.summary.get("warnings", [])})
    notes = list(first.notes)
    page.section("warnings", "Warnings and cautions", warnings_and_cautions(warns, notes, None))
    png = _read(folder, "placements.png")
    if png:
        page.section("figures", "Figures", figure(png, "sensor traces per placement",
                                                  "The hottest day: each placement's sensor over the upper attic "
                                                  "air, and when each one runs the fan."))
    page.section("model", "How the model works, and its limits", bullets(MODEL_LINES), "<h3>Limits</h3>",
                 bullets(LIMITS_LINES))
    fp = fingerprint(scenario, first.timeseries, f"{s.get('period_start')} to {s.get('period_end')}")
    page.section("trace", "Version and fingerprint", trace_section(fp, command))
    if inputs is not None:
        page.section("inputs", "Every input as written", all_inputs_section(inputs))
    return page.html()


# --- the thermostat circuit ------------------------------------------------------------------------
