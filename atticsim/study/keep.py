"""A study's point run again in full: every file ``atticsim run`` writes, in a folder of the study's own
(``DIR/point-N``), so that ``atticsim compare`` can set the recommended point beside its runner-up or any
other point."""

from __future__ import annotations

import math

from atticsim.study.spec import Study, StudyError

#: The points a study names by its rule (recommendation.json's ``point`` and ``runner_up``).
KEEP_WORDS = {"recommended": "point", "runner-up": "runner_up"}


def parse_keep(text: str) -> int | str:
    """A ``--keep-point`` value: a point number (as in points.csv) or one of :data:`KEEP_WORDS`."""
    word = str(text).strip().lower()
    if word in KEEP_WORDS:
        return word
    if word.isdigit():
        return int(word)
    raise StudyError(f"--keep-point: {text!r} is not a point number (as in points.csv), recommended or runner-up")


def study_size(study: Study) -> int:
    """How many points the study has (a grid's product of its axes, or the Latin hypercube's count)."""
    return study.points if study.sample == "lhs" else math.prod(len(ax.values) for ax in study.axes)


def check_keeps(study: Study, keeps: list) -> None:
    """Refuse a point number the study does not have, before the study runs."""
    size = study_size(study)
    for k in keeps:
        if isinstance(k, int) and not 0 <= k < size:
            raise StudyError(f"--keep-point: point {k} is not in the study (its points are 0 to {size - 1})")


def point_number(keep: int | str, recommendation: dict) -> int | None:
    """The point number a keep names; None when the study's rule chose no such point."""
    if not isinstance(keep, str):
        return keep
    named = recommendation.get(KEEP_WORDS[keep])
    return named.get("point") if isinstance(named, dict) else named  # the runner-up is held with its figures


def planned_points(study: Study, numbers: list[int]) -> dict:
    """The validated points (:class:`atticsim.study.runner.PlannedPoint`) of those numbers, by number."""
    from atticsim.study.runner import plan_study

    plan = plan_study(study)
    return {n: plan.points[n] for n in numbers}
