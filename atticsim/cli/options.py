"""Options shared by several commands."""

import click

scenario_argument = click.argument("scenario", required=False, type=click.Path(dir_okay=False))
out_option = click.option("--out", "out", required=True, type=click.Path(file_okay=False),
                          help="Folder for the results (must be new or empty unless --force).")
force_option = click.option("--force", is_flag=True, help="Overwrite files in an existing --out folder.")
set_option = click.option("--set", "overrides", multiple=True, metavar="KEY=VALUE",
                          help='Override a scenario value, e.g. --set fan.flow="1500 cfm" (repeatable).')
units_option = click.option("--units", type=click.Choice(["si", "ip"]), default="si", show_default=True,
                            help="Units of the terminal summary and the figure.")
weather_option = click.option("--weather", type=click.Path(dir_okay=False),
                              help="Weather file to use instead of the scenario's (or demo:NAME).")
period_options = [
    click.option("--start", help="First day (ISO date, local standard time)."),
    click.option("--end", help="Last day, inclusive (ISO date), or an end instant."),
]
