"""``atticsim thermostat``: explain a circuit thermostat, or design one."""

from __future__ import annotations

import json

import click

from pathlib import Path

from atticsim.cli.options import Quantity, claim_out, force_option, scenario_argument, set_option, units_option


@click.command()
@scenario_argument
@set_option
@click.option("--json", "as_json", is_flag=True, help="Print the figures as JSON.")
@click.option("--design", is_flag=True, help="Choose the trimmer and feedback resistor for --on/--off.")
@click.option("--on", "on_", type=Quantity("temperature", -40.0, 120.0),
              help='Wanted switch-on temperature, e.g. "40degC" or "104degF" (with --design).')
@click.option("--off", type=Quantity("temperature", -40.0, 120.0), help='Wanted switch-off temperature (with --design).')
@click.option("--hysteresis", type=Quantity("temperature_difference", 0.01, 60.0),
              help='Wanted hysteresis instead of --off, e.g. "5K" (with --design).')
@click.option("--basis", type=click.Choice(["air", "thermistor"]), default="air", show_default=True,
              help="With --design: the wanted temperatures are the AIR's around the sensor (its self-heating "
                   "included) or the thermistor's own.")
@click.option("--series", type=click.Choice(["E12", "E24", "E96"]), default="E24", show_default=True,
              help="Standard resistor series for the rounded parts.")
@click.option("--write", "write_to", type=click.Path(dir_okay=False),
              help="With --design: write SCENARIO with the chosen feedback resistor and trimmer setting to this "
                   "file, ready to run.")
@click.option("--run-on", "run_on", metavar="TIME[,TIME...]",
              help='Bench test: the fan\'s timed run-on after the heat was taken off the bare sensor, e.g. "25s" or '
                   '"25s,27s,24s" for repeats; infers the sensor\'s still-air time constant (with --ambient and '
                   '--heated-to; --write puts it in a scenario).')
@click.option("--ambient", help='Bench test: the room\'s air temperature, e.g. "24degC".')
@click.option("--heated-to", "heated_to", help="Bench test: the sensor's temperature when the heat was taken away.")
@click.option("--timing", default="1s", show_default=True, help="Bench test: uncertainty of each timing.")
@units_option
@click.option("--out", "out", type=click.Path(file_okay=False),
              help="Also write thermostat.json, hysteresis_loop.png and report.html to this folder.")
@force_option
def thermostat(scenario, overrides, as_json, design, on_, off, hysteresis, basis, series, write_to, run_on, ambient,
               heated_to, timing, units, out, force):
    """Explain SCENARIO's circuit thermostat: the temperatures its parts really switch at (with
    self-heating and tolerances), its LED current, its mains-side supply, its timer stage and the time
    rules the simulation applies; or, with --design, the parts that give wanted temperatures (of the air by
    default: the thermistor's own dissipation included). With --out, the same as files and a report page;
    --force replaces an existing --out folder or --write file. With --run-on, --ambient and --heated-to (any
    thermostat kind): the sensor's still-air time constant from a timed run-on on the bench."""
    from atticsim.report.thermostat import design_report, design_text, thermostat_report, thermostat_text
    from atticsim.scenario import load_scenario
    from atticsim.units import to_si

    if run_on is not None:
        return _bench(scenario, overrides, run_on, ambient, heated_to, timing, as_json, write_to, units, out, design,
                      force)
    if write_to and not design:
        raise click.UsageError("--write needs --design or --run-on (it writes what they find)")
    if write_to and not force:
        from atticsim.errors import OutputError

        if Path(write_to).exists():
            raise OutputError(f"{write_to}: file exists; pass --force to overwrite it")
    claim = claim_out(out, force) if out else None  # fail before anything runs, not after
    sc = load_scenario(scenario, list(overrides))
    for w in sc.input_warnings:
        click.echo(f"atticsim: warning: {w}", err=True)
    if sc.thermostat.kind != "circuit":
        from atticsim.scenario.load import ScenarioError

        raise ScenarioError(scenario or "<built-in demo house>", "thermostat.kind",
                            f"is {sc.thermostat.kind!r}; this command needs a circuit thermostat "
                            '(kind = "circuit" with a [thermostat.circuit] table)')
    if design:
        if on_ is None or (off is None) == (hysteresis is None):
            raise click.UsageError("--design needs --on and one of --off or --hysteresis")
        report = design_report(sc, to_si(on_, "temperature"),
                               off_c=to_si(off, "temperature") if off is not None else None,
                               hysteresis_k=(to_si(hysteresis, "temperature_difference") if hysteresis is not None
                                             else None),
                               series=series, basis=basis)
        click.echo(json.dumps(report, indent=2) if as_json else design_text(report, units))
        if write_to:
            from atticsim.scenario.write import ohms, write_scenario

            note = (f"chosen by atticsim thermostat --design for the {basis}: ON {report['wanted_on_c']:.2f} degC, "
                    f"OFF {report['wanted_off_c']:.2f} degC ({report['series']})")
            path = write_scenario(scenario, list(overrides),
                                  {"thermostat.circuit.feedback": ohms(report["feedback_ohm"]),
                                   "thermostat.circuit.sense_trim": ohms(report["sense_trim_ohm"])},
                                  write_to, force=force, comment=note)
            click.echo(f"wrote {path}: the scenario with feedback {report['feedback_ohm']:,.0f} ohm and the trimmer "
                       f"set to {report['sense_trim_ohm']:,.0f} ohm; run it with: atticsim run {path} --out DIR",
                       err=True)
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
        from atticsim.results.output import write_json

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
        files = claim.write(writers)
        click.echo(f"wrote {len(files)} files to {out}", err=True)


def _bench(scenario, overrides, run_on, ambient, heated_to, timing, as_json, write_to, units, out, design, force):
    """``--run-on``: the sensor's still-air time constant from a timed run-on (atticsim.calibration.bench)."""
    from atticsim.calibration.bench import bench_text, scenario_bench
    from atticsim.scenario import load_scenario
    from atticsim.units import to_si

    if design or out:
        raise click.UsageError("--run-on infers the sensor's time constant: not with --design or --out")
    if ambient is None or heated_to is None:
        raise click.UsageError("--run-on needs --ambient (the room's air) and --heated-to (the sensor's temperature "
                               "when the heat was taken away)")
    if write_to and not force and Path(write_to).exists():
        raise FileExistsError(f"{write_to}: file exists; pass --force to overwrite it")
    sc = load_scenario(scenario, list(overrides))
    for w in sc.input_warnings:
        click.echo(f"atticsim: warning: {w}", err=True)
    times = [to_si(t.strip(), "time") for t in run_on.split(",") if t.strip()]
    result = scenario_bench(sc, times, to_si(heated_to, "temperature"), to_si(ambient, "temperature"),
                            to_si(timing, "time"))
    click.echo(json.dumps(result.as_dict(), indent=2) if as_json else bench_text(result, units))
    if write_to:
        if sc.sensor.body is not None:
            from atticsim.scenario.load import ScenarioError

            raise ScenarioError(scenario or "<built-in demo house>", "sensor.body",
                                f"is {sc.sensor.body!r}: the body's correlations set its time constant; remove "
                                f"sensor.body to run with the measured one")
        from atticsim.scenario.write import write_scenario

        note = (f"still air, from a bench run-on of {run_on} (atticsim thermostat --run-on): "
                f"{result.band_s[0]:.1f} .. {result.band_s[1]:.1f} s")
        path = write_scenario(scenario, list(overrides), {"sensor.time_constant": f"{result.tau_s:.3g} s"}, write_to,
                              force=force, comment=note)
        click.echo(f"wrote {path}: the scenario with sensor.time_constant = {result.tau_s:.3g} s (measured in still "
                   f"air; the attic's moving air cools a sensor faster, so the model's lag is then on the long side)",
                   err=True)
