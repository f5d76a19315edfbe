"""``atticsim thermostat``: explain a circuit thermostat, or design one."""

from __future__ import annotations

import json

import click

from atticsim.cli.options import scenario_argument, set_option, units_option


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
def thermostat(scenario, overrides, as_json, design, on_, off, hysteresis, series, units):
    """Explain SCENARIO's circuit thermostat: the temperatures its parts really switch at (with
    self-heating and tolerances), its LED current, its mains-side supply, its timer stage and the time
    rules the simulation applies; or, with --design, the parts that give wanted temperatures."""
    from atticsim.report.thermostat import design_report, design_text, thermostat_report, thermostat_text
    from atticsim.scenario import load_scenario
    from atticsim.units import to_si

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
    else:
        report = thermostat_report(sc)
        click.echo(json.dumps(report, indent=2) if as_json else thermostat_text(report, units))
