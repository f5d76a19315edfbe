"""Options shared by several commands."""

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
                              help="Weather file to use instead of the scenario's (or demo:NAME).")
format_option = click.option("--format", "series_format", type=click.Choice(["csv", "parquet"]), default="csv",
                             show_default=True,
                             help="File format of the time series: csv (any spreadsheet) or parquet (smaller, "
                                  "faster, keeps the number types and the time zone; pandas, R, DuckDB read it).")
period_options = [
    click.option("--start", help="First day (ISO date, local standard time)."),
    click.option("--end", help="Last day, inclusive (ISO date), or an end instant."),
]


def given_options(ctx) -> list[tuple[str, str]]:
    """The options the user gave the command, as typed (for the report's 'what was asked')."""
    out = []
    for param in ctx.command.params:
        value = ctx.params.get(param.name)
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
