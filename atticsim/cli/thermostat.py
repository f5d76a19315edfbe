"""``atticsim thermostat``: explain a circuit thermostat, or design one."""

from __future__ import annotations

import json

import click

from pathlib import Path

from atticsim.cli.options import force_option, scenario_argument, set_option, units_option


@click.command()
@scenario_argument
@set_option
@click.option("--json", "as_json", is_flag=True, help="Print the figures as JSON.")
@click.option("--design", is_flag=True, help="Choose the trimmer and feedback resistor for --on/--off.")
@click.option("--on", "on_", help='Wanted switch-on temperature, e.g. "40degC" (with --design).')
@click.option("--off", help='Wanted switch-off temperature (with --design).')
@click.option("--hysteresis", help='Wanted hysteresis instead of --off, e.g. "5K" (with --design).')
@click.option("--series", type=click.Choice(["E12", "E24", "E96"]), default="E24", show_default=True,
              help="Standard resistor series for the rounded parts.")
@units_option
@click.option("--out", "out", type=click.Path(file_okay=False),
              help="Also write thermostat.json, hysteresis_loop.png and report.html to this folder.")
@force_option
def thermostat(scenario, overrides, as_json, design, on_, off, hysteresis, series, units, out, force):
    """Explain SCENARIO's circuit thermostat: the temperatures its parts really switch at (with
    self-heating and tolerances), its LED current and its mains-side supply; or, with --design, the parts
    that give wanted temperatures. With --out, the same as files and a report page."""
    from atticsim.report.thermostat import design_report, design_text, thermostat_report, thermostat_text
    from atticsim.scenario import load_scenario
    from atticsim.units import to_si

    if out:
        from atticsim.results.output import check_output_dir

        check_output_dir(Path(out), force)
    sc = load_scenario(scenario, list(overrides))
    if sc.thermostat.kind != "circuit":
        from atticsim.scenario.load import ScenarioError

        raise ScenarioError(scenario or "<built-in demo house>", "thermostat.kind",
                            f"is {sc.thermostat.kind!r}; this command needs a circuit thermostat "
                            '(kind = "circuit" with a [thermostat.circuit] table)')
    if design:
        if on_ is None or (off is None) == (hysteresis is None):
            raise click.UsageError("--design needs --on and one of --off or --hysteresis")
        report = design_report(sc, to_si(on_, "temperature"),
                               off_c=to_si(off, "temperature") if off else None,
                               hysteresis_k=to_si(hysteresis, "temperature_difference") if hysteresis else None,
                               series=series)
        click.echo(json.dumps(report, indent=2) if as_json else design_text(report))
        design_result = report
    else:
        report = thermostat_report(sc)
        click.echo(json.dumps(report, indent=2) if as_json else thermostat_text(report, units))
        design_result = None
    if out:
        from atticsim.cli.options import command_line, given_options
        from atticsim.report.html import circuit_page, report_writer
        from atticsim.report.inputs import scenario_inputs
        from atticsim.report.plots import hysteresis_loop_figure, save_figure
        from atticsim.results.export import ip_summary
        from atticsim.results.output import write_json, write_outputs

        ctx = click.get_current_context()
        # the circuit as built (with --design, as designed: its thresholds are in the design's report)
        circuit = thermostat_report(sc)
        inputs = scenario_inputs(scenario, overrides, sc)
        writers = {
            "thermostat.json": lambda p: write_json(p, ip_summary({**circuit, **({"design": design_result}
                                                                                  if design_result else {})}, units)),
            "hysteresis_loop.png": lambda p: save_figure(hysteresis_loop_figure(circuit, units), p),
            "report.html": report_writer(lambda folder: circuit_page(
                sc, circuit, units, inputs, given_options(ctx), command_line(ctx), folder, design_result)),
        }
        files = write_outputs(out, writers, force=force)
        click.echo(f"wrote {len(files)} files to {out}", err=True)
