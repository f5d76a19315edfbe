"""``atticsim designday``: a clear design day, repeated until periodic."""

from __future__ import annotations

import click

from atticsim.cli.options import (claim_out, force_option, format_option, ISO_DATE, out_option, Quantity,
                                  first_run_override, scenario_argument, set_option, stages, TYPED, units_option)


@click.command()
@scenario_argument
@out_option
@click.option("--date", required=True, type=ISO_DATE, help="Design day, ISO date (e.g. 2025-07-21).")
@click.option("--tmax", required=True, type=Quantity("temperature", -60.0, 60.0),
              help='Design maximum dry-bulb, e.g. "35degC" or "95degF".')
@click.option("--range", "daily_range", required=True, type=Quantity("temperature_difference", 0.0, 40.0),
              help='Mean daily range, e.g. "10K" or "18degF".')
@click.option("--dew", type=Quantity("temperature", -80.0, 60.0),
              help="Dew point (default: the day's minimum dry-bulb).")
@click.option("--wind", default="3.4", show_default=True, type=Quantity("velocity", 0.0, 40.0),
              help="Wind speed, m/s or with a unit.")
@set_option
@units_option
@format_option
@force_option
def designday(scenario, out, date, tmax, daily_range, dew, wind, overrides, units, series_format, force):
    """Run SCENARIO's house on a clear design day at its site (ASHRAE daily temperature profile,
    clear-sky sun), repeated until the attic's response is periodic; writes the same files as run,
    report.html included."""
    from atticsim.pipeline import design_day
    from atticsim.report.text import summary_text
    from atticsim.results.export import result_writers
    from atticsim.scenario import load_scenario
    from atticsim.units import to_si

    claim = claim_out(out, force)  # fail before the run, not after
    sc = load_scenario(scenario, list(overrides))
    first = first_run_override(sc, 1.0, False)  # one day, repeated until periodic
    if first:  # the fast solver compiles in the background meanwhile
        overrides = [*overrides, first]
        sc = load_scenario(scenario, overrides)
    from atticsim.cli.options import command_line, given_options
    from atticsim.progress import announced
    from atticsim.report.html import report_writer, run_page
    from atticsim.report.inputs import scenario_inputs

    with stages() as stage:
        result = design_day(sc, date, to_si(tmax, "temperature"), to_si(daily_range, "temperature_difference"),
                            dew_point=to_si(dew, "temperature") if dew is not None else None,
                            wind_speed=to_si(wind, "velocity"), progress=stage)
        ctx = click.get_current_context()
        typed = ctx.meta.get(TYPED, {})  # the design values as the user wrote them
        design = {"date": date, "maximum": typed.get("tmax", tmax), "daily range": typed.get("daily_range", daily_range),
                  "dew point": typed.get("dew", dew) if dew is not None else "the day's minimum",
                  "wind": typed.get("wind", wind)}
        inputs = scenario_inputs(scenario, overrides, sc)
        writers = result_writers(result, units, series_format)
        writers["report.html"] = report_writer(lambda folder: run_page(
            result, units, inputs, given_options(ctx), command_line(ctx), folder, kind="design day",
            design=design))
        files = claim.write(announced(writers, stage))
    click.echo(summary_text(result, units))
    click.echo(f"periodic to {result.summary['periodic_residual_k']:.2e} K after "
               f"{result.summary['spinup_days_used']} repeated days; wrote {len(files)} files to {out}", err=True)
