"""``atticsim sweep``: run a tuning study (vary scenario keys, run every point, recommend one)."""

from __future__ import annotations

import sys
from pathlib import Path

import click

from atticsim.cli.options import (force_option, out_option, period_options, say_if_compiling, scenario_argument,
                                  set_option, weather_option, weather_override, workers_type)


@click.command()
@scenario_argument
@click.option("--vary", "vary", multiple=True, metavar="KEY=START:STOP:STEP[unit]",
              help="Vary a scenario key over a range (STOP included when on the grid) or a list a,b,c[unit]; "
                   "repeatable. thermostat.hysteresis=1:5:1K sets off = on - width for a switch that closes on rise (on + width when it closes on fall).")
@out_option
@click.option("--study", "study_file", type=click.Path(dir_okay=False),
              help="Study TOML file (scenario, period, [[vary]], sampling, limits); options given here win.")
@click.option("--sample", type=click.Choice(["grid", "lhs"]), help="Full grid (default) or Latin hypercube.")
@click.option("--points", type=int, help="Number of Latin-hypercube points.")
@click.option("--seed", type=int, help="Seed of the Latin-hypercube sample (recorded in study.json).")
@period_options[0]
@period_options[1]
@click.option("--months", help="Month range or season instead of dates: jun-aug, 7, summer, cooling, year (in the "
                               "weather's first year).")
@weather_option
@set_option
@click.option("--workers", type=workers_type(), help="Local worker processes [default: all cores].")
@click.option("--scheduler", metavar="tcp://HOST:PORT", help="Run the points on a Dask scheduler.")
@click.option("--resume", is_flag=True, help="Continue a study in --out, keeping its finished points.")
@force_option
@click.option("--starts-limit", metavar="N/h",
              help="Fan starts allowed in any hour [default: 6/h, common practice for small motors].")
@click.option("--short-cycles-allowed", metavar="N",
              help="Short cycles a recommended point may have [default: 0].")
@click.option("--comfort-limit", metavar="TEMP", help="Attic air limit for the degree-hours [default: 38 degC].")
@click.option("--heat-metric", type=click.Choice(["degree-hours", "ceiling-gain"]),
              help="Heat figure the recommendation minimises [default: degree-hours].")
@click.option("--heat-tolerance", metavar="PCT",
              help="Heat figures within this share of the lowest tie, and the gentler setting wins [default: 1%].")
@click.option("--keep-point", "keep_points", multiple=True, metavar="N|recommended|runner-up",
              help="Also run this point in full and write every file run writes to DIR/point-N (for atticsim "
                   "compare); repeatable. With --resume the finished study is reused and only the point runs.")
def sweep(scenario, vary, out, study_file, sample, points, seed, start, end, months, weather, overrides, workers,
          scheduler, resume, force, starts_limit, short_cycles_allowed, comfort_limit, heat_metric, heat_tolerance,
          keep_points):
    """Run SCENARIO (the built-in demo house if omitted) at every point of a study and write the results to --out.

    Writes points.csv/points.parquet (every varied value and figure per point), study.json (versions, seed,
    inputs), journal.jsonl (one line per finished point; --resume continues from it), pareto.csv and
    pareto.png (heat against fan electricity), recommendation.json (the rule, the chosen point, its runner-up,
    range edges, warnings), short_cycling_map.png and report.html (the study on one page).

    Example: atticsim sweep --vary thermostat.on=36:44:2degC --vary thermostat.hysteresis=1:5:1K
    --start 2025-07-01 --end 2025-07-07 --out hysteresis_study
    """
    from atticsim.study.spec import (Study, load_study_file, parse_comfort_limit, parse_heat_tolerance,
                                     parse_short_cycles_allowed, parse_starts_limit, parse_vary)

    study = load_study_file(study_file) if study_file else Study()
    if scenario:
        study.scenario = str(Path(scenario).resolve())
    study.base_overrides = list(study.base_overrides) + list(overrides)
    if weather:
        study.base_overrides.append(weather_override(weather))
    for text in vary:
        axis = parse_vary(text)
        study.axes = [a for a in study.axes if a.key != axis.key] + [axis]
    if sample:
        study.sample = sample
    if points is not None:
        study.points = points
    if seed is not None:
        study.seed = seed
    if start or end:  # dates given here win over a study file's months
        study.months = None
    if start:
        study.start = start
    if end:
        study.end = end
    if months:  # and months given here over its dates
        if start or end:
            raise click.UsageError("--months: give either --months or --start/--end, not both")
        study.months, study.start, study.end = months, None, None
    if starts_limit is not None:
        study.starts_limit = parse_starts_limit(starts_limit)
    if short_cycles_allowed is not None:
        study.short_cycles_allowed = parse_short_cycles_allowed(short_cycles_allowed)
    if heat_tolerance is not None:
        study.heat_tolerance = parse_heat_tolerance(heat_tolerance)
    if comfort_limit is not None:
        study.comfort_limit_c = parse_comfort_limit(comfort_limit)
    if heat_metric:
        study.heat_metric = heat_metric
    study.check()
    from atticsim.study.keep import check_keeps, parse_keep

    keeps = [parse_keep(k) for k in keep_points]
    check_keeps(study, keeps)

    from atticsim.study.analysis import recommendation_text
    from atticsim.study.runner import run_study

    say_if_compiling()
    outcome = run_study(study, out, workers=workers, scheduler=scheduler, resume=resume, force=force,
                        progress=sys.stderr, command={"sweep": click.get_current_context().params})
    from atticsim.cli.options import command_line, given_options
    from atticsim.study.pages import study_page
    from atticsim.report.inputs import scenario_inputs
    from atticsim.report.page import write_page

    ctx = click.get_current_context()
    scenario_path = Path(study.scenario) if study.scenario else None
    inputs = scenario_inputs(scenario_path, study.base_overrides)
    write_page(Path(out) / "report.html", study_page(study, outcome, inputs, given_options(ctx), command_line(ctx), out))
    outcome.files.append(Path(out) / "report.html")
    for note in outcome.notes:
        click.echo(f"note: {note}", err=True)
    click.echo(recommendation_text(outcome.recommendation, outcome.table, [a.key for a in study.axes]))
    click.echo(f"{len(outcome.table)} points ({outcome.computed} computed, {outcome.reused} reused) on "
               f"{outcome.backend} in {outcome.wall_s:.1f} s; wrote {len(outcome.files)} files to {out}", err=True)
    if keeps:
        _keep(study, outcome, keeps, out, ctx)


def _keep(study, outcome, keeps, out, ctx):
    """Run the kept points in full, each into DIR/point-N (the study's own folder: rewritten when kept again)."""
    from atticsim.cli.options import claim_out, command_line, given_options
    from atticsim.pipeline import simulate
    from atticsim.report.html import report_writer, run_page
    from atticsim.report.inputs import scenario_inputs
    from atticsim.results.export import result_writers
    from atticsim.study.keep import planned_points, point_number

    numbers = {}
    for k in keeps:
        n = point_number(k, outcome.recommendation)
        if n is None:
            click.echo(f"note: --keep-point {k}: the study's rule chose no {k} point; nothing kept for it", err=True)
        else:
            numbers.setdefault(n, k)
    planned = planned_points(study, sorted(numbers))
    scenario_path = Path(study.scenario) if study.scenario else None
    for n, point in planned.items():
        folder = Path(out) / f"point-{n}"
        claim = claim_out(str(folder), True)
        result = simulate(point.scenario, start=study.start, end=study.end)
        inputs = scenario_inputs(scenario_path, list(study.base_overrides) + list(point.overrides), point.scenario)
        writers = result_writers(result, "si", "csv")
        writers["report.html"] = report_writer(lambda f, r=result, i=inputs: run_page(
            r, "si", i, given_options(ctx), command_line(ctx), f))
        files = claim.write(writers)
        values = ", ".join(f"{key} = {v}" for key, v in point.given.items())
        click.echo(f"point {n} ({numbers[n]}: {values}): wrote {len(files)} files to {folder}", err=True)
