"""The validation cases' registry and runner.

A case is a small function registered with :func:`case`: it computes one figure with atticsim and returns it
beside the reference figure (a published value, a closed form worked by hand, a reference tool's result or a
field study's range). The decorator holds what does not change from run to run (group, name, source, unit,
tolerance, digits shown, inputs, the expected outcome and, for a known miss, why). The runner evaluates the
cases and hides nothing: an exception is a failed case carrying its message; a case whose reference tool is
missing raises :class:`NotRun` and is reported as not run, never as a pass.
"""

from __future__ import annotations

import importlib
import math
import time
from dataclasses import dataclass, field

#: The model parts, in the order the page lists them.
GROUPS = ("sun and sky", "roof and attic heat transfer", "airflow", "sensor", "circuit", "solver",
          "field comparisons")
#: Short prefixes of the case ids, one per group (S1, S2 ... for sun and sky).
PREFIX = dict(zip(GROUPS, ("S", "H", "A", "T", "C", "N", "F")))
#: The modules that register cases (imported on first use: each keeps its heavy imports inside its cases).
CASE_MODULES = ("sun_sky", "heat_transfer", "airflow", "sensor", "circuit", "solver", "timing", "field")

WITHIN, OUTSIDE, ERROR, NOT_RUN = "within", "outside", "error", "not run"


class NotRun(Exception):
    """Raised by a case whose reference cannot be computed here (e.g. ngspice is not installed)."""


@dataclass(frozen=True)
class Comparison:
    """What a case returns.

    Attributes
    ----------
    tool : float
        atticsim's figure [the case's unit].
    reference : float or tuple
        The reference figure, or a range ``(low, high)`` for a field study (either end may be None: open).
    note : str
        Anything the reader should know about this run (kept short; shown under the table).
    """

    tool: float
    reference: float | tuple
    note: str = ""


@dataclass(frozen=True)
class Case:
    """One registered validation case (see :func:`case` for the fields)."""

    key: str
    group: str
    name: str
    source: str
    unit: str
    tolerance: float
    kind: str
    digits: int
    inputs: str
    expected: str
    why: str
    func: object = field(repr=False, compare=False)
    order: int = 0

    @property
    def case_id(self) -> str:
        """Short id shown on the page, e.g. ``A3`` (group prefix and position in the group)."""
        return f"{PREFIX[self.group]}{self.order}"


_CASES: list[Case] = []


def case(*, group, name, source, unit, tolerance, digits, inputs, kind="abs", expected=WITHIN, why=""):
    """Register a validation case.

    Parameters
    ----------
    group : str
        One of :data:`GROUPS`.
    name : str
        What is compared, in a few words.
    source : str
        The reference, named as published (author, year, title or report number, chapter/table), or
        "worked by hand from ..." for a closed form, "ngspice (run here)" for a reference tool; "from memory"
        where a value is recalled.
    unit : str
        Unit of the tool's and the reference figure (plain text, e.g. ``degC``, ``W/m2K``, ``-``).
    tolerance : float
        Allowed difference: absolute in ``unit`` (``kind="abs"``), a fraction of the reference
        (``kind="rel"``), or a margin around a published range (``kind="range"``, usually 0).
    digits : int
        Decimals shown on the page (the staleness check compares values to these digits).
    inputs : str
        The inputs, and for whole runs the house and climate run (ours, and the study's where it differs).
    kind : {"abs", "rel", "range"}
    expected : {"within", "outside"}
        "outside" marks a known miss; ``why`` must then say why.
    why : str
        For a known miss, the reason (printed on the page).
    """
    if group not in GROUPS:
        raise ValueError(f"validation case {name!r}: group must be one of {', '.join(GROUPS)}")
    if kind not in ("abs", "rel", "range"):
        raise ValueError(f"validation case {name!r}: kind must be abs, rel or range")
    if expected not in (WITHIN, OUTSIDE) or (expected == OUTSIDE and not why):
        raise ValueError(f"validation case {name!r}: expected must be 'within', or 'outside' with a reason")

    def register(func):
        order = 1 + sum(c.group == group for c in _CASES)
        _CASES.append(Case(func.__name__, group, name, source, unit, float(tolerance), kind, int(digits), inputs,
                           expected, why, func, order))
        return func

    return register


def all_cases() -> list[Case]:
    """Every registered case, in page order (group, then registration order)."""
    for module in CASE_MODULES:
        importlib.import_module(f"atticsim.validation.{module}")
    keys = [c.key for c in _CASES]
    duplicated = {k for k in keys if keys.count(k) > 1}
    if duplicated:
        raise RuntimeError(f"validation cases registered twice: {', '.join(sorted(duplicated))}")
    return sorted(_CASES, key=lambda c: (GROUPS.index(c.group), c.order))


@dataclass
class CaseResult:
    """The outcome of one case.

    Attributes
    ----------
    status : {"within", "outside", "error", "not run"}
    tool, reference : float or None
        As returned (reference may be a range tuple).
    difference : float or None
        tool - reference (point), or the distance outside the range (signed, 0 inside) [unit].
    message : str
        The note returned by the case, or the error / reason it was not run.
    seconds : float
        Wall time of the case [s] (for the JSON and the terminal only; never on the page).
    """

    case: Case
    status: str
    tool: float | None = None
    reference: float | tuple | None = None
    difference: float | None = None
    message: str = ""
    seconds: float = 0.0

    @property
    def as_expected(self) -> bool:
        """True when the outcome is the one the page states (a not-run case is neither)."""
        return self.status == self.case.expected

    @property
    def unexpected(self) -> bool:
        """True for an error, or an outcome the case does not declare (a new miss, or a known miss that passes)."""
        return self.status != NOT_RUN and not self.as_expected


def _finite(x, what):
    x = float(x)
    if not math.isfinite(x):
        raise ValueError(f"{what} is not a finite number ({x})")
    return x


def compare(kind, tolerance, tool, reference):
    """(within, difference) of a tool figure against a reference point or range.

    Point: difference = tool - reference; within when |difference| <= tolerance (``abs``) or
    <= tolerance |reference| (``rel``). Range ``(low, high)``: difference = distance beyond the nearer end
    (negative below, positive above, 0 inside); within when |difference| <= tolerance.
    """
    if kind == "range":
        low, high = reference
        low = -math.inf if low is None else float(low)
        high = math.inf if high is None else float(high)
        diff = tool - high if tool > high else (tool - low if tool < low else 0.0)
        return abs(diff) <= tolerance, diff
    diff = tool - reference
    allowed = tolerance * abs(reference) if kind == "rel" else tolerance
    return abs(diff) <= allowed, diff


def run_case(c: Case) -> CaseResult:
    """Evaluate one case; never raises (an exception becomes an ``error`` result with its message)."""
    start = time.perf_counter()
    try:
        out = c.func()
        if not isinstance(out, Comparison):
            raise TypeError(f"case returned {type(out).__name__}, not a Comparison")
        tool = _finite(out.tool, "the tool's figure")
        if c.kind == "range":
            if not (isinstance(out.reference, tuple) and len(out.reference) == 2):
                raise TypeError("a range case must return reference=(low, high)")
            ref = tuple(None if v is None else _finite(v, "a range end") for v in out.reference)
        else:
            ref = _finite(out.reference, "the reference figure")
        ok, diff = compare(c.kind, c.tolerance, tool, ref)
        status = WITHIN if ok else OUTSIDE
        return CaseResult(c, status, tool, ref, diff, out.note, time.perf_counter() - start)
    except NotRun as exc:
        return CaseResult(c, NOT_RUN, message=str(exc), seconds=time.perf_counter() - start)
    except Exception as exc:  # a failed case carries its message; nothing is swallowed silently
        return CaseResult(c, ERROR, message=f"{type(exc).__name__}: {exc}", seconds=time.perf_counter() - start)


def run_cases(cases=None, progress=None) -> list[CaseResult]:
    """Run cases in page order.

    Parameters
    ----------
    cases : list of Case, optional
        Default: :func:`all_cases`.
    progress : callable, optional
        Called as ``progress(i, n, result)`` after each case.
    """
    cases = all_cases() if cases is None else cases
    results = []
    for i, c in enumerate(cases, 1):
        results.append(run_case(c))
        if progress is not None:
            progress(i, len(cases), results[-1])
    return results
