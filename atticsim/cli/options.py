"""Options shared by several commands, normalised once here: the output folder's claim, --weather, --workers,
--year, and quantities with units checked where they are given."""

import click

scenario_argument = click.argument("scenario", required=False, type=click.Path(dir_okay=False))
out_option = click.option("--out", "out", required=True, type=click.Path(file_okay=False),
                          help="Folder for the results (must be new or empty unless --force).")
force_option = click.option("--force", is_flag=True, help="Overwrite files in an existing --out folder.")
set_option = click.option("--set", "overrides", multiple=True, metavar="KEY=VALUE",
                          help='Override a scenario value, e.g. --set fan.flow="1500 cfm" (repeatable).')
units_option = click.option("--units", type=click.Choice(["si", "ip"]), default="si", show_default=True,
                            help="Units of the terminal summary and the figures; ip also adds IP columns and keys (degF, Btu/h, cfm, kBtu...) beside the SI ones in the files.")
weather_option = click.option("--weather", type=click.Path(dir_okay=False),
                              help="Weather file to use instead of the scenario's (or pvlib:FILE, demo:NAME).")
format_option = click.option("--format", "series_format", type=click.Choice(["csv", "parquet"]), default="csv",
                             show_default=True,
                             help="File format of the time series: csv (any spreadsheet) or parquet (smaller, "
                                  "faster, keeps the number types and the time zone; pandas, R, DuckDB read it).")
period_options = [
    click.option("--start", help="First day (ISO date, local standard time)."),
    click.option("--end", help="Last day, inclusive (ISO date), or an end instant."),
]
#: Most local worker processes a command starts (more than the machine's cores only queue).
MAX_WORKERS = 256
#: Calendar years a typical year may be laid on.
YEARS = click.IntRange(1800, 2200)


class _IsoDate(click.ParamType):
    """A calendar date written the ISO way (2025-07-21), kept as that text."""

    name = "date"

    def convert(self, value, param, ctx):
        import datetime

        try:
            return datetime.date.fromisoformat(str(value).strip()).isoformat()
        except ValueError:
            self.fail(f"{value!r} is not a date such as 2025-07-21", param, ctx)


ISO_DATE = _IsoDate()


def workers_type():
    """--workers: a whole number from 1 to MAX_WORKERS."""
    return click.IntRange(1, MAX_WORKERS)


#: ctx.meta key of the options' values as typed (before conversion to SI).
TYPED = "atticsim.typed"


class Quantity(click.ParamType):
    """An option's value read as a quantity (``"35degC"``, ``"95 degF"``, ``"10K"``), converted to SI and held
    within physical bounds; a bad value is refused in one line naming the option."""

    name = "quantity"

    def __init__(self, kind: str, low: float | None = None, high: float | None = None):
        self.kind, self.low, self.high = kind, low, high

    def convert(self, value, param, ctx):
        from atticsim.units import UnitError, to_si

        if isinstance(value, float):
            return value
        if ctx is not None and param is not None:
            ctx.meta.setdefault(TYPED, {})[param.name] = str(value)  # the report shows it as typed
        try:
            x = to_si(value, self.kind)
        except UnitError as exc:
            self.fail(str(exc), param, ctx)
        from atticsim.scenario.fields import SI_LABELS

        unit = SI_LABELS.get(self.kind, "")
        if (self.low is not None and x < self.low) or (self.high is not None and x > self.high):
            self.fail(f"must be from {self.low:g} to {self.high:g} {unit} (got {value})", param, ctx)
        return x


#: Measured first compile of the solver on the 2-core development machine [s] (benchmarks/RESULTS.md).
COMPILE_SECONDS = 20


#: The longest period [days] a first run takes with the reference solver while the fast one compiles in the
#: background: LSODA took about 0.3 s a day on the demo house (a week with and without the fan: 2.0 s), and up
#: to 6 s a day where the thermostat chatters; beyond a week compiling first is the shorter wait.
FIRST_RUN_DAYS = 7


def first_run_override(scenario, days: float, solver_given: bool) -> str | None:
    """For a command's one simulation on an install whose fast solver is not compiled yet: when the period is
    at most :data:`FIRST_RUN_DAYS` and no solver was asked for, start compiling the fast solver in the
    background and return the ``--set`` override that runs this one with the reference solver (and say so);
    else say that the solver compiles now and return None. Nothing is said on a compiled install."""
    import sys

    from atticsim import jitcache
    from atticsim.scenario.load import override_text

    if not jitcache.cold():
        return None
    if (solver_given or scenario.simulation.solver != "fast" or days > FIRST_RUN_DAYS
            or not jitcache.compile_in_background([sys.executable, "-m", "atticsim.cli.warm"])):
        say_if_compiling()
        return None
    click.echo(f"atticsim: first run on this machine: the fast solver is being compiled in the background (once, "
               f"about {COMPILE_SECONDS} s); this run uses the reference solver (scipy's LSODA; the two agree "
               f"within the tolerances of the validation page), later runs the fast one", err=True)
    return override_text("simulation.solver", "reference")


def say_if_compiling() -> None:
    """Say once, before a command's first simulation, that the solver is being compiled for this machine when
    its cache is empty (after an install or an upgrade): the one slow run explained."""
    from atticsim import jitcache

    if jitcache.cold():
        click.echo(f"atticsim: compiling the solver for this machine, once: about {COMPILE_SECONDS} s on a 2-core "
                   f"machine (later runs load it from the cache)", err=True)


def claim_out(out: str, force: bool, **kwargs):
    """Claim the --out folder before anything runs (atticsim.results.output.claim_output), released when the
    command ends: on failure or interruption what it created is removed."""
    from atticsim.results.output import claim_output

    if not str(out).strip():
        raise click.BadParameter("empty; give the folder for the results", param_hint="--out")
    claim = claim_output(out, force, **kwargs)
    click.get_current_context().call_on_close(claim.release)
    for note in claim.notes:
        click.echo(f"atticsim: note: {note}", err=True)
    return claim


def weather_override(weather: str) -> str:
    """The --set override for a --weather value: pvlib:FILE and demo:NAME as given, a file by its absolute
    path, written so that any character of it (a Windows path's backslashes) arrives as it is."""
    from pathlib import Path

    from atticsim.scenario.load import override_text

    w = weather if weather.startswith(("demo:", "pvlib:")) else str(Path(weather).resolve())
    return override_text("weather.file", w)


def load_checked_weather(sc, source: str, start=None, end=None, months=None, year=None, span=False):
    """The scenario's weather, loaded once before the run, with the period checked against it and the run's
    size (output rows) against atticsim.scenario.limits: both fail here, before any simulation.

    Returns the (frame, meta) pair to hand to ``simulate(weather=...)``; with ``span``, that and the period's
    length in days.
    """
    from atticsim.forcing.build import period_bounds
    from atticsim.forcing.weather import load_weather
    from atticsim.pipeline import resolve_period
    from atticsim.scenario.limits import check_output_rows

    if months and (start or end):
        raise click.UsageError("--months: give either --months or --start/--end, not both")
    weather = load_weather(sc.weather.file, year=year)
    frame, meta = weather[0], weather[1]
    first, last = resolve_period(frame, sc, start, end, months, year)
    t0, t1 = period_bounds(frame, first, last, str(getattr(meta, "path", None) or sc.weather.file), meta)
    check_output_rows(sc, (t1 - t0).total_seconds(), source)
    return (weather, (t1 - t0).total_seconds() / 86400.0) if span else weather


def given_options(ctx) -> list[tuple[str, str]]:
    """The options the user gave the command, as typed (for the report's 'what was asked')."""
    out, typed = [], ctx.meta.get(TYPED, {})
    for param in ctx.command.params:
        value = typed.get(param.name, ctx.params.get(param.name))
        if value in (None, False, (), []) or param.name == "force":
            continue
        name = param.opts[0] if param.opts and param.opts[0].startswith("-") else param.name.upper()
        values = value if isinstance(value, (list, tuple)) else [value]
        for v in values:
            out.append((name, "" if v is True else str(v)))
    return out


def command_line(ctx) -> str:
    """The command as a line (its options as given; arguments quoted where they hold spaces)."""
    import shlex

    parts = [ctx.command_path]
    for name, value in given_options(ctx):
        parts += [value] if not name.startswith("-") else ([name] + ([value] if value else []))
    return " ".join(shlex.quote(p) if p != ctx.command_path else p for p in parts)


def stages():
    """The stages of a command, shown on stderr when it is a terminal (:class:`atticsim.progress.Stages`)."""
    import sys

    from atticsim.progress import Stages

    return Stages(sys.stderr)
