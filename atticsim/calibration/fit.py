"""Fit a scenario's uncertain keys to a measured attic.

The model runs over the logged period (its own spin-up first), with the fan following the log when the log
has the fan's state, and its temperatures are read at the log's stamps; scipy's ``least_squares`` (trust-region
reflective, within each key's bounds) adjusts the chosen keys to minimise the sum of squared differences
between the model and the readings, the first day(s) of the log left out while the model settles from its
spin-up. The Jacobian's columns are finite differences run in parallel processes. At the solution the
Jacobian is taken again by central differences for the intervals (:mod:`atticsim.calibration.stats`).

Every run is a whole simulation (:func:`atticsim.pipeline.run_raw`), so a fit of 3-4 keys to ten days takes
tens to hundreds of runs of a fraction of a second each.
"""

from __future__ import annotations

import concurrent.futures as cf
import math
import os
import sys
import time
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from atticsim.calibration.errors import CalibrationError
from atticsim.calibration.keys import fit_keys, parse_bounds, raw_value, scenario_value
from atticsim.calibration import stats

#: The fit needs at least this many days of readings after the spin-up days it leaves out [d] (common
#: practice, no source: two daily cycles to tell the roof's sun from the air's exchange).
MIN_FIT_DAYS = 2.0
#: Finite-difference step on each key's unit scale (1 % of its range between the bounds).
FD_STEP = 0.01
#: Misfit given to a trial whose simulation fails [K] (steers the fit away from it).
FAILED_RUN_K = 100.0
#: A key that moves the model's readings by less than this over its whole range [K RMS] has no effect on them.
NO_EFFECT_K = 1e-3


def effect_k(jac: np.ndarray) -> np.ndarray:
    """Each key's effect on the readings: the RMS of its Jacobian column [K per unit of its range]."""
    return np.sqrt(np.mean(jac**2, axis=0)) if jac.shape[0] else np.zeros(jac.shape[1])


@dataclass
class FitProblem:
    """What every trial run needs (picklable: worker processes get one copy each).

    Attributes
    ----------
    data : dict
        The raw scenario (the TOML as read, with ``--set`` and the fit's output step applied).
    source, base_dir : str
        The scenario's name for messages and the folder its relative paths start from.
    weather : tuple
        (weather frame, metadata).
    start, end : str
        The period (ISO instants on the weather's clock): the log's first and last stamps.
    keys : list of FitKey
    columns : list of str
        The measured temperature columns compared with the model.
    seconds : numpy.ndarray
        The log's stamps [s from the period's start].
    measured : numpy.ndarray
        Readings [degC], shape (columns, stamps), NaN where missing.
    in_fit : numpy.ndarray of bool
        Stamps counted in the misfit (after the spin-up days).
    deck_plane : int
        The roof plane whose deck underside ``deck_c`` reads.
    fan_log : tuple or None
        (instants, states) the model's fan follows (:meth:`MeasuredLog.fan_switches`).
    """

    data: dict
    source: str
    base_dir: str | None
    weather: tuple
    start: str
    end: str
    keys: list
    columns: list
    seconds: np.ndarray
    measured: np.ndarray
    in_fit: np.ndarray
    deck_plane: int = 0
    fan_log: tuple | None = None

    def scenario(self, values):
        """The scenario with the keys at ``values`` [SI]."""
        from atticsim.scenario.load import apply_overrides, scenario_from_dict

        overrides = [k.override(v) for k, v in zip(self.keys, values)]
        base = Path(self.base_dir) if self.base_dir else None
        return scenario_from_dict(apply_overrides(self.data, overrides), self.source, base)

    def run(self, scenario, follow_log: bool = True):
        """One simulation of the period (no no-fan run); the fan follows the log when there is one."""
        from atticsim.hybrid.controller import LoggedFan
        from atticsim.pipeline import run_raw

        controller = LoggedFan.at_instants(*self.fan_log) if (follow_log and self.fan_log) else None
        return run_raw(scenario, self.weather, start=self.start, end=self.end, include_no_fan=False,
                       reuse_no_fan=True, controller=controller)

    def model(self, raw, columns=None) -> np.ndarray:
        """The model's value of each column [degC] at the log's stamps, shape (columns, stamps)."""
        return model_at(raw, columns or self.columns, self.seconds, self.deck_plane)

    def residuals(self, model: np.ndarray) -> np.ndarray:
        """Model minus readings [K] at the stamps in the fit where a reading exists, columns one after another."""
        diff = model - self.measured
        keep = self.in_fit[None, :] & np.isfinite(self.measured)
        return diff[keep]

    def residual_times(self) -> np.ndarray:
        """The stamp (index) of each residual of :meth:`residuals`."""
        keep = self.in_fit[None, :] & np.isfinite(self.measured)
        return np.nonzero(keep)[1]


def model_at(raw, columns, seconds, deck_plane: int = 0) -> np.ndarray:
    """A run's value of each measured column at instants [s from the period's start], shape (columns, instants):
    ``sensor_c`` the sensor node, ``attic_air_c`` the volume mean of the attic air, ``attic_upper_air_c`` and
    ``attic_lower_air_c`` the layers, ``deck_c`` the deck underside of plane ``deck_plane``, ``outdoor_c`` the
    weather's air (linear between the output rows)."""
    net, run = raw.network, raw.with_fan
    temps = run.y[:net.n_nodes]
    t = run.t - raw.period.t_start
    rows = []
    for col in columns:
        if col == "sensor_c":
            y = temps[net.index["sensor"]]
        elif col == "attic_air_c":
            y = net.mean_air(temps)
        elif col == "attic_upper_air_c":
            y = temps[net.i_upper]
        elif col == "attic_lower_air_c":
            y = temps[net.i_lower]
        elif col == "deck_c":
            y = deck_underside(raw, deck_plane)
        elif col == "outdoor_c":
            y = raw.forcing.sample(run.t)[0]
        else:
            raise KeyError(col)
        rows.append(np.interp(seconds, t, y))
    return np.array(rows)


def deck_underside(raw, plane: int) -> np.ndarray:
    """The deck underside temperature of one roof plane at a run's output rows [degC]."""
    from types import SimpleNamespace

    from atticsim.airflow.model import stack_states

    net, run = raw.network, raw.with_fan
    air = stack_states(run.air_runs, run.t.size)
    q = net.flows(run.y[:net.n_nodes], raw.forcing.sample(run.t), run.fan, SimpleNamespace(**air))
    return q["deck_underside"][plane]


# --- trial runs, here and in worker processes -------------------------------------------------------

_PROBLEM: FitProblem | None = None


def _init_worker(problem: FitProblem) -> None:
    global _PROBLEM
    _PROBLEM = problem


def trial_residuals(u) -> np.ndarray | None:
    """Residuals of the worker's problem with the keys at places ``u`` (top-level: what workers run); None when
    the simulation fails."""
    p = _PROBLEM
    try:
        values = [k.from_u(x) for k, x in zip(p.keys, u)]
        return p.residuals(p.model(p.run(p.scenario(values))))
    except Exception:  # a trial the model cannot run (an airflow balance with no root...): steered away from
        return None


def _executor(workers: int, problem: FitProblem):
    """A process pool whose workers hold the problem; forked when this process runs no other thread (they
    then inherit the compiled solver), as :func:`atticsim.study.runner.process_executor` decides."""
    import multiprocessing
    import threading

    methods = multiprocessing.get_all_start_methods()
    if sys.platform.startswith("linux") and "fork" in methods and threading.active_count() == 1:
        method = "fork"
    else:
        method = "forkserver" if "forkserver" in methods else "spawn"
    return cf.ProcessPoolExecutor(max_workers=workers, mp_context=multiprocessing.get_context(method),
                                  initializer=_init_pool_worker, initargs=(os.getpid(), problem))


def _init_pool_worker(parent_pid, problem):
    """A worker that ends with this process (:func:`atticsim.processes.worker_init`) and holds the problem."""
    from atticsim.processes import worker_init

    worker_init(parent_pid)
    _init_worker(problem)


class Evaluator:
    """Runs trials in this process or on a pool, counts them and reports progress."""

    def __init__(self, problem: FitProblem, workers: int, progress=None):
        self.problem, self.workers, self.progress = problem, workers, progress
        self.runs = self.failed = 0
        self.pool = _executor(workers, problem) if workers > 1 else None
        self._last = (None, None)

    def _count(self, results):
        self.runs += len(results)
        self.failed += sum(r is None for r in results)
        n = int(self.problem.residual_times().size)
        out = [np.full(n, FAILED_RUN_K) if r is None else r for r in results]
        if self.progress is not None:
            self.progress.runs(self.runs)
        return out

    def many(self, points) -> list[np.ndarray]:
        """Residuals at several places (in parallel on the pool)."""
        points = [np.asarray(u, float) for u in points]
        if self.pool is None:
            _init_worker(self.problem)
            return self._count([trial_residuals(u) for u in points])
        return self._count(list(self.pool.map(trial_residuals, points)))

    def one(self, u) -> np.ndarray:
        """Residuals at one place, in this process (kept for the Jacobian taken there next)."""
        u = np.asarray(u, float)
        if self._last[0] is not None and np.array_equal(self._last[0], u):
            return self._last[1]
        _init_worker(self.problem)
        r = self._count([trial_residuals(u)])[0]
        self._last = (u.copy(), r)
        return r

    def jacobian(self, u, central: bool = False) -> np.ndarray:
        """Finite-difference Jacobian [K per unit of u], its columns run in parallel; one-sided steps point away
        from a bound; ``central`` takes both sides where the bounds allow."""
        u = np.asarray(u, float)
        points, plan = [], []
        for i in range(u.size):
            up, down = u[i] + FD_STEP <= 1.0, u[i] - FD_STEP >= 0.0
            sides = [s for s, ok in ((1.0, up), (-1.0, down)) if ok] if central else [1.0 if up else -1.0]
            for s in sides:
                x = u.copy()
                x[i] += s * FD_STEP
                points.append(x)
            plan.append(sides)
        values = self.many(points)
        base = self.one(u) if any(len(s) == 1 for s in plan) else None
        cols, k = [], 0
        for sides in plan:
            if len(sides) == 2:
                cols.append((values[k] - values[k + 1]) / (2.0 * FD_STEP))
            else:
                cols.append((values[k] - base) / (sides[0] * FD_STEP))
            k += len(sides)
        return np.column_stack(cols)

    def close(self):
        if self.pool is not None:
            self.pool.shutdown(wait=True)
            self.pool = None


class FitProgress:
    """The fit's progress on stderr: updated in place on a terminal, a line per iteration otherwise (the way
    the sweep's progress behaves, :class:`atticsim.study.runner.Progress`)."""

    def __init__(self, stream, workers: int):
        self.stream, self.workers = stream, workers
        self.tty = bool(stream is not None and getattr(stream, "isatty", lambda: False)())
        self.t0 = time.perf_counter()
        self.stage, self.n_runs, self.rms, self.first_rms = "start", 0, None, None

    def line(self) -> str:
        from atticsim.progress import hms

        rms = "" if self.rms is None else f", misfit {self.rms:.3f} K RMS (start {self.first_rms:.3f} K)"
        where = f"{self.workers} processes" if self.workers > 1 else "this process"
        return f"fit: {self.stage}, {self.n_runs} runs on {where}{rms}, elapsed {hms(time.perf_counter() - self.t0)}"

    def _emit(self):
        if self.stream is None:
            return
        if self.tty:
            self.stream.write("\r" + self.line().ljust(100))
        else:
            self.stream.write(self.line() + "\n")
        self.stream.flush()

    def runs(self, n: int) -> None:
        self.n_runs = n
        if self.tty:
            self._emit()

    def step(self, stage: str, rms: float | None = None, minor: bool = False) -> None:
        """A new stage; ``minor`` stages (a Jacobian within an iteration) print only on a terminal."""
        self.stage = stage
        if rms is not None:
            self.rms = rms
            self.first_rms = rms if self.first_rms is None else self.first_rms
        if self.tty or not minor:
            self._emit()

    def close(self) -> None:
        if self.stream is not None and self.tty:
            self.stream.write("\n")
            self.stream.flush()


def _rms(r: np.ndarray) -> float:
    return float(np.sqrt(np.mean(r**2))) if r.size else float("nan")


def least_squares_fit(ev: Evaluator, u0: np.ndarray, max_iterations: int, progress=None):
    """scipy's trust-region reflective least squares on the unit box; the residuals and Jacobians from ``ev``.

    Returns
    -------
    scipy.optimize.OptimizeResult
    """
    from scipy.optimize import least_squares

    counter = {"it": 0}

    def fun(u):
        r = ev.one(u)
        counter["it"] += 1
        if progress is not None:
            progress.step(f"trial {counter['it']}", _rms(r))
        return r

    def jac(u):
        if progress is not None:
            progress.step(f"trial {counter['it']}: Jacobian ({u.size} columns)", minor=True)
        return ev.jacobian(u)

    return least_squares(fun, u0, jac=jac, bounds=(0.0, 1.0), method="trf", x_scale=1.0, ftol=1e-6, xtol=1e-4,
                         gtol=1e-8, max_nfev=max_iterations)


# --- the whole fit ----------------------------------------------------------------------------------

@dataclass
class FitResult:
    """A finished fit: the values, their intervals and correlations, the goodness of fit and what to show.

    ``fitted``, ``start_values``, ``interval_95`` are by key in SI; ``series`` holds, at every stamp of the
    log, the readings (``attic_air_c``...), the model at the start values (``attic_air_start_c``) and at the
    fitted values (``attic_air_model_c``), the outdoor air (``outdoor_c`` logged, ``outdoor_weather_c``), the fan
    (``fan_on``, the log's or the model's) and ``in_fit``.
    """

    problem: FitProblem
    log: object
    scenario: object  # the calibrated scenario (the fitted values in it)
    keys: list
    start_values: dict
    fitted: dict
    interval_95: dict
    interval_plain_95: dict
    std_unit: dict
    effective_samples: dict
    correlation: np.ndarray
    columns: dict
    rmse_k: float
    rmse_start_k: float
    bias_k: float
    noise_k: float
    worst_hour: tuple
    trend_k_per_day: float
    clock_lag_s: float
    verdict: str
    flags: dict
    warnings: list
    notes: list
    series: pd.DataFrame
    runs: int
    iterations: int
    wall_s: float
    workers: int
    weather_text: str
    weather_figures: dict = field(default_factory=dict)
    switching: dict | None = None
    fitted_rows: int = 0
    spinup_days: float = 1.0
    error_model: dict = field(default_factory=dict)
    start_scenario: object = None  # the scenario as given (its own values)
    unit_place: np.ndarray | None = None   # the solution on the keys' unit scales
    jacobian: np.ndarray | None = None     # residuals' Jacobian there [K per unit], central differences
    residuals: np.ndarray | None = None    # model minus readings at the solution [K]

    def summary(self) -> dict:
        """The fit as JSON-friendly data (what ``fit.json`` holds)."""
        keys = [k.key for k in self.keys]
        return {
            "fitted": dict(self.fitted), "interval_95": {k: list(v) for k, v in self.interval_95.items()},
            "rmse_k": self.rmse_k, "bias_k": self.bias_k, "rmse_start_k": self.rmse_start_k,
            "verdict": self.verdict, "start_values": dict(self.start_values),
            "bounds": {k.key: [k.low, k.high] for k in self.keys},
            "scale": {k.key: k.scale for k in self.keys},
            "interval_95_white_noise": {k: list(v) for k, v in self.interval_plain_95.items()},
            "effective_samples": dict(self.effective_samples), "error_model": dict(self.error_model),
            "correlation": {a: {b: float(self.correlation[i, j]) for j, b in enumerate(keys)}
                            for i, a in enumerate(keys)},
            "flags": {k: list(v) for k, v in self.flags.items()},
            "columns": self.columns, "logger_noise_k": self.noise_k,
            "worst_hour": {"start": self.worst_hour[0].isoformat() if self.worst_hour[0] is not None else None,
                           "mean_misfit_k": self.worst_hour[1]},
            "trend_k_per_day": self.trend_k_per_day, "clock_lag_min": self.clock_lag_s / 60.0,
            "fitted_readings": self.fitted_rows, "spinup_days": self.spinup_days,
            "period_start": self.problem.start, "period_end": self.problem.end,
            "fitted_from": self.series.index[self.series["in_fit"].to_numpy()][0].isoformat()
            if self.series["in_fit"].any() else None,
            "measured_file": self.log.path, "fan_follows_log": self.problem.fan_log is not None,
            "weather": self.weather_text, **self.weather_figures,
            "switching": self.switching, "runs": self.runs, "iterations": self.iterations,
            "wall_s": self.wall_s, "workers": self.workers,
            "warnings": list(self.warnings), "notes": list(self.notes),
        }


def scenario_data(path, overrides) -> tuple[dict, str, str | None]:
    """(raw scenario dict with ``--set`` applied, its name for messages, its folder)."""
    import tomllib
    from importlib import resources

    from atticsim.scenario.load import DEMO_NAME, apply_overrides, read_toml

    if path is None:
        data = tomllib.loads(resources.files("atticsim.data").joinpath("demo_house.toml").read_text())
        source, base = DEMO_NAME, None
    else:
        data, source, base = read_toml(Path(path)), str(path), str(Path(path).resolve().parent)
    if overrides:
        data = apply_overrides(data, list(overrides))
        source = f"{source} (with --set)"
    return data, source, base


def _trial_value(data, source, base):
    """trial(key, text) -> the SI value the scenario takes for ``key = "text"`` (a value in any unit the key
    accepts)."""
    from atticsim.scenario.load import ScenarioError, apply_overrides, scenario_from_dict

    def trial(key, text):
        try:
            sc = scenario_from_dict(apply_overrides(data, [f'{key}="{text}"']), source,
                                    Path(base) if base else None)
        except ScenarioError as exc:
            raise CalibrationError("--bounds", key, f"{text!r}: {exc.reason}") from None
        return float(scenario_value(sc, key))

    return trial


def _deck_plane(scenario, name, log) -> int:
    names = [p.name for p in scenario.roof.planes]
    if name is None:
        return 0
    if name not in names:
        raise CalibrationError("--deck-plane", name, f"no such roof plane (the scenario's: {', '.join(names)})")
    if "deck_c" not in log.frame:
        raise CalibrationError("--deck-plane", name, f"{log.path} has no deck_c (or deck_f) column")
    return names.index(name)


def build_problem(scenario_path, overrides, log_path, keys, *, bounds=(), weather=None, utc_offset=None,
                  spinup_days=1.0, deck_plane=None, max_gap_s=3600.0):
    """Read and check everything a fit needs before it runs anything.

    Returns
    -------
    (FitProblem, MeasuredLog, Scenario, list of str, list of str, str)
        The problem, the log, the scenario at its start values, warnings, notes, and the weather's description.
    """
    from atticsim.calibration.measured import read_measured
    from atticsim.calibration.weather import (FROM_LOG, check_coverage, load_fit_weather, weather_checks,
                                              weather_from_log)
    from atticsim.scenario.load import scenario_from_dict

    data, source, base = scenario_data(scenario_path, overrides)
    scenario = scenario_from_dict(data, source, Path(base) if base else None)
    if not (math.isfinite(spinup_days) and spinup_days >= 0):
        raise CalibrationError("--spinup", str(spinup_days), "must be 0 days or more")
    peek = None
    if weather != FROM_LOG:
        year = _first_year(log_path)
        peek = load_fit_weather(weather, scenario, year)
        offset = float(peek[1].utc_offset)
    else:
        offset = float(scenario.site.utc_offset)
    log = read_measured(log_path, utc_offset=utc_offset, weather_utc_offset=offset, max_gap_s=max_gap_s)
    if log.fan is not None and log.fan.any() and not scenario.fan.enabled:
        raise CalibrationError(log.path, "fan_on", "the log has the fan running but the scenario's fan.enabled is "
                               "false: pass --set fan.enabled=true (and the fan's flow)")
    frame, meta = peek if peek is not None else weather_from_log(log, scenario)
    check_coverage(frame, meta, log, weather)
    if log.days - spinup_days < MIN_FIT_DAYS:
        raise CalibrationError(log.path, "time", f"the log covers {log.days:.2f} days; the fit needs at least "
                               f"{MIN_FIT_DAYS:g} days after the {spinup_days:g} day(s) of spin-up it leaves out "
                               f"(--spinup)")
    step = float(min(max(round(log.step_s), 60.0), 300.0))
    data = {**data, "simulation": {**data.get("simulation", {}), "output_step": step}}
    values = {k: scenario_value(scenario, k) for k in keys}
    parsed = parse_bounds(bounds, values, _trial_value(data, source, base))
    fkeys, notes = fit_keys(scenario, data, list(keys), parsed)
    warnings, figures = weather_checks(frame, meta, log)
    columns = log.temperature_columns
    seconds = (log.frame.index - log.start).total_seconds().to_numpy()
    fan = log.fan_switches()
    problem = FitProblem(data, source, base, (frame, meta), log.start.isoformat(), log.end.isoformat(), fkeys,
                         columns, seconds, log.frame[columns].to_numpy().T.copy(),
                         seconds >= spinup_days * 86400.0 - 1e-6, _deck_plane(scenario, deck_plane, log), fan)
    notes = list(log.notes) + notes + list(getattr(meta, "notes", []))
    if weather == FROM_LOG:
        text = "the log's outdoor readings with a clear sky (--weather log)"
    else:
        given = raw_value(data, "weather.file") or scenario.weather.file
        text = weather if weather else f"{given} (the scenario's)"
    return problem, log, scenario, warnings, notes, text, figures


def _first_year(log_path) -> int:
    """The year of the log's first stamp (from the file's first data row; for laying a typical year on it)."""
    import csv
    import re

    try:
        lines = [ln for ln in Path(log_path).read_text(encoding="utf-8-sig").splitlines()
                 if ln.strip() and not ln.strip().startswith("#")]
        rows = list(csv.reader(lines[:2]))
        m = re.match(r"^\s*(\d{4})-", rows[1][[h.strip() for h in rows[0]].index("time")])
        if m:
            return int(m.group(1))
    except (OSError, UnicodeDecodeError, IndexError, ValueError):
        pass
    return 2025  # unreadable here: read_measured says why next


def fit_measured(scenario_path, overrides, log_path, keys, *, bounds=(), weather=None, utc_offset=None,
                 spinup_days=1.0, deck_plane=None, max_gap_s=3600.0, workers=None, progress=None,
                 max_iterations=40) -> FitResult:
    """Fit scenario keys to a logger file.

    Parameters
    ----------
    scenario_path : str or None
        Scenario file (None: the built-in demo house).
    overrides : sequence of str
        ``--set`` overrides (applied first; the start values come from them).
    log_path : str
        The logger file (:mod:`atticsim.calibration.measured`).
    keys : sequence of str
        Dotted scenario keys to fit (:data:`atticsim.calibration.keys.DEFAULT_KEYS` have default bounds).
    bounds : sequence of str
        ``KEY=LOW:HIGH`` texts (values with units, or ``x0.5`` times the scenario's value).
    weather : str, optional
        A weather file, ``pvlib:FILE``, ``demo:NAME`` or ``"log"`` (built from the log's outdoor column);
        default the scenario's.
    utc_offset : float, optional
        The logger clock's offset from UTC [h].
    spinup_days : float
        Days at the start of the log left out of the misfit while the model settles [d].
    deck_plane : str, optional
        The roof plane ``deck_c`` is measured under (default the scenario's first).
    max_gap_s : float
        Longest stretch without readings accepted [s].
    workers : int, optional
        Processes for the Jacobian's columns (default all cores, at most two per key).
    progress : text stream, optional
        Where progress goes (stderr in the CLI).
    max_iterations : int
        Most trial points of the least-squares iteration (Jacobians not counted).

    Returns
    -------
    FitResult
    """
    t_start = time.perf_counter()
    problem, log, scenario, warnings, notes, weather_text, wfig = build_problem(
        scenario_path, overrides, log_path, keys, bounds=bounds, weather=weather, utc_offset=utc_offset,
        spinup_days=spinup_days, deck_plane=deck_plane, max_gap_s=max_gap_s)
    p = len(problem.keys)
    workers = max(1, min(workers or os.cpu_count() or 1, 2 * p))
    bar = FitProgress(progress, workers) if progress is not None else None
    if bar is not None:
        bar.step("first run (the solver compiles on its first use)")
    u0 = np.array([k.to_u(k.start) for k in problem.keys])
    base_raw = problem.run(problem.scenario([k.start for k in problem.keys]))
    base_model = problem.model(base_raw)
    r0 = problem.residuals(base_model)
    ev = Evaluator(problem, workers, bar)
    ev.runs, ev._last = 1, (u0.copy(), r0)
    try:
        res = least_squares_fit(ev, u0, max_iterations, bar)
        if bar is not None:
            bar.step("Jacobian at the solution (central differences)")
        jac = ev.jacobian(res.x, central=True)
    finally:
        ev.close()
        if bar is not None:
            bar.close()
    # a key the readings do not see stays at the scenario's value (the fit cannot move it for a reason)
    seen = effect_k(jac) >= NO_EFFECT_K
    u = np.where(seen, res.x, u0)
    values = [k.from_u(x) if s else k.start for k, x, s in zip(problem.keys, u, seen)]
    final_sc = problem.scenario(values)
    final_raw = problem.run(final_sc)
    final_model = problem.model(final_raw)
    r = problem.residuals(final_model)
    if ev.failed:
        notes.append(f"{ev.failed} trial run(s) could not be simulated (given a {FAILED_RUN_K:g} K misfit)")
    if res.status == 0:
        warnings.append(f"The fit stopped after {res.nfev} trials without settling: its values may not be the "
                        f"best; narrow the --bounds or fit fewer keys.")
    result = _assemble(problem, log, final_sc, u, values, jac, r, r0, base_model, final_model, final_raw,
                       warnings, notes, weather_text, wfig, spinup_days)
    result.runs, result.iterations, result.workers = ev.runs + 1, int(res.nfev), workers
    result.start_scenario = scenario
    result.switching = switching_errors(problem, final_sc, final_raw, log, spinup_days)
    result.runs += 1 if result.switching else 0
    result.wall_s = time.perf_counter() - t_start
    return result


def _intervals(problem, u, jac, r, step_s):
    """Per key: the 95 % interval corrected for autocorrelated errors, the white-noise one, the standard error on
    the unit scale and the effective number of readings; the correlation matrix; the error model.

    The variance of each key is the larger of two corrections of the white-noise one: the error model's
    (white noise plus a slow, exponentially correlated part fitted to the residuals, :func:`stats.error_model`)
    and Newey & West's over a day of lags (which needs no model of the errors' shape). The effective number of
    readings is n times the white-noise variance over the corrected one; the interval's quantile is Student's t
    with that number, less one per key, degrees of freedom.
    """
    active = effect_k(jac) >= NO_EFFECT_K
    keep = problem.in_fit[None, :] & np.isfinite(problem.measured)
    grid = np.full(keep.shape, np.nan)
    grid[keep] = r
    ja = jac[:, active]
    jac_grid = np.zeros(keep.shape + (ja.shape[1],))
    jac_grid[keep] = ja
    fit_cols = problem.in_fit
    model = stats.error_model(grid[:, fit_cols], step_s)
    a_inv = np.linalg.pinv(ja.T @ ja)
    white, slow = stats.modelled_covariance(jac_grid[:, fit_cols], problem.seconds[fit_cols], model, a_inv,
                                            parts=True)
    lags = max(1, int(round(stats.HAC_WINDOW_S / max(step_s, 1.0))))
    plain, newey_west = stats.covariance(ja, r, problem.residual_times(), len(problem.seconds), lags)
    p = int(active.sum())
    # the slow part's variance rests on one degree of freedom per correlation time of the fitted span; the keys
    # absorb the share of it their own effects can mimic, and the misfit shows only the rest (as n / (n - p)
    # scales the white part's)
    fitted = problem.seconds[fit_cols]
    absorbed = stats.absorbed_share(ja.T @ ja, slow, model, keep[:, fit_cols].sum(axis=1))
    dof_slow = stats.slow_degrees_of_freedom(fitted[-1] - fitted[0], model["tau_s"]) * (1.0 - absorbed)
    slow = slow / (1.0 - absorbed)
    modelled = white + slow
    out = {"interval": {}, "plain": {}, "sd": {}, "n_eff": {}, "dof": {}}
    where = np.cumsum(active) - 1
    for i, k in enumerate(problem.keys):
        if not active[i]:  # no effect: any value in its range fits as well
            out["interval"][k.key] = out["plain"][k.key] = [k.low, k.high]
            out["sd"][k.key], out["n_eff"][k.key], out["dof"][k.key] = float("inf"), 0.0, 0.0
            continue
        j = where[i]
        var = max(modelled[j, j], newey_west[j, j], plain[j, j])
        sd, sd_plain = math.sqrt(var), math.sqrt(max(plain[j, j], 0.0))
        n_eff = float(r.size * plain[j, j] / var) if var > 0 else float(r.size)
        dof = stats.satterthwaite([white[j, j], slow[j, j]], [r.size - p, dof_slow])
        tq = stats.t_quantile(dof)
        out["interval"][k.key] = [k.from_u(max(u[i] - tq * sd, 0.0)), k.from_u(min(u[i] + tq * sd, 1.0))]
        out["plain"][k.key] = [k.from_u(max(u[i] - 1.96 * sd_plain, 0.0)), k.from_u(min(u[i] + 1.96 * sd_plain, 1.0))]
        out["sd"][k.key], out["n_eff"][k.key], out["dof"][k.key] = sd, n_eff, dof
    corr = np.eye(len(problem.keys))
    corr[np.ix_(active, active)] = stats.correlation(modelled)
    errors = {"slow_tau_h": model["tau_s"] / 3600.0,
              "slow_share": {c: float(w) for c, w in zip(problem.columns, model["slow_share"])}}
    return out, corr, errors


def _flags(problem, u, intervals, corr, jac):
    """Per key: why its value is not to be trusted alone (at a bound, poorly identified, tied to another key,
    no effect on the readings), and the warnings that say so."""
    flags, warnings = {k.key: [] for k in problem.keys}, []
    keys = problem.keys
    for i, k in enumerate(keys):
        lo, hi = (k.to_u(v) for v in intervals["interval"][k.key])
        if effect_k(jac[:, [i]])[0] < NO_EFFECT_K:
            flags[k.key].append("no_effect")
            warnings.append(f"{k.key} has no visible effect on the readings in this log: it cannot be fitted from "
                            f"it; keep the scenario's value or measure it another way.")
            continue
        if hi - lo >= stats.WIDE_SHARE:
            flags[k.key].append("poorly_identified")
            extra = (" A logger's minutes-apart readings cannot show a sensor's lag of seconds: time the fan's "
                     "run-on on the bench instead (atticsim thermostat SCENARIO --run-on ... --ambient ... "
                     "--heated-to ...)." if k.key == "sensor.time_constant" else
                     " Log longer, or log another column (deck_c, sensor_c), or fix it from another source.")
            warnings.append(f"{k.key} is poorly identified by this log: its 95 % interval "
                            f"{k.text(intervals['interval'][k.key][0])} .. {k.text(intervals['interval'][k.key][1])} spans "
                            f"{100 * (hi - lo):.0f} % of its range.{extra}")
        if u[i] <= 0.005 or u[i] >= 0.995:
            flags[k.key].append("at_bound")
            side = "lower" if u[i] <= 0.005 else "upper"
            warnings.append(f"{k.key} ended at its {side} bound ({k.text(k.from_u(u[i]))}): the readings push it "
                            f"further. Widen --bounds {k.key}=LOW:HIGH if a value beyond is possible; otherwise the "
                            f"scenario misses something (a heat path, the weather of the logged days).")
    for i in range(len(keys)):
        for j in range(i + 1, len(keys)):
            if abs(corr[i, j]) >= stats.CORRELATION_WARN:
                a, b = keys[i].key, keys[j].key
                flags[a].append(f"correlated:{b}")
                flags[b].append(f"correlated:{a}")
                warnings.append(f"{a} and {b} cannot be told apart by this log (their estimates correlate at "
                                f"{corr[i, j]:+.2f}): the log fixes a combination of the two, not each. Fix one from "
                                f"another source and fit the other, or log another column.")
    return flags, warnings


def start_column(column: str) -> str:
    """The series' column of the model at the start values for a measured column (``attic_air_c`` ->
    ``attic_air_start_c``: the unit ending last, as every column and key of the project)."""
    return column[:-2] + "_start_c"


def model_column(column: str) -> str:
    """The series' column of the model at the fitted values (``attic_air_c`` -> ``attic_air_model_c``)."""
    return column[:-2] + "_model_c"


def _series(problem, log, base_model, final_model, final_raw) -> pd.DataFrame:
    """Readings, the model at the start and fitted values, the outdoor air and the fan at every stamp."""
    cols = {}
    for i, c in enumerate(problem.columns):
        cols[c] = problem.measured[i]
        cols[start_column(c)] = base_model[i]
        cols[model_column(c)] = final_model[i]
    if "outdoor_c" in log.frame:
        cols["outdoor_c"] = log.frame["outdoor_c"].to_numpy()
    cols["outdoor_weather_c"] = problem.model(final_raw, ["outdoor_c"])[0]
    if log.fan is not None:
        cols["fan_on"] = log.fan.reindex(log.frame.index).ffill().bfill().to_numpy(dtype=float)
    else:
        run = final_raw.with_fan
        k = np.searchsorted(run.t - final_raw.period.t_start, problem.seconds, side="right") - 1
        cols["fan_on"] = run.fan[np.clip(k, 0, run.fan.size - 1)].astype(float)
    cols["in_fit"] = problem.in_fit
    return pd.DataFrame(cols, index=log.frame.index)


def _goodness(problem, r, final_model, base_model):
    """Per column: RMS misfit, bias, readings, the start's RMS misfit and the logger's noise; and the misfit
    at each stamp (mean over the columns)."""
    keep = problem.in_fit[None, :] & np.isfinite(problem.measured)
    out = {}
    for i, c in enumerate(problem.columns):
        d = (final_model[i] - problem.measured[i])[keep[i]]
        d0 = (base_model[i] - problem.measured[i])[keep[i]]
        out[c] = {"rmse_k": _rms(d), "bias_k": float(np.mean(d)), "readings": int(d.size),
                  "rmse_start_k": _rms(d0), "logger_noise_k": stats.logger_noise(problem.measured[i])}
    diff = np.where(keep, final_model - problem.measured, 0.0)
    count = keep.sum(axis=0)
    per_stamp = np.where(count > 0, diff.sum(axis=0) / np.maximum(count, 1), np.nan)
    return out, per_stamp


def _assemble(problem, log, final_sc, u, values, jac, r, r0, base_model, final_model, final_raw, warnings, notes,
              weather_text, wfig, spinup_days) -> FitResult:
    intervals, corr, errors = _intervals(problem, u, jac, r, log.step_s)
    flags, key_warnings = _flags(problem, u, intervals, corr, jac)
    columns, per_stamp = _goodness(problem, r, final_model, base_model)
    noise = float(np.nanmedian([c["logger_noise_k"] for c in columns.values()]))
    rmse = _rms(r)
    series = _series(problem, log, base_model, final_model, final_raw)
    fit_idx = problem.in_fit
    wh = stats.worst_hour(log.frame.index[fit_idx], per_stamp[fit_idx])
    trend = stats.trend_per_day(problem.seconds[fit_idx], per_stamp[fit_idx])
    main = problem.columns[0]
    lag = stats.clock_lag(problem.seconds, problem.measured[0], base_model[0], log.step_s)
    v = stats.verdict(rmse)
    first = []
    if v == "poor":
        first.append(f"The fit is poor: the model misses the readings by {rmse:.2f} K RMS even at its best values, "
                     f"so those values are not to be trusted. Check that the weather is the logged days' and "
                     f"place's, the logger's clock, where the probes hang, and the scenario's house.")
    if rmse > 3.0 * noise and rmse > 0.9 * _rms(r0):
        first.append(f"The fit barely improves on the scenario's own values ({_rms(r0):.2f} K RMS at the start, "
                     f"{rmse:.2f} K fitted, against a logger noise of {noise:.2f} K): what the model misses is not "
                     f"in the keys fitted. Check the weather (the logged days'?), the logger's clock and the "
                     f"scenario before trusting any value.")
    if abs(lag) >= 40 * 60:
        when = "later" if lag > 0 else "earlier"
        first.append(f"The readings' daily cycle ({main}) matches the model's best moved {abs(lag) / 60:.0f} min "
                     f"{when}: is the logger's clock on daylight-saving time or another zone (--utc-offset)?")
    warnings = first + list(warnings) + key_warnings
    span_days = (problem.seconds[fit_idx][-1] - problem.seconds[fit_idx][0]) / 86400.0
    if abs(trend) * span_days >= 0.5:
        notes.append(f"the misfit drifts by {trend * span_days:+.2f} K over the fitted days (a drifting logger, "
                     f"or a house that changed); the intervals allow for slow errors")
    return FitResult(
        problem=problem, log=log, scenario=final_sc, keys=problem.keys,
        start_values={k.key: k.start for k in problem.keys},
        fitted={k.key: float(x) for k, x in zip(problem.keys, values)},
        interval_95=intervals["interval"], interval_plain_95=intervals["plain"], std_unit=intervals["sd"],
        effective_samples=intervals["n_eff"], correlation=corr, columns=columns, rmse_k=rmse,
        rmse_start_k=_rms(r0), bias_k=float(np.mean(r)) if r.size else float("nan"), noise_k=noise,
        worst_hour=wh, trend_k_per_day=trend, clock_lag_s=lag, verdict=v, flags=flags, warnings=warnings,
        notes=notes, series=series, runs=0, iterations=0, wall_s=0.0, workers=1, weather_text=weather_text,
        weather_figures=wfig, fitted_rows=int(r.size), spinup_days=spinup_days, error_model=errors, unit_place=np.array(u),
        jacobian=jac, residuals=r)


def switching_errors(problem, scenario, raw, log, spinup_days) -> dict | None:
    """With a logged fan: the thermostat's own switching against the calibrated model.

    At each logged switch (after the spin-up days) the model's sensor temperature, against the thermostat's
    switch-on and switch-off temperatures; and the calibrated scenario run again with its own thermostat over
    the same days: its starts and run hours against the log's.
    """
    if problem.fan_log is None:
        return None
    from atticsim.assembly import controller_from_scenario
    from atticsim.results.metrics import fan_intervals

    ctl = controller_from_scenario(scenario)
    t_fit = raw.period.t_start + spinup_days * 86400.0
    ev = [e for e in raw.with_fan.events if e[3] == "log" and e[0] >= t_fit]
    on = np.array([e[2] for e in ev if e[1]])
    off = np.array([e[2] for e in ev if not e[1]])

    def describe(temps, setting):
        if temps.size == 0:
            return None
        return {"switches": int(temps.size), "sensor_mean_c": float(temps.mean()), "sensor_min_c": float(temps.min()),
                "sensor_max_c": float(temps.max()), "setting_c": float(setting),
                "error_k": float(temps.mean() - setting)}

    own = problem.run(scenario, follow_log=False).with_fan
    fan0 = bool(own.fan[np.searchsorted(own.t, t_fit, side="right") - 1]) if own.t.size else False
    after = [e for e in own.events if e[0] >= t_fit]
    runs = fan_intervals(after, fan0, t_fit, raw.period.t_end)
    logged = [e for e in ev if e[1]]
    return {
        "action": ctl.action, "switch_on": describe(on, ctl.on), "switch_off": describe(off, ctl.off),
        "timing_uncertainty_s": log.step_s / 2.0,
        "logged_starts": len(logged),
        "logged_run_hours": log.fan_run_seconds(log.start + pd.Timedelta(days=spinup_days)) / 3600.0,
        "model_starts": int(sum(1 for e in after if e[1])),
        "model_run_hours": float(sum(b - a for a, b, _ in runs) / 3600.0),
    }
