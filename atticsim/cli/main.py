"""The ``atticsim`` command group. Heavy libraries are imported inside the commands that need them.

The group is the one place that turns what escapes a command into what the user sees (``report_failure``):

- bad input (the project's :class:`~atticsim.errors.InputError` and the ``ValueError`` lines atticsim raises
  itself), and click's own usage errors: ``atticsim: error: <file or --option>: <key>: <reason>``, exit 2;
- a failure of the machine (a full disk, a read error): ``atticsim: error: <file>: <reason>``, exit 1;
- Ctrl-C, SIGTERM and SIGHUP (all three take the same path: the commands clean up what they were writing):
  ``atticsim: stopped by SIGTERM ...``, exit 128 + the signal's number;
- anything else is a bug: one line saying so, exit 1 (``ATTICSIM_DEBUG=1`` prints the traceback too).
"""

from __future__ import annotations

import atexit
import errno
import gc
import os
import signal
import sys
from contextlib import contextmanager

import click

from atticsim.version import __version__
from atticsim import stopping
from atticsim.errors import InterruptedRun, is_input_error, one_line

#: OSError numbers that mean a path the user gave is wrong (bad input) rather than a machine failing.
_PATH_ERRNOS = {errno.ENOENT, errno.EACCES, errno.EPERM, errno.EISDIR, errno.ENOTDIR, errno.EROFS, errno.EEXIST,
                errno.ENAMETOOLONG, errno.ELOOP}
#: Signals handled like Ctrl-C.
STOP_SIGNALS = tuple(getattr(signal, name) for name in ("SIGTERM", "SIGHUP") if hasattr(signal, name))


@contextmanager
def stop_signals():
    """SIGTERM and SIGHUP raise :class:`InterruptedRun` while the block runs (main thread only; see
    :mod:`atticsim.stopping`)."""
    saved = {}
    stopping.reset()
    try:
        for sig in STOP_SIGNALS:
            saved[sig] = signal.signal(sig, stopping.handler)
    except ValueError:  # not the main thread: leave the signals alone
        pass
    try:
        yield
    finally:
        for sig, old in saved.items():
            signal.signal(sig, old)


def _usage_line(exc: click.UsageError, group: click.Group) -> str:
    """click's usage error as one line naming the option."""
    if isinstance(exc, click.exceptions.NoSuchOption):
        line = f"{exc.option_name}: no such option"
        if exc.possibilities:
            line += f" (did you mean {exc.possibilities[0]}?)"
        return line
    param = getattr(exc, "param", None)
    hint = getattr(exc, "param_hint", None) or (param.get_error_hint(exc.ctx) if param is not None else None)
    if isinstance(exc, click.BadOptionUsage) and not hint:
        hint = exc.option_name
        exc.message = exc.message.replace(f"Option '{exc.option_name}' ", "")
    if isinstance(hint, (list, tuple)):
        hint = " / ".join(hint)
    hint = hint.replace("'", "").replace("[", "").replace("]", "") if isinstance(hint, str) else None
    if isinstance(exc, click.MissingParameter):
        what = "argument" if getattr(param, "param_type_name", "") == "argument" else "option"
        return f"{hint or 'parameter'}: required {what} is missing"
    message = exc.message.rstrip(".")
    if message.startswith("Got unexpected extra argument"):
        extra = message.split("(", 1)[-1].rstrip(")")
        return f"{extra}: unexpected extra argument (a command takes one SCENARIO file at most)"
    if message.startswith("No such command"):
        import difflib

        name = message.split("'")[1] if "'" in message else ""
        close = difflib.get_close_matches(name, list(group.commands), n=1)
        return f"{name}: no such command{f' (did you mean {close[0]}?)' if close else ''}; commands: " \
               f"{', '.join(group.commands)}"
    return f"{hint}: {message}" if hint else message


def report_failure(exc: BaseException, group: click.Group) -> tuple[int, str | None]:
    """(exit status, the line to print or None) for what escaped a command."""
    if isinstance(exc, click.exceptions.Exit):
        return exc.exit_code, None
    if isinstance(exc, _Stopped):
        exc = exc.interrupt
    if isinstance(exc, (click.exceptions.Abort, KeyboardInterrupt)):
        cause = exc if isinstance(exc, InterruptedRun) else (exc.__cause__ or exc.__context__)
        if isinstance(cause, InterruptedRun):
            return 128 + cause.signum, f"atticsim: stopped by {cause.name}; nothing half-written was left behind"
        tty = getattr(sys.stderr, "isatty", lambda: False)()
        return 130, f"{chr(10) if tty else ''}atticsim: stopped (Ctrl-C); nothing half-written was left behind"
    if isinstance(exc, click.exceptions.NoArgsIsHelpError):
        return 0, exc.format_message()
    if isinstance(exc, click.UsageError):
        return 2, f"atticsim: error: {one_line(_usage_line(exc, group))}"
    if isinstance(exc, click.ClickException):
        return exc.exit_code, f"atticsim: error: {one_line(exc.format_message())}"
    if isinstance(exc, BrokenPipeError):  # the reader of our output went away (| head): nothing to say
        return 141, None
    if is_input_error(exc):
        return 2, f"atticsim: error: {one_line(str(exc))}"
    if isinstance(exc, OSError):
        where = exc.filename if exc.filename is not None else ""
        line = f"atticsim: error: {f'{where}: ' if where else ''}{exc.strerror or one_line(str(exc))}"
        return (2 if exc.errno in _PATH_ERRNOS else 1), line
    if isinstance(exc, MemoryError):
        return 1, ("atticsim: error: out of memory; run a shorter period, a longer simulation.output_step or "
                   "fewer study points")
    text = one_line(str(exc)) if str(exc) else ""
    return 1, (f"atticsim: internal error: {type(exc).__name__}{f': {text}' if text else ''} (a bug in atticsim, not "
               f"in your input; please report it with the command you ran; ATTICSIM_DEBUG=1 shows the traceback)")


class _Stopped(Exception):
    """Carries a KeyboardInterrupt (or InterruptedRun) past click, which would print a line of its own."""

    def __init__(self, interrupt: KeyboardInterrupt):
        super().__init__(str(interrupt))
        self.interrupt = interrupt

# The process ends without the interpreter's last collections over the whole heap (the libraries' objects and
# the run's): they took 0.4-0.6 s at the end of every run, measured, a fifth of a one-day run. Frozen objects
# are left to the operating system; every file is closed by then.
atexit.register(gc.freeze)


class AtticsimGroup(click.Group):
    """Runs a command with SIGTERM and SIGHUP handled like Ctrl-C and reports what escapes it in one line."""

    def invoke(self, ctx):
        try:
            return super().invoke(ctx)
        except KeyboardInterrupt as exc:  # the command's clean-up has run (its context is closed)
            raise _Stopped(exc) from None

    def main(self, args=None, prog_name=None, complete_var=None, standalone_mode=True, **extra):
        if not standalone_mode:
            return super().main(args, prog_name, complete_var, standalone_mode=False, **extra)
        with stop_signals():
            try:
                rv = super().main(args, prog_name, complete_var, standalone_mode=False, **extra)
            except SystemExit:
                raise
            except BaseException as exc:  # noqa: BLE001 - everything is reported, in one line
                code, line = report_failure(exc, self)
                if os.environ.get("ATTICSIM_DEBUG") and code not in (0, 2):
                    import traceback

                    traceback.print_exception(exc)
                if line:
                    try:
                        click.echo(line, err=code != 0)
                    except (OSError, ValueError):
                        pass
                sys.exit(code)
        sys.exit(rv if isinstance(rv, int) else 0)


@click.group(cls=AtticsimGroup, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="atticsim")
def cli():
    """Simulate an attic with a thermostat-switched ventilation fan.

    Temperatures over time, every fan start and stop at the moment it happens, and a season's
    figures (run hours, starts, kWh, ceiling heat gain with and without the fan).

    Bad input stops a command with one line (atticsim: error: ...) and exit status 2; a run stopped by
    Ctrl-C, SIGTERM or SIGHUP leaves nothing half-written.
    """


def _register():
    from atticsim.cli.compare import compare
    from atticsim.cli.designday import designday
    from atticsim.cli.fit import fit
    from atticsim.cli.placements import placements
    from atticsim.cli.run import run
    from atticsim.cli.sweep import sweep
    from atticsim.cli.thermostat import thermostat
    from atticsim.cli.validate import validate

    for command in (run, designday, thermostat, placements, sweep, compare):
        cli.add_command(command)
    cli.add_command(validate)
    cli.add_command(fit)


_register()


if __name__ == "__main__":
    cli()
