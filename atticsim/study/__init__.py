"""Tuning studies: vary scenario keys over a grid or a Latin-hypercube sample, run every point, and find the
settings that keep the fan from short-cycling at the least attic heat.

Python API (the ``atticsim sweep`` command only wraps it)::

    from atticsim.study import Study, parse_vary, run_study
    study = Study(axes=[parse_vary("thermostat.on=36:44:2degC"), parse_vary("thermostat.hysteresis=1:5:1K")],
                  start="2025-07-01", end="2025-07-07")
    outcome = run_study(study, "hysteresis_study", workers=2)
    outcome.table, outcome.recommendation

Modules: :mod:`~atticsim.study.spec` (axes, sampling, study files), :mod:`~atticsim.study.runner`
(execution, journal, resume), :mod:`~atticsim.study.analysis` (degree-hours, starts per hour, Pareto set,
recommendation), :mod:`~atticsim.study.plots` (the short-cycling map).
"""

from atticsim.study.analysis import (DEFAULT_COOLING_COP, RULE, degree_hours_above, max_starts_in_window,
                                     net_benefit_kwh, pareto_mask, recommend)
from atticsim.study.runner import StudyOutcome, plan_study, run_point, run_study
from atticsim.study.spec import (DEFAULT_COMFORT_LIMIT_C, DEFAULT_STARTS_PER_HOUR, Axis, Study, StudyError,
                                 grid_points, latin_hypercube, lhs_points, load_study_file, parse_vary)

__all__ = [
    "Axis", "Study", "StudyError", "StudyOutcome", "parse_vary", "load_study_file", "grid_points", "lhs_points",
    "latin_hypercube", "plan_study", "run_point", "run_study", "degree_hours_above", "max_starts_in_window",
    "net_benefit_kwh", "pareto_mask", "recommend", "RULE", "DEFAULT_STARTS_PER_HOUR", "DEFAULT_COMFORT_LIMIT_C",
    "DEFAULT_COOLING_COP",
]
