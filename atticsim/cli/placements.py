"""``atticsim placements``: the same house and weather with the sensor in each place."""

from __future__ import annotations

import sys

import click

from atticsim.cli.options import (claim_out, force_option, load_checked_weather, out_option, period_options,
                                  say_if_compiling, scenario_argument, set_option, units_option, weather_option,
                                  weather_override, workers_type)
from atticsim.network.placement import PLACEMENTS


@click.command()
@scenario_argument
@out_option
@click.option("--only", help="Comma list of placements (default all): " + ",".join(PLACEMENTS) + ".")
@period_options[0]
@period_options[1]
@click.option("--months", help="Month range or season instead of dates.")
@weather_option
@click.option("--workers", type=workers_type(), default=2, show_default=True, help="Parallel runs.")
@set_option
@units_option
@force_option
def placements(scenario, out, only, start, end, months, weather, workers, overrides, units, force):
    """Compare sensor placements for SCENARIO: writes placements.csv, placements.json, placements.png and
    report.html, and says which placements short-cycle and why."""
    from atticsim.report.cautions import caution_text
    from atticsim.report.plots import plot_placements
    from atticsim.results.output import write_json
    from atticsim.study.placements import placement_findings, placement_table, run_placements
    from atticsim.scenario import load_scenario

    claim = claim_out(out, force)  # fail before the runs, not after
    sc = load_scenario(scenario, list(overrides) + ([weather_override(weather)] if weather else []))
    names = [p.strip() for p in only.split(",")] if only else None
    load_checked_weather(sc, scenario or "<built-in demo house>", start, end, months)
    for w in sc.input_warnings:  # the same words as run: what in the input looks wrong, before the runs
        click.echo(f"atticsim: warning: {w}", err=True)
    say_if_compiling()
    click.echo("running one simulation per placement ...", err=True)
    from atticsim.progress import Progress, is_terminal

    bar = Progress(len(names or PLACEMENTS), 0, sys.stderr if is_terminal(sys.stderr) else None,
                   label="placements", unit="runs")
    bar.start()
    results = run_placements(sc, names, start=start, end=end, months=months, workers=workers, on_done=bar.update)
    bar.close()
    table = placement_table(results)
    findings = placement_findings(table, sc.simulation.short_cycle / 60.0)
    from atticsim.cli.options import command_line, given_options
    from atticsim.report.html import report_writer
    from atticsim.report.inputs import scenario_inputs
    from atticsim.results.export import ip_table, write_csv
    from atticsim.study.pages import placements_page

    ctx = click.get_current_context()
    inputs = scenario_inputs(scenario, overrides, sc)
    files = claim.write({
        "placements.csv": lambda p: write_csv(ip_table(table, units), p),
        "placements.json": lambda p: write_json(p, {"placements": ip_table(table, units).to_dict(orient="records"),
                                                    "findings": findings,
                                                    "warnings": list(sc.input_warnings)}),
        "placements.png": lambda p: plot_placements(results, p, units),
        "report.html": report_writer(lambda folder: placements_page(
            sc, results, table, findings, units, inputs, given_options(ctx), command_line(ctx), folder)),
    })
    with_cols = ["placement", "starts_per_day", "short_cycles", "median_on_minutes", "fan_run_hours",
                 "attic_air_max_c", "ceiling_heat_gain_kwh", "sensor_lag_min", "overshoot_at_switch_on_k"]
    click.echo(table[with_cols].to_string(index=False, float_format=lambda v: f"{v:.2f}"))
    for line in findings:
        click.echo(f"- {line}")
    click.echo(caution_text())
    click.echo(f"wrote {len(files)} files to {out}", err=True)
