"""The terminal summary of a validation run."""

from __future__ import annotations

from atticsim.validation.page import counts, format_reference, headline
from atticsim.validation.registry import ERROR, GROUPS, NOT_RUN, OUTSIDE, WITHIN


def summary_text(results, seconds=None) -> str:
    """One screen: the headline, a line per model part, then known misses, cases not run and anything
    unexpected (a new miss, an error, or a known miss that no longer misses)."""
    n = counts(results)
    took = f" ({seconds:.1f} s)" if seconds is not None else ""
    lines = [f"atticsim validate{took}: {headline(results)}"]
    for g in GROUPS:
        members = [r for r in results if r.case.group == g]
        if not members:
            continue
        parts = [f"{sum(r.status == WITHIN for r in members)} within"]
        for status, word in ((OUTSIDE, "outside"), (NOT_RUN, "not run"), (ERROR, "error")):
            k = sum(r.status == status for r in members)
            if k:
                parts.append(f"{k} {word}")
        lines.append(f"  {g:<30} {', '.join(parts)}")

    def figure(r):
        c = r.case
        return f"{r.tool:.{c.digits}f} {c.unit} against {format_reference(r.reference, c.digits)} {c.unit}"

    known = [r for r in results if r.status == OUTSIDE and r.case.expected == OUTSIDE]
    if known:
        lines.append("known misses (the page says why):")
        lines += [f"  {r.case.case_id} {r.case.name}: {figure(r)}" for r in known]
    skipped = [r for r in results if r.status == NOT_RUN]
    if skipped:
        reasons = sorted({r.message for r in skipped})
        lines.append(f"not run: {', '.join(r.case.case_id for r in skipped)} ({'; '.join(reasons)})")
    odd = [r for r in results if r.unexpected]
    if odd:
        lines.append("UNEXPECTED (not as the page states):")
        for r in odd:
            what = r.message if r.status == ERROR else figure(r) + f", {r.status}"
            lines.append(f"  {r.case.case_id} {r.case.name}: {what}")
    if n["unexpected"] == 0:
        lines.append("every case came out as the page states")
    return "\n".join(lines)
