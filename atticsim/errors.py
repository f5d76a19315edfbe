"""The project's error types: what bad input raises, and how an error line is told from a bug.

Every refusal of input (a scenario key, a weather file, a study option, an output folder) is an
:class:`InputError`, a ``ValueError`` whose text is one line ``"<file or --option>: <key>: <reason>"``.
The command line prints it as ``atticsim: error: <line>`` and exits with status 2. Anything else that
escapes a command is a bug in atticsim (or a failure of the machine, such as a full disk) and is reported
as such, never as bad input.
"""

from __future__ import annotations


class InputError(ValueError):
    """Bad input; ``str(err)`` is one line naming the file or option, the key and the reason (a message given
    on several lines is joined into one)."""

    def __init__(self, *args):
        if len(args) == 1 and isinstance(args[0], str):
            args = (one_line(args[0], 1000),)
        super().__init__(*args)


class OutputError(InputError):
    """An output folder or file that cannot be claimed or written (exists, in use, not writable)."""


class WriteFailure(OSError):
    """Writing output failed for a reason of the machine (a full disk, a file-size limit, an I/O error): the
    ``errno`` is kept and ``strerror`` is one line naming the folder, the file and the reason."""


class InterruptedRun(KeyboardInterrupt):
    """The run was stopped by a signal (Ctrl-C, SIGTERM, SIGHUP); ``signum`` says which.

    A subclass of KeyboardInterrupt so that every clean-up written for Ctrl-C runs for the others too.
    """

    def __init__(self, signum: int, name: str):
        super().__init__(name)
        self.signum, self.name = signum, name


#: Packages whose ValueErrors are the solver's and the network's own consistency checks (a failure there on
#: validated input is a bug to report, not bad input).
_INTERNAL = ("hybrid", "network")


def _innermost_file(exc: BaseException) -> str | None:
    tb, last = exc.__traceback__, None
    while tb is not None:
        last, tb = tb, tb.tb_next
    return None if last is None else last.tb_frame.f_code.co_filename


def raised_by_atticsim(exc: BaseException) -> bool:
    """True when the innermost frame of the exception's traceback is atticsim's own code."""
    import os

    where = _innermost_file(exc)
    package = os.path.dirname(os.path.abspath(__file__))
    return where is not None and os.path.abspath(where).startswith(package + os.sep)


def is_input_error(exc: BaseException) -> bool:
    """Bad input rather than a bug: the project's InputError, or a ValueError atticsim raised itself with its
    one-line refusal (modules written before InputError: circuit, airflow, forcing, sensor...). A ValueError
    from a library (numpy, pandas), or from the solvers' and the network's own checks, is a bug."""
    import os

    if isinstance(exc, InputError):
        return True
    if not (isinstance(exc, ValueError) and raised_by_atticsim(exc)):
        return False
    package = os.path.dirname(os.path.abspath(__file__))
    inner = os.path.relpath(os.path.abspath(_innermost_file(exc)), package).split(os.sep)[0]
    return inner not in _INTERNAL


def one_line(text: str, limit: int = 400) -> str:
    """``text`` on one line (line breaks and runs of blanks become single spaces), cut at ``limit`` characters."""
    flat = " ".join(str(text).split())
    return flat if len(flat) <= limit else flat[:limit - 3] + "..."


def short_repr(value, limit: int = 60) -> str:
    """``repr(value)`` cut to ``limit`` characters (a huge or deeply nested value in a message stays short)."""
    try:
        text = repr(value)
    except (RecursionError, ValueError):  # a nested value too deep to print, an int too long to print
        text = f"<{type(value).__name__}>"
    return text if len(text) <= limit else text[:limit - 3] + "..."
