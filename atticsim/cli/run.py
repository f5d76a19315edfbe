"""``atticsim run``: simulate one scenario and write its results."""

from __future__ import annotations

import click

from atticsim.cli.options import (claim_out, force_option, format_option, load_checked_weather, out_option,
                                  first_run_override, period_options, scenario_argument, set_option, stages, units_option,
                                  weather_option, weather_override, YEARS)


@click.command()
@scenario_argument
@out_option
@weather_option
@period_options[0]
@period_options[1]
@click.option("--months", help="Month range or season instead of dates: jun-aug, 7, summer, cooling, year.")
@click.option("--year", type=YEARS, help="Calendar year to run a typical-year weather file as (and of --months).")
@click.option("--solver", type=click.Choice(["fast", "reference"]),
              help="fast: exact discretisation (default); reference: scipy LSODA with event functions.")
@set_option
@units_option
@format_option
@force_option
def run(scenario, out, weather, start, end, months, year, solver, overrides, units, series_format, force):
    """Simulate SCENARIO (a TOML file; the built-in demo house if omitted) and write results to --out.

    Writes summary.json, daily.csv, monthly.csv, timeseries.csv (or .parquet with --format parquet), events.csv,
    temperatures.png, monthly.png and report.html (one page to hand a client). --weather takes a file, pvlib:FILE
    (a typical-year file shipped with pvlib) or demo:NAME. On a terminal each stage is shown with its time.
    """
    from atticsim.scenario import load_scenario

    claim = claim_out(out, force)  # fail before a long run, not after
    overrides = list(overrides)
    if solver:
        from atticsim.scenario.load import override_text

        overrides.append(override_text("simulation.solver", solver))
    if weather:
        overrides.append(weather_override(weather))
    sc = load_scenario(scenario, overrides)
    weather_data, days = load_checked_weather(sc, scenario or "<built-in demo house>", start, end, months, year,
                                              span=True)
    first = first_run_override(sc, days, solver is not None)
    if first:  # the fast solver compiles in the background meanwhile
        overrides.append(first)
        sc = load_scenario(scenario, overrides)

    from atticsim.cli.options import command_line, given_options
    from atticsim.report.html import report_writer, run_page
    from atticsim.report.inputs import scenario_inputs
    from atticsim.report.text import summary_text
    from atticsim.results.export import result_writers
    from atticsim.pipeline import simulate
    from atticsim.progress import announced

    for w in sc.input_warnings:  # said before a long run too; the summary repeats them
        click.echo(f"atticsim: warning: {w}", err=True)
    click.echo(f"simulating {sc.house.name} ...", err=True)
    with stages() as stage:
        result = simulate(sc, weather=weather_data, start=start, end=end, months=months, year=year, progress=stage)
        ctx = click.get_current_context()
        inputs = scenario_inputs(scenario, overrides, sc)
        writers = result_writers(result, units, series_format)
        writers["report.html"] = report_writer(lambda folder: run_page(
            result, units, inputs, given_options(ctx), command_line(ctx), folder))
        files = claim.write(announced(writers, stage))
    click.echo(summary_text(result, units))
    click.echo(f"wrote {len(files)} files to {out}", err=True)
