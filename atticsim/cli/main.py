"""The ``atticsim`` command group. Heavy libraries are imported inside the commands that need them."""

from __future__ import annotations

import atexit
import gc
import sys

import click

from atticsim import __version__

# The process ends without the interpreter's last collections over the whole heap (the libraries' objects and
# the run's): they took 0.4-0.6 s at the end of every run, measured, a fifth of a one-day run. Frozen objects
# are left to the operating system; every file is closed by then.
atexit.register(gc.freeze)


class AtticsimGroup(click.Group):
    """Turns the library's input errors into one line on stderr and exit status 2."""

    def invoke(self, ctx):
        try:
            return super().invoke(ctx)
        except (click.exceptions.Exit, click.exceptions.Abort, click.ClickException):
            raise
        except (ValueError, FileExistsError, FileNotFoundError) as exc:
            click.echo(f"atticsim: error: {exc}", err=True)
            sys.exit(2)


@click.group(cls=AtticsimGroup, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="atticsim")
def cli():
    """Simulate an attic with a thermostat-switched ventilation fan.

    Temperatures over time, every fan start and stop at the moment it happens, and a season's
    figures (run hours, starts, kWh, ceiling heat gain with and without the fan).
    """


def _register():
    from atticsim.cli.compare import compare
    from atticsim.cli.designday import designday
    from atticsim.cli.placements import placements
    from atticsim.cli.run import run
    from atticsim.cli.sweep import sweep
    from atticsim.cli.thermostat import thermostat
    from atticsim.cli.validate import validate

    for command in (run, designday, thermostat, placements, sweep, compare):
        cli.add_command(command)
    cli.add_command(validate)


_register()


if __name__ == "__main__":
    cli()
