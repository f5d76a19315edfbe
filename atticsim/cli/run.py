"""``atticsim run``: simulate one scenario and write its results."""

from __future__ import annotations

from pathlib import Path

import click

from atticsim.cli.options import (force_option, out_option, period_options, scenario_argument, set_option,
                                  units_option, weather_option)


@click.command()
@scenario_argument
@out_option
@weather_option
@period_options[0]
@period_options[1]
@set_option
@units_option
@force_option
def run(scenario, out, weather, start, end, overrides, units, force):
    """Simulate SCENARIO (a TOML file; the built-in demo house if omitted) and write results to --out.

    Writes summary.json, daily.csv, timeseries.csv, events.csv and temperatures.png.
    """
    from atticsim.results.output import check_output_dir
    from atticsim.scenario import load_scenario

    check_output_dir(Path(out), force)  # fail before a long run, not after
    overrides = list(overrides)
    if weather:
        w = weather if weather.startswith("demo:") else str(Path(weather).resolve())
        overrides.append(f'weather.file="{w}"')
    sc = load_scenario(scenario, overrides)

    from atticsim.report.text import summary_text
    from atticsim.results.export import result_writers
    from atticsim.results.output import write_outputs
    from atticsim.pipeline import simulate

    click.echo(f"simulating {sc.house.name} ...", err=True)
    result = simulate(sc, start=start, end=end)
    files = write_outputs(out, result_writers(result, units), force=force)
    click.echo(summary_text(result, units))
    click.echo(f"wrote {len(files)} files to {out}", err=True)
