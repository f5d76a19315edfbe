"""The validation page (Markdown) and its JSON, and the comparison that keeps the repository's page current.

The page carries no timestamps, run times or machine details: run twice, on any machine, it reads the same
except for the last printed digit of a value that lies on a rounding boundary (:func:`page_differences`
allows that one unit).
"""

from __future__ import annotations

import math
import re

from atticsim.validation.registry import ERROR, GROUPS, NOT_RUN, OUTSIDE, WITHIN

TITLE = "# atticsim validation"
GENERATED = "<!-- written by `atticsim validate`; regenerate it, do not edit it by hand -->"
SCOPE = (
    "Out of scope: whole-building method-of-test suites (standard sets of test buildings run by many "
    "programs and compared with each other) are not run here. atticsim models one attic over one ceiling, "
    "not a whole building, so such suites' test buildings do not map onto its inputs; the cases below check "
    "its parts and whole runs against published references instead.")
HEADER = ("| id | part | case | atticsim | reference | difference | tolerance | unit | result | source |",
          "|---|---|---|---|---|---|---|---|---|---|")


def _number(x, digits):
    """x with ``digits`` decimals; never '-0.00'."""
    text = f"{x:.{digits}f}"
    return text[1:] if text.startswith("-") and float(text) == 0.0 else text


def format_reference(ref, digits):
    """A point, or a range 'low to high' / '<= high' / '>= low'."""
    if ref is None:
        return ""
    if isinstance(ref, tuple):
        low, high = ref
        if low is None:
            return f"<= {_number(high, digits)}"
        if high is None:
            return f">= {_number(low, digits)}"
        return f"{_number(low, digits)} to {_number(high, digits)}"
    return _number(ref, digits)


def format_tolerance(c):
    """The tolerance as the page states it."""
    if c.kind == "rel":
        return f"±{c.tolerance * 100:g} %"
    if c.kind == "range":
        return "in range" if c.tolerance == 0 else f"in range ±{c.tolerance:g}"
    return f"±{c.tolerance:g}"


def format_result(r):
    """The result cell: within / outside (known miss) / outside / error / not run."""
    if r.status == OUTSIDE:
        return "**outside** (known miss)" if r.case.expected == OUTSIDE else "**outside** (unexpected)"
    if r.status == WITHIN and r.case.expected == OUTSIDE:
        return "within (a known miss no longer misses)"
    return r.status


def counts(results) -> dict:
    """Numbers of cases by outcome."""
    return {
        "total": len(results),
        "within": sum(r.status == WITHIN for r in results),
        "known_misses": sum(r.status == OUTSIDE and r.case.expected == OUTSIDE for r in results),
        "not_run": sum(r.status == NOT_RUN for r in results),
        "unexpected": sum(r.unexpected for r in results),
    }


def headline(results) -> str:
    """One sentence: how many cases, how many within tolerance, known misses, not run, unexpected."""
    n = counts(results)
    text = f"{n['total']} cases: {n['within']} within tolerance"
    if n["known_misses"]:
        text += f", {n['known_misses']} known miss{'es' if n['known_misses'] > 1 else ''} (explained below)"
    if n["not_run"]:
        text += f", {n['not_run']} not run"
    if n["unexpected"]:
        text += f", {n['unexpected']} unexpected (see below)"
    return text + "."


def _row(r, first_of_group):
    c = r.case
    ran = r.status in (WITHIN, OUTSIDE)
    cells = [c.case_id, f"**{c.group}**" if first_of_group else "", c.name,
             _number(r.tool, c.digits) if ran else "", format_reference(r.reference, c.digits) if ran else "",
             _number(r.difference, c.digits) if ran else "", format_tolerance(c), c.unit, format_result(r),
             c.source]
    return "| " + " | ".join(cell.replace("|", "/") for cell in cells) + " |"


def render_markdown(results) -> str:
    """The validation page for a list of :class:`~atticsim.validation.registry.CaseResult` (page order)."""
    from atticsim.report.cautions import ALL as CAUTIONS

    lines = [TITLE, "", GENERATED, "",
             "How atticsim's figures compare with the outside world: published test cases, handbook formulas "
             "worked by hand, reference tools (ngspice for the thermostat circuit, the LSODA reference solver "
             "for the fast solver) and field studies. Each row is one case: atticsim's figure, the reference "
             "figure, their difference (atticsim minus reference; for a published range, how far outside it), "
             "the tolerance allowed and where the reference comes from. The same cases run as tests "
             "(`pytest tests/validation/test_validation.py`). Houses, sites and weather marked fictional or invented are "
             "ours, for the checks; the typical-year files are pvlib's (real climates).", "",
             f"**{headline(results)}**", "", SCOPE, "", *HEADER]
    group = None
    for r in results:
        lines.append(_row(r, r.case.group != group))
        group = r.case.group
    misses = [r for r in results if r.status == OUTSIDE and r.case.expected == OUTSIDE]
    if misses:
        lines += ["", "## Where atticsim is outside a tolerance", ""]
        reasons = list(dict.fromkeys(r.case.why for r in misses))  # each reason once, in page order
        for why in reasons:
            for r in (r for r in misses if r.case.why == why):
                c = r.case
                lines.append(f"- **{c.case_id} {c.name}**: atticsim {_number(r.tool, c.digits)} {c.unit} against "
                             f"{format_reference(r.reference, c.digits)} {c.unit}.")
            lines += ["", f"Why: {why}.", ""]
    odd = [r for r in results if r.unexpected or r.status == NOT_RUN]
    if odd:
        lines += ["", "## Not run, or not as this page expects", ""]
        for r in odd:
            c = r.case
            what = {NOT_RUN: "not run", ERROR: "error"}.get(r.status, format_result(r))
            lines.append(f"- **{c.case_id} {c.name}**: {what}" + (f": {r.message}" if r.message else ""))
    lines += ["", "## The cases", ""]
    for g in GROUPS:
        members = [r for r in results if r.case.group == g]
        if not members:
            continue
        lines += [f"### {g[0].upper()}{g[1:]}", ""]
        for r in members:
            c = r.case
            text = f"- **{c.case_id} {c.name}.** {c.inputs[:1].upper()}{c.inputs[1:]}."
            if r.message and r.status in (WITHIN, OUTSIDE):
                text += f" This run: {r.message}."
            lines.append(text)
        lines.append("")
    lines += ["## Cautions", ""] + [f"- {c}" for c in CAUTIONS] + [""]
    return "\n".join(lines)


def _cells(r):
    """One case's cells for the HTML table (plain text: the page escapes them)."""
    c = r.case
    ran = r.status in (WITHIN, OUTSIDE)
    return [c.case_id, c.name, _number(r.tool, c.digits) if ran else "",
            format_reference(r.reference, c.digits) if ran else "", _number(r.difference, c.digits) if ran else "",
            format_tolerance(c), c.unit, format_result(r).replace("**", ""), c.source]


def render_html(results, command: str | None = None) -> str:
    """The validation page as one self-contained HTML report (the same content as :func:`render_markdown`):
    the headline, a table for each model part, the known misses and why, the inputs of every case, the
    cautions and the version."""
    from atticsim.report.cautions import ALL as CAUTIONS
    from atticsim.report.page import Page, answers, box, bullets, key_values, paragraph, table
    from atticsim.version import __version__

    n = counts(results)
    page = Page("atticsim validation", headline(results))
    page.section("answers", "How close atticsim comes", answers([
        ("cases", str(n["total"]), False), ("within tolerance", str(n["within"]), False),
        ("known misses", str(n["known_misses"]), False), ("unexpected", str(n["unexpected"]), n["unexpected"] > 0)]),
        paragraph("Each row is one case: atticsim's figure, the reference figure, their difference (atticsim minus "
                  "reference; for a published range, how far outside it), the tolerance allowed and the source. "
                  "Houses, sites and weather marked fictional or invented are ours, for the checks; the typical-year "
                  "files are pvlib's (real climates)."), paragraph(SCOPE, "muted"))
    head = ["id", "case", "atticsim", "reference", "difference", "tolerance", "unit", "result", "source"]
    for g in GROUPS:
        members = [r for r in results if r.case.group == g]
        if members:
            page.section(f"part-{GROUPS.index(g)}", f"{g[0].upper()}{g[1:]}",
                         table(head, [_cells(r) for r in members], numeric={2, 3, 4}, cls="wide small"))
    misses = [r for r in results if r.status == OUTSIDE and r.case.expected == OUTSIDE]
    odd = [r for r in results if r.unexpected or r.status in (NOT_RUN, ERROR)]
    notes = [f"{r.case.case_id} {r.case.name}: outside its tolerance. Why: {r.case.why}." for r in misses]
    notes += [f"{r.case.case_id} {r.case.name}: {format_result(r).replace('**', '')}"
              + (f": {r.message}" if r.message else "") for r in odd]
    page.section("misses", "Known misses, and anything not as expected",
                 bullets(notes) if notes else paragraph("Every case came out as the page states."))
    page.section("cases", "What each case computes", bullets(
        [f"{r.case.case_id} {r.case.name}. {r.case.inputs[:1].upper()}{r.case.inputs[1:]}." for r in results]))
    page.section("cautions", "Cautions", box("Safety", bullets(list(CAUTIONS)), "warn"))
    rows = [("atticsim version", __version__)] + ([("command", command)] if command else [])
    page.section("trace", "Version", key_values(rows, "mono small"))
    return page.html()


def results_json(results) -> dict:
    """Everything the page says, and each case's wall time, as plain data."""
    from atticsim.version import __version__

    cases = []
    for r in results:
        c = r.case
        cases.append({
            "id": c.case_id, "key": c.key, "group": c.group, "name": c.name, "source": c.source, "unit": c.unit,
            "tolerance": c.tolerance, "tolerance_kind": c.kind, "digits": c.digits, "inputs": c.inputs,
            "expected": c.expected, "why": c.why or None, "status": r.status, "tool": r.tool,
            "reference": list(r.reference) if isinstance(r.reference, tuple) else r.reference,
            "difference": r.difference, "message": r.message or None, "seconds": round(r.seconds, 3),
        })
    return {"atticsim_version": __version__, "headline": headline(results), **counts(results), "cases": cases}


_NUMBER = re.compile(r"[-+]?\d+(?:\.(\d+))?(?:[eE][-+]?\d+)?")


def _close(a: str, b: str) -> bool:
    """Two printed numbers equal, or one unit apart in the last decimal the page printed (a rounding boundary
    can fall either way on another CPU)."""
    if a == b:
        return True
    m = _NUMBER.fullmatch(a)
    if m is None or "e" in a.lower() or "e" in b.lower():
        return False
    decimals = len(m.group(1) or "")
    return math.isclose(float(a), float(b), rel_tol=0.0, abs_tol=1.5 * 10.0 ** -decimals)


def line_matches(old: str, new: str) -> bool:
    """The same words, and numbers equal to the last printed digit (one unit of slack)."""
    if _NUMBER.sub("#", old) != _NUMBER.sub("#", new):
        return False
    return all(_close(a.group(0), b.group(0)) for a, b in zip(_NUMBER.finditer(old), _NUMBER.finditer(new)))


def page_differences(old: str, new: str, skip_ids=()) -> list[str]:
    """Lines where a stored page and a freshly rendered one disagree (empty when the page is current).

    Parameters
    ----------
    old, new : str
        The stored page and the page rendered from this run.
    skip_ids : iterable of str
        Case ids not run here (their lines, the headline and the list of cases not run are not compared).
    """
    skip = tuple(skip_ids)

    def keep(line):
        if not line.strip():
            return False  # blank lines carry nothing
        if not skip:
            return True
        if (line.startswith("**") and "cases:" in line) or line.startswith("## Not run"):
            return False
        return not any(line.startswith(f"| {i} |") or line.startswith(f"- **{i} ") for i in skip)

    a = [ln for ln in old.splitlines() if keep(ln)]
    b = [ln for ln in new.splitlines() if keep(ln)]
    diffs = []
    for i in range(max(len(a), len(b))):
        la = a[i] if i < len(a) else "<missing>"
        lb = b[i] if i < len(b) else "<missing>"
        if not line_matches(la, lb):
            diffs.append(f"page: {la}\nrun:  {lb}")
            if len(diffs) >= 10:
                break
    return diffs
