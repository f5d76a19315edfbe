"""``atticsim fit``: fit a scenario's uncertain keys to a logged attic."""

from __future__ import annotations

import sys

import click

from atticsim.cli.options import force_option, out_option, say_if_compiling, scenario_argument, set_option, units_option


def _duration_days(text):
    from atticsim.units import UnitError, to_si

    try:
        return to_si(text if any(c.isalpha() for c in str(text)) else f"{text} d", "time") / 86400.0
    except UnitError as exc:
        raise click.BadParameter(str(exc)) from None


def _seconds(text):
    from atticsim.units import UnitError, to_si

    try:
        return to_si(text, "time")
    except UnitError as exc:
        raise click.BadParameter(str(exc)) from None


@click.command()
@scenario_argument
@click.option("--measured", "measured", required=True, type=click.Path(dir_okay=False),
              help="The logger file: CSV with a time column (ISO 8601 with UTC offset) and readings (sensor_c, "
                   "attic_air_c, attic_upper_air_c, attic_lower_air_c, deck_c; _f for °F), optionally fan_on and "
                   "outdoor_c.")
@click.option("--fit", "keys", required=True, metavar="KEY[,KEY...]",
              help="Scenario keys to fit, e.g. vents.passive_ach,roof.absorptance,ceiling.insulation.")
@click.option("--bounds", multiple=True, metavar="KEY=LOW:HIGH",
              help="Range of a fitted key (units allowed, x0.5 = half the scenario's value); repeatable. Default "
                   "ranges exist for the usual keys.")
@click.option("--weather", help="Weather of the logged days (file, pvlib:FILE, demo:NAME), or 'log' to build a rough "
                                "one from the log's outdoor_c column [default: the scenario's].")
@click.option("--utc-offset", type=float, metavar="HOURS",
              help="The logger clock's offset from UTC, for stamps without one, or to confirm a clock other than the "
                   "weather's (e.g. -5 for a logger on daylight-saving time in a UTC-6 zone).")
@click.option("--spinup", default="1d", show_default=True, metavar="DAYS",
              help="Days at the start of the log left out of the fit while the model settles.")
@click.option("--deck-plane", metavar="NAME", help="The roof plane deck_c is logged under [default: the first].")
@click.option("--max-gap", default="1h", show_default=True, metavar="DURATION",
              help="Longest stretch without readings accepted.")
@click.option("--workers", type=click.IntRange(min=1), help="Processes for the Jacobian [default: all cores].")
@set_option
@units_option
@out_option
@force_option
def fit(scenario, measured, keys, bounds, weather, utc_offset, spinup, deck_plane, max_gap, workers, overrides,
        units, out, force):
    """Fit SCENARIO's uncertain keys (air changes, roof absorptance, insulation, sensor lag...) to a logged attic.

    Writes fit.json (fitted values, 95 % intervals, correlations, goodness of fit), calibrated.toml (SCENARIO
    with the fitted values written in, ready for atticsim run and sweep), series.csv, overlay.png, misfit.png
    and report.html to --out.

    Example: atticsim fit scenarios/heron_lane_bungalow.toml --measured weather_demo/heron_lane_logger_2025.csv
    --fit vents.passive_ach,roof.absorptance,ceiling.insulation --out calibration
    """

    from atticsim.calibration.fit import fit_measured
    from atticsim.calibration.report import fit_text, fit_writers
    from atticsim.cli.options import claim_out

    claim = claim_out(out, force)  # fail before the fit, not after
    say_if_compiling()
    result = fit_measured(scenario, list(overrides), measured, [k.strip() for k in keys.split(",") if k.strip()],
                          bounds=list(bounds), weather=weather, utc_offset=utc_offset,
                          spinup_days=_duration_days(spinup), deck_plane=deck_plane, max_gap_s=_seconds(max_gap),
                          workers=workers, progress=sys.stderr)
    click.echo(fit_text(result, units))
    from atticsim.cli.options import command_line, given_options
    from atticsim.report.inputs import scenario_inputs

    ctx = click.get_current_context()
    inputs = scenario_inputs(scenario, overrides, result.start_scenario)
    files = claim.write(fit_writers(result, scenario, list(overrides), units, inputs, given_options(ctx),
                                    command_line(ctx)))
    for note in result.notes:
        click.echo(f"note: {note}", err=True)
    click.echo(f"{result.runs} runs in {result.wall_s:.1f} s on {result.workers} process(es); wrote {len(files)} "
               f"files to {out}", err=True)
