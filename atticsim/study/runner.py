"""Run a study: plan the points, execute them (in this process, on local processes, or on any
``concurrent.futures.Executor`` such as a Dask cluster's), journal each finished point, resume, and write the
tables, the recommendation and the maps.

Files in the study folder ``DIR``:

``study.json``          what was run: versions, seed, the scenario's full content, the vary spec, the period,
                        every point's overrides, and a log of runs (backend, workers, wall time)
``journal.jsonl``       one JSON line per finished point, appended and flushed as each point finishes
``points.csv``, ``points.parquet``   the table: varied values (SI and as given), every summary figure and
                        the study figures (starts_per_day, max_starts_per_hour, degree_hours_above_limit,
                        net_benefit_kwh, hysteresis_k)
``pareto.csv``, ``pareto.png``   the Pareto front: the qualifying points no other qualifying point beats on
                        both the heat figure and the fan's electricity
``recommendation.json`` the recommended point, its runner-up, the range edges it sits on, warnings, the rule
``short_cycling_map.png``   heatmaps over a one- or two-key grid, limit violations hatched
"""

from __future__ import annotations

import concurrent.futures as cf
import datetime as _dt
import gc
import hashlib
import json
import math
import os
import platform
import sys
import time
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from atticsim.errors import is_input_error, one_line
from atticsim.study.analysis import (DEFAULT_COOLING_COP, degree_hours_above, max_starts_in_window,
                                     net_benefit_kwh)
from atticsim.study.spec import DERIVED, HEAT_METRICS, Study, StudyError, point_overrides

FORMAT = 1
JOURNAL = "journal.jsonl"
STUDY_JSON = "study.json"
#: Every file a study writes into DIR (``--force`` removes these and nothing else).
STUDY_FILES = (STUDY_JSON, JOURNAL, "points.csv", "points.parquet", "pareto.csv", "pareto.png",
               "recommendation.json", "short_cycling_map.png", "report.html")
NET_BENEFIT_BASIS = ("the run's net_benefit_kwh: electricity at the meter = cooling savings (ceiling heat kept out on "
                     "cooled days / house.cooling_cop) - the cooling cost of conditioned air drawn - fan energy - "
                     "the heating penalty when the heating runs on electricity (see each point's energy_basis in "
                     "atticsim.results.metrics.season_summary); else (ceiling_heat_gain_no_fan_kwh - "
                     "ceiling_heat_gain_kwh) / COP - fan_energy_kwh with COP = house.cooling_cop or "
                     f"{DEFAULT_COOLING_COP:g} (common practice, no source)")


# --- one point (runs in a worker) ---------------------------------------------------------------------

_WEATHER: dict = {}


def _weather(spec: str):
    """The weather for a spec, loaded once per worker process (or thread pool)."""
    if spec not in _WEATHER:
        from atticsim.forcing.weather import load_weather

        _WEATHER[spec] = load_weather(spec)
    return _WEATHER[spec]


def point_metrics(result, scenario, comfort_limit_c: float) -> dict:
    """Study figures of one simulation result.

    Parameters
    ----------
    result : SimulationResult
        A finished run (``summary``, ``timeseries`` with ``attic_air_c``, ``events``).
    scenario : Scenario
        The point's scenario (for the thermostat and the cooling COP).
    comfort_limit_c : float
        Attic air limit for the degree-hours [degC].

    Returns
    -------
    dict
        ``starts_per_day`` [1/d], ``max_starts_per_hour`` [starts in any 60 min], ``degree_hours_above_limit``
        [K*h], ``net_benefit_kwh`` [kWh], ``hysteresis_k`` [K] (None without on/off setpoints).
    """
    s = result.summary
    days = s.get("days")
    starts = s.get("fan_starts")
    ts = result.timeseries
    t0 = ts.index[0]
    hours = (ts.index - t0).total_seconds().to_numpy() / 3600.0
    dh = degree_hours_above(ts["attic_air_c"].to_numpy(), hours, comfort_limit_c)
    ev = result.events
    on = ev[ev["fan"] == "on"]
    start_s = (on["time"] - t0).dt.total_seconds().to_numpy()
    th = scenario.thermostat
    hyst = abs(float(th.on) - float(th.off)) if hasattr(th, "on") and hasattr(th, "off") else None
    cop = float(getattr(getattr(scenario, "house", None), "cooling_cop", DEFAULT_COOLING_COP))
    return {
        "starts_per_day": float(starts) / float(days) if days else None,
        "max_starts_per_hour": max_starts_in_window(start_s, 3600.0),
        "degree_hours_above_limit": dh,
        "net_benefit_kwh": net_benefit_kwh(s, cop),
        "hysteresis_k": hyst,
    }


def _plain(value):
    """numpy scalars -> Python numbers, non-finite floats -> None (JSON-safe)."""
    if hasattr(value, "item") and not isinstance(value, (str, bytes)):
        value = value.item()
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, (str, int, float, bool)) or value is None:
        return value
    return str(value)


def run_point(task: dict) -> dict:
    """Simulate one study point (top-level and picklable: this is what workers run).

    Parameters
    ----------
    task : dict
        ``index``, ``key``, ``scenario`` (a validated Scenario), ``start``, ``end``, ``comfort_limit_c``.

    Returns
    -------
    dict
        ``index``, ``key``, ``status`` ("ok" or "error"), ``error``, ``summary``, ``metrics``, ``elapsed_s``.
    """
    t = time.perf_counter()
    out = {"index": task["index"], "key": task["key"], "status": "ok", "error": None, "summary": {}, "metrics": {}}
    # No cyclic garbage collection while the point runs: it makes many thousands of short-lived objects
    # (freed by reference counting), which otherwise set off collections over the objects the worker
    # holds (measured: about 9 ms of a 0.28 s chattering summer point). Collection resumes after.
    collecting = gc.isenabled()
    gc.disable()
    try:
        from atticsim.pipeline import simulate

        sc = task["scenario"]
        result = simulate(sc, weather=_weather(sc.weather.file), start=task["start"], end=task["end"],
                          reuse_no_fan=True, summary_only=True)
        out["summary"] = {k: _plain(v) for k, v in result.summary.items()
                          if not isinstance(v, (list, dict, tuple))}
        out["warnings"] = [str(w) for w in result.summary.get("warnings", [])]
        out["metrics"] = {k: _plain(v) for k, v in point_metrics(result, sc, task["comfort_limit_c"]).items()}
    except Exception as exc:  # a failed point is recorded, the study goes on
        out["status"] = "error"
        out["error"] = f"{type(exc).__name__}: {one_line(str(exc))}"
        out["error_kind"] = "input" if is_input_error(exc) else "bug"
    finally:
        if collecting:
            gc.enable()
    out["elapsed_s"] = time.perf_counter() - t
    return out


# --- planning -----------------------------------------------------------------------------------------

@dataclass
class PlannedPoint:
    """One point of a study, validated."""

    index: int
    key: str
    overrides: list[str]
    given: dict
    si: dict
    scenario: object

    def task(self, study: Study) -> dict:
        return {"index": self.index, "key": self.key, "scenario": self.scenario, "start": study.start,
                "end": study.end, "comfort_limit_c": study.comfort_limit_c}


@dataclass
class Plan:
    """A study's validated points and its base scenario."""

    study: Study
    base: object
    points: list[PlannedPoint]
    fingerprint: str
    warnings: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)


def _input_warnings(base, points: list[PlannedPoint]) -> list[str]:
    """The scenarios' plausibility warnings, each once: as it stands when the base scenario or every point has
    it, else prefixed with the points that have it."""
    where: dict[str, list[int]] = {}
    for p in points:
        for w in p.scenario.input_warnings:
            where.setdefault(w, []).append(p.index)
    out = []
    for w in dict.fromkeys(list(base.input_warnings) + list(where)):
        idx = where.get(w, [])
        if w in base.input_warnings or len(idx) == len(points):
            out.append(w)
        else:
            shown = ", ".join(str(i) for i in idx[:8]) + (", ..." if len(idx) > 8 else "")
            out.append(f"point{'s' if len(idx) > 1 else ''} {shown}: {w}")
    return out


def _dump_value(dump, key: str):
    node = dump
    for part in key.split("."):
        if isinstance(node, list):
            try:
                node = node[int(part)]
            except (ValueError, IndexError):
                return None
        elif isinstance(node, dict) and part in node:
            node = node[part]
        else:
            return None
    return node if not isinstance(node, (dict, list)) else json.dumps(node)


def _hash(obj) -> str:
    return hashlib.sha256(json.dumps(obj, sort_keys=True, default=str).encode()).hexdigest()[:16]


def plan_study(study: Study) -> Plan:
    """Sample the study's points and validate each point's scenario before anything runs.

    Raises
    ------
    StudyError
        One line naming the point's values and the scenario's complaint.
    """
    from atticsim.scenario import ScenarioError, load_scenario
    from atticsim.units import to_si

    base_overrides = list(study.base_overrides)
    try:
        base = load_scenario(study.scenario, base_overrides)
    except ScenarioError as exc:
        raise StudyError(str(exc)) from None
    if study.months is not None and study.start is None:  # the month range in the base weather's first year
        from atticsim.study.spec import resolve_months

        resolve_months(study, _weather(base.weather.file)[0])
    points = []
    for i, p in enumerate(study.sample_points()):
        label = ", ".join(f"{k}={v.display}" for k, v in p.items())
        try:
            overrides = point_overrides(p, base)
            sc = load_scenario(study.scenario, base_overrides + overrides)
        except ScenarioError as exc:
            why = exc.reason
            if exc.key == "fan.power" and "fan.flow" in p and not {"fan.power", "fan.speed_ratio"} & set(p):
                why += "; fan.power scales with the varied fan.flow at the base fan's W per m3/s (vary fan.power too)"
            raise StudyError(f"--vary: point {i} ({label}): {exc.key + ': ' if exc.key else ''}{why}") from None
        except StudyError as exc:
            raise StudyError(f"--vary: point {i} ({label}): {exc}") from None
        dump = sc.model_dump(mode="json")
        si = {}
        for k, v in p.items():
            si[k] = to_si(v.display, DERIVED[k][2]) if k in DERIVED else _dump_value(dump, k)
        key = _hash({"scenario": dump, "start": study.start, "end": study.end, "comfort_c": study.comfort_limit_c})
        points.append(PlannedPoint(i, key, overrides, {k: v.display for k, v in p.items()}, si, sc))
    for spec in sorted({pt.scenario.weather.file for pt in points}):
        if not spec.startswith(("demo:", "pvlib:")) and not Path(spec).is_file():
            raise StudyError(f"weather.file: {spec}: file not found")
    notes = []
    keys = {ax.key for ax in study.axes}
    if "fan.flow" in keys and not keys & {"fan.power", "fan.speed_ratio"}:
        base_flow = base.fan.flow if base.fan.flow is not None else base.fan.rated_flow
        notes.append(f"fan.power scales with fan.flow at the base fan's {base.fan.power / base_flow:.4g} W per m3/s "
                     f"({base.fan.power:g} W at {base_flow:.4g} m3/s): a bigger fan of the same kind; vary fan.power "
                     f"too to give other figures")
    if "fan.speed_ratio" in keys and base.fan.curve_flow is None:
        notes.append("fan.speed_ratio sets the fan's flow (x N) and power (x N^3) by the fan laws: the fan has no "
                     "curve")
    return Plan(study, base, points, _hash([pt.key for pt in points]), _input_warnings(base, points), notes)


# --- journal ------------------------------------------------------------------------------------------

def read_journal(path: Path) -> list[dict]:
    """Records of a journal; an incomplete last line (a write cut off by a crash) is dropped from the file."""
    if not path.exists():
        return []
    raw = path.read_bytes()
    records, good_end, pos = [], 0, 0
    for line in raw.splitlines(keepends=True):
        pos += len(line)
        text = line.strip()
        if not text:
            good_end = pos
            continue
        try:
            rec = json.loads(text)
        except json.JSONDecodeError:
            if pos == len(raw):
                break  # torn last write
            raise StudyError(f"{path}: damaged line {len(records) + 1}; remove it or start over with --force") from None
        if not line.endswith(b"\n"):
            break
        records.append(rec)
        good_end = pos
    if good_end < len(raw):
        with open(path, "r+b") as fh:
            fh.truncate(good_end)
    return records


class Journal:
    """Append-only JSON-lines record of finished points, flushed to disk after every line."""

    def __init__(self, path: Path):
        self.path = path
        self._fh = open(path, "a", encoding="utf-8")

    def append(self, record: dict) -> None:
        try:
            self._fh.write(json.dumps(record, allow_nan=False) + "\n")
            self._fh.flush()
            os.fsync(self._fh.fileno())
        except OSError as exc:
            from atticsim.errors import WriteFailure

            raise WriteFailure(exc.errno, f"{self.path}: cannot write: {_os_reason(exc)}; the points journaled "
                                          f"before are kept: rerun with --resume when there is room") from None

    def close(self) -> None:
        try:
            self._fh.close()
        except OSError:  # the disk filled while flushing: append() has said so
            pass


# --- execution ----------------------------------------------------------------------------------------

def versions() -> dict:
    """Versions of Python, atticsim and the libraries that shape the numbers."""
    from importlib import metadata

    from atticsim.version import __version__

    out = {"python": sys.version.split()[0], "platform": platform.platform(), "atticsim": __version__}
    for name in ("numpy", "scipy", "pandas", "pvlib", "pydantic", "pint", "matplotlib", "pyarrow", "dask",
                 "distributed"):
        try:
            out[name] = metadata.version(name)
        except metadata.PackageNotFoundError:
            pass
    return out


def dask_executor(address: str):
    """A ``concurrent.futures`` executor on a Dask scheduler (``tcp://host:port``) and its closing function.

    Needs the ``dask`` extra (``pip install 'atticsim[dask]'``). Tasks are submitted with ``pure=False`` so that
    Dask never answers a point from its cache.
    """
    try:
        from distributed import Client
    except ImportError:
        raise StudyError("--scheduler: needs Dask distributed: pip install 'dask[distributed]'") from None
    try:
        client = Client(address, timeout="10s")
    except (OSError, TimeoutError, ValueError) as exc:
        raise StudyError(f"--scheduler {address}: cannot connect ({str(exc).splitlines()[0]})") from None
    return client.get_executor(pure=False), client.close


def process_executor(workers: int):
    """A local process pool.

    On Linux, when this process runs no other thread, workers are forked (fast: they inherit the loaded
    modules and never re-import the calling script). Otherwise (other threads running, other platforms)
    they start from a fresh interpreter ("forkserver" or "spawn"), which imports the calling script again:
    a Python script that calls :func:`run_study` with several workers then needs the usual
    ``if __name__ == "__main__":`` guard.
    """
    import multiprocessing
    import threading

    from atticsim.processes import process_pool

    methods = multiprocessing.get_all_start_methods()
    if sys.platform.startswith("linux") and "fork" in methods and threading.active_count() == 1:
        method = "fork"
    else:
        method = "forkserver" if "forkserver" in methods else "spawn"
    # workers end with this process, however it ends (atticsim.processes)
    return process_pool(workers, mp_context=multiprocessing.get_context(method))


@dataclass
class StudyOutcome:
    """What :func:`run_study` did."""

    out: Path
    table: object
    recommendation: dict
    files: list[Path]
    computed: int
    reused: int
    failed: int
    wall_s: float
    backend: str
    notes: list[str] = field(default_factory=list)


def _check_dir(out: Path, plan: Plan, resume: bool, force: bool) -> dict | None:
    """Check the claimed DIR without changing it; return the earlier study.json on resume."""
    previous = None
    if resume and (out / STUDY_JSON).exists():
        try:
            previous = json.loads((out / STUDY_JSON).read_text())
        except json.JSONDecodeError:
            raise StudyError(f"{out / STUDY_JSON}: not valid JSON; start over with --force") from None
        if previous.get("fingerprint") != plan.fingerprint:
            raise StudyError(f"--resume: {out} holds a different study (scenario, points, period or comfort "
                             f"limit differ); use a new --out, or --force to start over")
    elif resume and (out / JOURNAL).exists():
        raise StudyError(f"--resume: {out} has a journal but no {STUDY_JSON}; use --force to start over")
    return previous


def _prepare_dir(out: Path, resume: bool) -> None:
    """Create DIR; when not resuming, remove an earlier study's files (and only those)."""
    out.mkdir(parents=True, exist_ok=True)
    if not resume:
        for name in STUDY_FILES:
            (out / name).unlink(missing_ok=True)
        for folder in out.glob("point-*"):  # an earlier study's kept points (see atticsim.study.keep)
            _remove_kept_point(folder)


#: The files a kept point's folder may hold (what ``atticsim run`` writes): only such a folder is removed.
_RUN_FILES = {"summary.json", "daily.csv", "monthly.csv", "timeseries.csv", "timeseries.parquet", "events.csv",
              "temperatures.png", "monthly.png", "report.html"}


def _remove_kept_point(folder: Path) -> None:
    """Remove DIR/point-N when it holds nothing but a run's files (anything else there is the user's: kept)."""
    import shutil

    if not (folder.is_dir() and folder.name[len("point-"):].isdigit()):
        return
    entries = list(folder.iterdir())
    if all(e.is_file() and e.name in _RUN_FILES for e in entries):
        shutil.rmtree(folder)


def _write_atomic(path: Path, write) -> None:
    """Write a file through a temporary one beside it (the claim's naming, so that a later claim removes it if
    this process is killed), then move it into place; a failure (a full disk) in one line, nothing left."""
    from atticsim.errors import WriteFailure
    from atticsim.results.output import TMP_PREFIX

    tmp = path.with_name(f"{TMP_PREFIX}{os.getpid()}-{path.name}")
    try:
        write(tmp)
        os.replace(tmp, path)
    except OSError as exc:
        raise WriteFailure(exc.errno, f"{path.parent}: cannot write {path.name}: {_os_reason(exc)}") from None
    finally:
        tmp.unlink(missing_ok=True)


def _os_reason(exc: OSError) -> str:
    import errno

    return "no space left on the disk" if exc.errno in (errno.ENOSPC, errno.EDQUOT) else (exc.strerror or str(exc))


def _study_record(plan: Plan, previous: dict | None, command) -> dict:
    study = plan.study
    now = _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds")
    return {
        "format": FORMAT,
        "fingerprint": plan.fingerprint,
        "created": (previous or {}).get("created", now),
        "command": command if command is not None else (previous or {}).get("command"),
        "versions": versions(),
        "study": study.describe(),
        "scenario_source": study.scenario or "<built-in demo house>",
        "scenario": plan.base.model_dump(mode="json"),
        "net_benefit_basis": NET_BENEFIT_BASIS,
        "warnings": list(plan.warnings),
        "notes": list(plan.notes),
        "points": [{"point": p.index, "key": p.key, "given": p.given, "overrides": p.overrides}
                   for p in plan.points],
        "runs": list((previous or {}).get("runs", [])),
    }


def _every_point_failed(plan: Plan, done: dict, out: Path, resume: bool, previous) -> None:
    """Stop a study none of whose points ran, in one line: the study's input error (exit 2) when the points
    failed on bad input, else an error saying it is a bug. A new study's files are removed (nothing of
    value is in them); a resumed one keeps its folder as it was."""
    first = next(p for p in plan.points if p.key in done)
    rec = done[first.key]
    label = ", ".join(f"{k}={v}" for k, v in first.given.items())
    line = (f"every one of the {len(plan.points)} points failed, e.g. point {first.index} ({label}): "
            f"{rec.get('error')}")
    if not resume:
        for name in STUDY_FILES:
            (out / name).unlink(missing_ok=True)
    if all(r.get("error_kind") == "input" for r in done.values() if r.get("status") != "ok"):
        raise StudyError(f"sweep: {line}")
    raise RuntimeError(line)


def build_table(plan: Plan, records: dict):
    """The points table in point order from the plan and the journal's records (key -> record)."""
    import pandas as pd

    rows = []
    for p in plan.points:
        rec = records.get(p.key, {"status": "missing", "error": "not computed", "summary": {}, "metrics": {}})
        row = {"point": p.index, "status": rec["status"]}
        for k in p.given:
            row[k] = p.si[k]
            row[f"{k}_given"] = p.given[k]
        row.update(rec.get("summary") or {})
        row.update(rec.get("metrics") or {})
        row["error"] = rec.get("error")
        row["warnings"] = " | ".join(rec.get("warnings") or [])
        row["overrides"] = json.dumps(p.overrides)
        rows.append(row)
    table = pd.DataFrame(rows)
    for col in ("starts_per_day", "max_starts_per_hour", "degree_hours_above_limit", "net_benefit_kwh",
                "hysteresis_k", "fan_starts", "fan_energy_kwh", "fan_run_hours", "short_cycles", "attic_air_max_c",
                "ceiling_heat_gain_kwh"):
        if col in table:
            table[col] = pd.to_numeric(table[col], errors="coerce")
    return table


def run_study(study: Study, out, *, workers: int | None = None, scheduler: str | None = None,
              executor: cf.Executor | None = None, resume: bool = False, force: bool = False, progress=None,
              on_point=None, command=None, plots: bool = True) -> StudyOutcome:
    """Run every point of a study not already in the journal, then write the table, analysis and maps.

    Parameters
    ----------
    study : Study
        What to vary and how.
    out : str or Path
        Study folder. A folder with files needs ``resume`` (continue) or ``force`` (start over).
    workers : int, optional
        Local worker processes; default all cores; 1 runs the points in this process.
    scheduler : str, optional
        Dask scheduler address (``tcp://host:port``); the points run on its workers.
    executor : concurrent.futures.Executor, optional
        Any executor to run the points on (the caller owns it); overrides ``workers`` and ``scheduler``.
    resume : bool
        Keep the points already in DIR's journal and compute only the others.
    force : bool
        Remove an earlier study's files from DIR first.
    progress : text stream, optional
        Where the progress line goes (stderr in the CLI); None for silence.
    on_point : callable, optional
        Called as ``on_point(record, done, total)`` after each point is journaled.
    command : JSON-friendly object, optional
        The command and its options, recorded in study.json.
    plots : bool
        Draw the short-cycling map.

    Returns
    -------
    StudyOutcome
    """
    import importlib.util

    from atticsim.results.output import claim_output

    if importlib.util.find_spec("pyarrow") is None:
        raise StudyError("points.parquet needs pyarrow: pip install pyarrow")
    if resume and force:
        raise StudyError("--resume and --force: choose one (continue the study, or start it over)")
    if workers is not None and (isinstance(workers, bool) or workers < 1):
        raise StudyError(f"--workers: must be at least 1 (got {workers})")
    study.check()  # the study's size among the rest, before anything is drawn or claimed
    out = Path(out)
    # the folder is this process's until the study ends: a second study (or run) into it fails at once
    claim = claim_output(out, force, existing_ok=resume,
                         refuse_hint="pass --resume to continue a study there or --force to start over")
    for note in claim.notes:
        if progress is not None:
            progress.write(f"note: {note}\n")
    try:
        outcome = _run_claimed(study, out, claim, workers=workers, scheduler=scheduler, executor=executor,
                               resume=resume, force=force, progress=progress, on_point=on_point, command=command,
                               plots=plots)
    except BaseException:
        claim.release(failed=True)  # removes the folder if the claim made it and nothing was kept in it
        raise
    claim.release(failed=False)
    return outcome


def _check_runs(plan: Plan) -> None:
    """Load each point's weather once in this process (workers forked from it inherit it) and check its
    period and the run's size before any point runs: a period outside the weather, a missing or broken
    weather file, or an output step that would fill the memory fail here in one line, not in every point."""
    from atticsim.forcing.build import period_bounds
    from atticsim.pipeline import resolve_period
    from atticsim.scenario.limits import check_output_rows

    study, seen = plan.study, set()
    for p in plan.points:
        sc = p.scenario
        key = (sc.weather.file, sc.weather.start, sc.weather.end, sc.simulation.output_step)
        if key in seen:
            continue
        seen.add(key)
        frame, meta = _weather(sc.weather.file)
        first, last = resolve_period(frame, sc, study.start, study.end)
        t0, t1 = period_bounds(frame, first, last, str(getattr(meta, "path", None) or sc.weather.file), meta)
        check_output_rows(sc, (t1 - t0).total_seconds(),
                          f"--vary: point {p.index} ({', '.join(f'{k}={v}' for k, v in p.given.items())})")


def _run_claimed(study, out, claim, *, workers, scheduler, executor, resume, force, progress, on_point, command,
                 plots) -> StudyOutcome:
    """run_study's work, in a folder this process has claimed: plan and check, run the points not done yet,
    write the tables, the recommendation and the figures, then the study's record."""
    plan, previous, done, todo = _planned(study, out, resume, force, progress)
    reused = len(plan.points) - len(todo)
    executor, close, backend = _backend(executor, scheduler, workers, len(todo))
    try:
        _prepare_dir(out, resume)
        record = _study_record(plan, previous, command)
        _write_atomic(out / STUDY_JSON, lambda p: p.write_text(json.dumps(record, indent=2, default=str) + "\n"))
    except BaseException:
        if close is not None:
            close()
        raise
    run = _run_points(plan, todo, done, reused, out, executor, close, scheduler, progress, on_point)
    computed, failed, wall, started = run
    if todo and not any(done.get(p.key, {}).get("status") == "ok" for p in plan.points):
        _every_point_failed(plan, done, out, resume, previous)
    table, rec, files, notes = _write_results(plan, done, out, plots, failed)
    record["runs"].append({"started": started, "backend": backend, "computed": computed, "reused": reused,
                           "failed": failed, "wall_s": round(wall, 3)})
    _write_atomic(out / STUDY_JSON, lambda p: p.write_text(json.dumps(record, indent=2, default=str) + "\n"))
    files.insert(0, out / STUDY_JSON)
    files.insert(1, out / JOURNAL)
    return StudyOutcome(out, table, rec, files, computed, reused, failed, wall, backend, notes)


def _planned(study, out, resume, force, progress):
    """The study's checked plan, the earlier record (on resume), the points already done (from the journal)
    and those still to run."""
    if resume and study.seed is None and study.sample == "lhs" and (out / STUDY_JSON).exists():
        try:  # an interrupted Latin-hypercube study resumes with the seed it drew
            study.seed = json.loads((out / STUDY_JSON).read_text())["study"]["seed"]
        except (json.JSONDecodeError, KeyError, TypeError):
            pass
    size = study.points if study.sample == "lhs" else math.prod(len(ax.values) for ax in study.axes)
    if progress is not None and size and size > 500:  # about a millisecond a point: say what the wait is
        progress.write(f"sweep: checking the scenarios of {size:,} points ...\n")
        progress.flush()
    plan = plan_study(study)
    previous = _check_dir(out, plan, resume, force)
    _check_runs(plan)
    wanted = {p.key for p in plan.points}
    done = {}
    if resume:
        for rec in read_journal(out / JOURNAL):
            if rec.get("key") in wanted and rec.get("status") == "ok":
                done[rec["key"]] = rec
    return plan, previous, done, [p for p in plan.points if p.key not in done]


def _backend(executor, scheduler, workers, n_todo):
    """(executor or None, its closing function or None, its name): the caller's executor, a Dask scheduler's,
    a pool of local processes, or this process alone."""
    if executor is not None:
        return executor, None, f"executor {type(executor).__name__}"
    if scheduler:
        executor, close = dask_executor(scheduler)
        return executor, close, f"dask {scheduler}"
    n = min(workers or os.cpu_count() or 1, max(1, n_todo))
    if n > 1:
        executor = process_executor(n)
        return executor, lambda: executor.shutdown(wait=True), f"local processes x{n}"
    return None, None, "this process"


def _run_points(plan, todo, done, reused, out, executor, close, scheduler, progress, on_point):
    """Run the points still to do, each appended to the journal and to ``done`` as it finishes. Returns
    (computed, failed, wall seconds, start time). Interrupted, it cancels what is queued, ends the local
    workers and says what is kept."""
    from atticsim.progress import Progress

    bar = Progress(len(plan.points), reused, progress)
    bar.start()
    journal = Journal(out / JOURNAL)
    t_start = time.perf_counter()
    started = _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds")
    by_key = {p.key: p for p in plan.points}
    counts = {"computed": 0, "failed": 0}

    def finish(rec):
        p = by_key[rec["key"]]
        rec = {**rec, "point": p.index, "given": p.given, "overrides": p.overrides}
        journal.append(rec)
        counts["computed"] += 1
        counts["failed"] += rec["status"] != "ok"
        done[rec["key"]] = rec
        bar.update(rec)
        if on_point is not None:
            on_point(rec, bar.done, bar.total)

    futures = []
    try:
        if executor is None:
            for p in todo:
                finish(run_point(p.task(plan.study)))
        else:
            futures = [executor.submit(run_point, p.task(plan.study)) for p in todo]
            for fut in cf.as_completed(futures):
                try:
                    result = fut.result()
                except cf.process.BrokenProcessPool:
                    raise StudyError(f"a worker process died; the {counts['computed'] + reused} finished points "
                                     f"are kept in {out / JOURNAL}: rerun with --resume") from None
                finish(result)
    except BaseException as exc:
        for fut in futures:
            fut.cancel()
        if close is not None and scheduler is None:
            executor.shutdown(wait=False, cancel_futures=True)
            close = None
        if isinstance(exc, KeyboardInterrupt) and progress is not None:
            kept = counts["computed"] - counts["failed"] + reused
            progress.write(f"\nsweep: stopped; {kept} finished point{'s' if kept != 1 else ''} kept in "
                           f"{out / JOURNAL}: rerun with --resume to continue\n")
        raise
    finally:
        journal.close()
        bar.close()
        if close is not None:
            close()
    return counts["computed"], counts["failed"], time.perf_counter() - t_start, started


def _write_results(plan, done, out, plots, failed):
    """points.csv/.parquet, pareto.csv, recommendation.json and the figures. Returns (table, recommendation,
    files written, notes)."""
    study = plan.study
    table = build_table(plan, done)
    files = []

    def put(name, write):
        _write_atomic(out / name, write)
        files.append(out / name)

    put("points.csv", lambda p: table.to_csv(p, index=False))
    put("points.parquet", lambda p: table.to_parquet(p, index=False))
    rec, front, eligible, mask, cols = _recommendation(plan, table, done)
    put("pareto.csv", lambda p: front.to_csv(p, index=False))
    put("recommendation.json", lambda p: p.write_text(json.dumps(rec, indent=2, default=_plain) + "\n"))
    notes = list(plan.notes)
    if plots:
        from atticsim.study.plots import map_axes, pareto_figure, short_cycling_map

        keys, why = map_axes(study)
        if keys:
            put("short_cycling_map.png", lambda p: short_cycling_map(
                table, keys, p, study.starts_limit, rec.get("point"), study.comfort_limit_c))
        else:
            notes.append(f"no short-cycling map: {why}")
        put("pareto.png", lambda p: pareto_figure(table, eligible, mask, cols, p, rec))
    if failed or (table["status"] != "ok").any():
        bad = table[table["status"] != "ok"]
        notes.append(f"{len(bad)} point(s) failed, e.g. point {int(bad['point'].iloc[0])}: {bad['error'].iloc[0]}"
                     " (rerun with --resume to retry them)")
    return table, rec, files, notes


def _recommendation(plan, table, done):
    """The rule's recommendation (with its runner-up, edges, circuit parts and warnings) and the Pareto front
    over the qualifying points (the trade-off left once the fan does not short-cycle). Returns
    (recommendation, front, qualifying mask, front mask, objective columns)."""
    from atticsim.study.analysis import (OBJECTIVE_NAMES, circuit_parts, edges, pareto_columns, pareto_mask,
                                         qualifying, recommend)

    study = plan.study
    heat_col = HEAT_METRICS[study.heat_metric]
    rec = recommend(table, study.starts_limit, heat_col, study.short_cycles_allowed, study.heat_tolerance)
    cols = pareto_columns(heat_col)
    eligible = qualifying(table, study.starts_limit, study.short_cycles_allowed, heat_col)
    mask = np.zeros(len(table), bool)
    if eligible.any() and all(c in table for c in cols):
        mask[eligible] = pareto_mask(table.loc[eligible, cols].to_numpy(dtype=float))
    front = table[mask].sort_values("fan_energy_kwh", kind="mergesort")
    rec["pareto_points"] = [int(i) for i in front["point"]]
    rec["pareto_objectives"] = [{"column": c, "meaning": OBJECTIVE_NAMES.get(c, c), "goal": "minimise"}
                                for c in cols]
    rec["pareto_among"] = "qualifying points (step 1 of the rule)"
    rec["on_edge"], rec["edges"] = [], []
    point_warnings = []
    if rec.get("point") is not None:
        rec.update({k: v for k, v in _describe(plan, table, rec["point"]).items() if k != "point"})
        if rec.get("runner_up") is not None:
            rec["runner_up"] = _describe(plan, table, rec["runner_up"])
        rec["edges"] = edges(table, rec["point"], study.axes, sampled=study.sample == "lhs")
        rec["on_edge"] = [e["key"] for e in rec["edges"]]
        parts = circuit_parts(plan.points[rec["point"]].scenario)
        if parts is not None:
            rec["circuit_parts"] = parts
        point_warnings = list(done.get(plan.points[rec["point"]].key, {}).get("warnings") or [])
    rec["warnings"] = list(dict.fromkeys(plan.warnings + point_warnings))
    rec["comfort_limit_c"] = study.comfort_limit_c
    return rec, front, eligible, mask, cols


def _describe(plan, table, point) -> dict:
    """A point as recommendation.json gives it: its number, varied values (SI and as given), figures and
    overrides."""
    row = table[table["point"] == point].iloc[0]
    return {"point": int(point),
            "values": {k: _plain(row[k]) for k in plan.points[0].given},
            "given": {k: row[f"{k}_given"] for k in plan.points[0].given},
            "figures": {k: _plain(row[k]) for k in (
                "starts_per_day", "fan_starts", "max_starts_per_hour", "short_cycles", "cycle_minutes_median",
                "fan_run_hours", "fan_energy_kwh", "attic_air_max_c", "degree_hours_above_limit",
                "ceiling_heat_gain_kwh", "net_benefit_kwh", "hysteresis_k") if k in row},
            "overrides": plan.points[point].overrides}
