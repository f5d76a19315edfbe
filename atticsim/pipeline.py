"""Run a scenario: weather -> forcing -> network -> hybrid integration (with and without the fan) -> results.

This is the Python API the CLI wraps::

    from atticsim import load_scenario, simulate
    sc = load_scenario("scenarios/heron_lane_bungalow.toml", ["fan.flow=1500 cfm"])
    res = simulate(sc, start="2025-07-01", end="2025-07-07")
    res.summary["fan_starts"], res.timeseries, res.events
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from atticsim.forcing.build import build_forcing, period_bounds
from atticsim.forcing.weather import load_weather
from atticsim.assembly import build_network, controller_from_scenario
from atticsim.network.model import BOOKS
from atticsim.hybrid.driver import HybridRun
from atticsim.hybrid.solve import integrate
from atticsim.beside import Beside

DAY = 86400.0


@dataclass
class Period:
    """The simulated period: tz-aware start/end and the same as seconds on the forcing's clock."""

    start: pd.Timestamp
    end: pd.Timestamp
    t_start: float
    t_end: float


@dataclass
class RawRuns:
    """Everything the metrics need: the network, forcing, period and both hybrid runs."""

    network: object
    forcing: object
    period: Period
    output_times: np.ndarray
    with_fan: HybridRun
    without_fan: HybridRun
    y_start_fan: np.ndarray
    y_start_nofan: np.ndarray
    controller: object = None
    notes: list = field(default_factory=list)


def _spin_up(network, forcing, controller, period, y, days, simulation, cancel=None):
    """Repeat the period's first day ``days`` times to approach a periodic start state.

    The books are reset after each repetition; the returned state is the start state of the run (the
    controller starts afresh from it).
    """
    span = min(DAY, period.t_end - period.t_start)
    n_nodes = network.n_nodes
    for _ in range(days):
        t1 = period.t_start + span
        run = integrate(network, forcing, controller, period.t_start, t1, y, np.array([period.t_start, t1]),
                        simulation, cancel=cancel)
        y = run.y_end.copy()
        y[n_nodes:] = 0.0
    return y


def resolve_period(frame, scenario, start=None, end=None, months=None, year=None):
    """The period's start and end strings: explicit dates win, then a month range or season
    (``months``, in ``year`` or the weather's first year), then the scenario's own dates."""
    if months and (start or end):
        raise ValueError("--months: give either --months or --start/--end, not both")
    if months:
        from atticsim.forcing.build import months_period

        return months_period(months, year if year is not None else int(frame.index[0].year))
    return start or scenario.weather.start, end or scenario.weather.end


#: Finished no-fan runs kept for reuse (key -> (HybridRun, start state)); see ``run_raw(reuse_no_fan=True)``.
_NO_FAN_RUNS: dict = {}
_NO_FAN_KEEP = 4


def _no_fan_key(no_fan_scenario, frame, period, pressure):
    """What the no-fan run depends on: the scenario with the fan disabled (less the thermostat when it is a
    set-point pair, which then affects neither the network nor the disabled fan), the weather's content and
    the period. A circuit thermostat stays in the key: its divider heats the sensor node."""
    import hashlib
    import json

    dump = no_fan_scenario.model_dump(mode="json")
    if dump.get("thermostat", {}).get("kind") == "setpoints":
        dump.pop("thermostat")
    weather_hash = int(pd.util.hash_pandas_object(frame, index=True).sum())
    text = json.dumps([dump, weather_hash, period.t_start, period.t_end, pressure], sort_keys=True, default=str)
    return hashlib.sha256(text.encode()).hexdigest()


#: Forcings kept for reuse by study points (key -> (weather frame, Forcing)); see :func:`_forcing`.
_FORCINGS: dict = {}


def _forcing(frame, meta, scenario, t0, t1, source, reuse):
    """build_forcing, or with ``reuse`` the forcing an earlier call in this process built from the same weather
    frame (the very object, kept alive with the entry), site, weather options, roof, house, rooms' temperature
    and period."""
    if not reuse:
        return build_forcing(frame, meta, scenario, t0, t1, source=source)
    import json

    parts = [scenario.site.model_dump(mode="json"), scenario.weather.model_dump(mode="json"),
             scenario.roof.model_dump(mode="json"), scenario.house.model_dump(mode="json"),
             scenario.ceiling.room_temperature, str(t0), str(t1), source]
    key = (id(frame), json.dumps(parts, sort_keys=True, default=str))
    kept = _FORCINGS.get(key)
    if kept is None or kept[0] is not frame:
        while len(_FORCINGS) >= _NO_FAN_KEEP:
            _FORCINGS.pop(next(iter(_FORCINGS)))
        kept = _FORCINGS[key] = (frame, build_forcing(frame, meta, scenario, t0, t1, source=source))
    return kept[1]


def no_fan_output_times(output_times, period, forcing, simulation) -> np.ndarray:
    """The output instants of the no-fan run: every m-th instant of the with-fan run's grid (and the period's
    end), m as large as it goes while the run stays the same.

    Nothing reads the no-fan run between the local midnights: the metrics take its books at the days' first
    output instants, at the period's ends and at its end (:func:`atticsim.results.metrics.season_days`), so a
    year's 84 MB of rows shrink to 4 MB. m is kept only where every local midnight of the period stays on the
    coarser grid and the compiled solver's check step and segment length come out as on the full grid
    (:func:`atticsim.hybrid.compiled.grid_steps`): its segments, and so the no-fan run, are then the same to
    the last bit (a test holds the books equal). The reference solver keeps the full grid.
    """
    if simulation.solver != "fast" or output_times.size < 3:
        return output_times
    from atticsim.hybrid.compiled import grid_steps

    step = float(output_times[1] - output_times[0])
    fine = grid_steps(output_times, period.t_start)
    if fine is None:
        return output_times
    midnight = (period.start.normalize() + pd.Timedelta(days=1) - forcing.times[0]).total_seconds()
    for m in range(int(fine[2] // step), 1, -1):
        coarse = step * m
        if 86400.0 % coarse or (midnight - period.t_start) % coarse:
            continue
        times = np.append(output_times[:-1][::m], output_times[-1])
        steps = grid_steps(times, period.t_start)
        if steps is not None and steps[1:] == fine[1:]:
            return times
    return output_times


def model_notes(scenario) -> list[str]:
    """What the model took from presets and geometry rather than from the scenario's own keys."""
    from atticsim.scenario.geometry import attic_geometry

    g = attic_geometry(scenario)
    how = f"inferred from its {len(scenario.roof.planes)} plane(s)" if g.inferred else "as given"
    notes = [f"attic: {g.shape} roof ({how}), ridge {g.height:.2f} m above the floor"]
    if scenario.attic.air_layers == 2:
        notes.append(f"air layers: the upper holds {g.upper_volume_share:.0%} of the air and faces "
                     f"{g.upper_deck_share:.0%} of the deck (interface {g.interface_height:.2f} m up)")
    if scenario.simulation.solver == "reference":
        notes.append(f"solver: reference (scipy's LSODA, rtol {scenario.simulation.rtol:g})")
    return notes + scenario.roof.optics()[1]


def _say(progress, stage: str) -> None:
    if progress is not None and stage:
        progress(stage)


def period_words(period) -> str:
    """The period as a person says it: ``2025-07-01 to 2025-07-07`` (the last day included)."""
    last = period.end - pd.Timedelta(seconds=1)
    first, last = period.start.strftime("%Y-%m-%d"), last.strftime("%Y-%m-%d")
    return first if first == last else f"{first} to {last}"


def run_raw(scenario, weather=None, start=None, end=None, include_no_fan=True, months=None,
            year=None, reuse_no_fan=False, controller=None, progress=None) -> RawRuns:
    """Integrate the scenario with the fan under thermostat control and, optionally, with no fan.

    Parameters
    ----------
    scenario : Scenario
        Validated scenario.
    weather : (DataFrame, meta), optional
        A normalised weather frame and its metadata; default: the scenario's weather file.
    start, end : str, optional
        Period overrides (ISO date or instant, local standard time; a date-only end is inclusive).
    include_no_fan : bool
        Also run the same period with the fan disabled (for the ceiling gain without the fan).
    reuse_no_fan : bool
        Reuse the no-fan run of an earlier call in this process when nothing it depends on differs
        (studies that vary only the thermostat run it once per worker instead of once per point), and the
        forcing when the weather frame, site, weather options, roof and period are the same.
    controller : object, optional
        Drives the fan instead of the scenario's thermostat (e.g. :class:`atticsim.hybrid.controller.LoggedFan`
        to follow a logged fan state; its instants on the forcing's clock, seconds from
        ``RawRuns.forcing.times[0]``; or a log made with ``LoggedFan.at_instants``, which this puts on it).
    progress : callable, optional
        ``progress(stage)`` is called with each stage's words as it begins ("simulating 2025-07-01 to 2025-07-07
        with the fan", ...); ``progress(stage, fraction)`` gives the share of the stage done [0-1] where it is
        known. :class:`atticsim.progress.Stages` shows both.
    """
    if weather is None:
        _say(progress, "reading the weather")
        weather = load_weather(scenario.weather.file, year=year)
    frame, meta = weather[0], weather[1]
    source = getattr(meta, "path", None) or scenario.weather.file
    start, end = resolve_period(frame, scenario, start, end, months, year)
    t0, t1 = period_bounds(frame, start, end, str(source), meta)
    _say(progress, "sun on each roof plane and the sky")
    forcing = _forcing(frame, meta, scenario, t0, t1, str(source), reuse_no_fan)
    base = forcing.times[0]
    period = Period(t0, t1, (t0 - base).total_seconds(), (t1 - base).total_seconds())
    sim = scenario.simulation
    output_times = np.arange(period.t_start, period.t_end, sim.output_step)
    output_times = np.append(output_times, period.t_end)

    pressure = float(np.nanmean(frame["pressure"])) if "pressure" in frame else 101325.0
    network = build_network(scenario, pressure=pressure)
    if controller is None:
        controller = controller_from_scenario(scenario)
    elif hasattr(controller, "clocked"):
        controller = controller.clocked(forcing.times[0])  # a log given by instants, on this forcing's clock
    y0 = np.zeros(network.n_nodes + len(BOOKS))
    y0[:network.n_nodes] = forcing.at(period.t_start)[0]

    no_fan_scenario = scenario.model_copy(update={"fan": scenario.fan.model_copy(update={"enabled": False})})

    words = period_words(period)

    def one(enabled: bool, outputs=output_times, stage="", cancel=None):
        net = network if enabled else build_network(no_fan_scenario, pressure=pressure)
        ctl = controller if enabled else None
        _say(progress, stage)
        y_start = _spin_up(net, forcing, ctl, period, y0.copy(), sim.spinup_days, sim, cancel)
        report = (lambda fraction: progress(stage, fraction)) if progress is not None and stage else None
        run = integrate(net, forcing, ctl, period.t_start, period.t_end, y_start, outputs, sim, progress=report,
                        cancel=cancel)
        if report is not None:
            report(1.0)
        return run, y_start

    no_fan_outputs = no_fan_output_times(output_times, period, forcing, sim)
    key = _no_fan_key(no_fan_scenario, frame, period, pressure) if include_no_fan and reuse_no_fan else None
    # the no-fan run, when one is needed, goes on in a thread beside the fan's (the compiled solver lets go
    # of the GIL, so on a machine with two cores the two take the time of the longer); it says nothing
    beside = (Beside(lambda cancel: one(False, no_fan_outputs, cancel=cancel))
              if include_no_fan and (key is None or key not in _NO_FAN_RUNS) else None)
    try:
        with_fan, y_fan = one(scenario.fan.enabled, output_times,
                              f"simulating {words} " + ("with the fan" if scenario.fan.enabled else "(fan disabled)"))
        if beside is not None:
            _say(progress, f"simulating {words} without the fan")  # (what is left of it)
            without_fan, y_nofan = beside.result()
    except BaseException:
        if beside is not None:
            beside.stop()  # ended here, not left running in compiled code while the process exits
        raise
    if key is not None:
        if beside is not None:
            while len(_NO_FAN_RUNS) >= _NO_FAN_KEEP:
                _NO_FAN_RUNS.pop(next(iter(_NO_FAN_RUNS)))
            for array in (without_fan.t, without_fan.y, without_fan.fan, without_fan.y_end, y_nofan):
                array.setflags(write=False)  # shared with every caller: read-only, so none can change it
            _NO_FAN_RUNS[key] = (without_fan, y_nofan)
        kept, y_nofan = _NO_FAN_RUNS[key]
        # the arrays are shared (read-only); fresh lists for this caller (the airflow states are frozen)
        without_fan = dataclasses.replace(kept, events=list(kept.events), air_updates=list(kept.air_updates),
                                          notes=list(kept.notes))
    elif not include_no_fan:
        without_fan, y_nofan = None, None
    notes = (list(getattr(meta, "notes", [])) + list(forcing.notes) + model_notes(scenario) + with_fan.notes
             + (without_fan.notes if without_fan is not None else []))
    return RawRuns(network, forcing, period, output_times, with_fan, without_fan, y_fan, y_nofan,
                   controller=controller, notes=notes)


def simulate(scenario, weather=None, start=None, end=None, months=None, year=None, reuse_no_fan=False,
             summary_only=False, progress=None):
    """Simulate a scenario and compute its results (time series, events, summary, daily and monthly figures).

    Parameters
    ----------
    scenario : Scenario
    weather : (DataFrame, meta), optional
        Preloaded weather; default the scenario's ``weather.file``.
    start, end : str, optional
        ISO dates (end inclusive) overriding the scenario's period.
    months : str, optional
        A month range (``"jun-aug"``) or season (``"summer"``) instead of dates.
    year : int, optional
        Calendar year to lay a typical-year file on (and the year of ``months``).
    reuse_no_fan : bool
        See :func:`run_raw`.
    summary_only : bool
        Summary and events only: no daily or monthly figures, a time series of attic air and fan state
        (what a study point needs; see :func:`atticsim.results.metrics.build_result`).
    progress : callable, optional
        Called with each stage's words as it begins (see :func:`run_raw`).

    Returns
    -------
    atticsim.results.metrics.SimulationResult
    """
    from atticsim.results.metrics import build_result

    raw = run_raw(scenario, weather, start, end, include_no_fan=True, months=months, year=year,
                  reuse_no_fan=reuse_no_fan, progress=progress)
    _say(progress, "temperatures, flows and the season's figures")
    return build_result(scenario, raw, summary_only=summary_only)


def design_day(scenario, date, t_max, daily_range, dew_point=None, wind_speed=3.4, tolerance=0.05,
               max_days=64, progress=None):
    """Simulate a clear design day repeated until the attic's response is periodic.

    The day is repeated as spin-up (2, 4, 8, ... days) until every node temperature at the end of the
    reported day is within ``tolerance`` [K] of its value at the start; the result is that periodic day.
    The summary gains ``periodic_residual_k`` and ``spinup_days_used``.

    Parameters
    ----------
    scenario : Scenario
        Its site gives the place.
    date : str
        ISO date of the design day.
    t_max, daily_range : float
        Design maximum dry-bulb [degC] and daily range [K].
    dew_point, wind_speed : float, optional
        Dew point [degC] (default the day's minimum dry-bulb) and wind speed [m/s].
    progress : callable, optional
        Called with each stage's words as it begins (each try of the repeated days).
    """
    from atticsim.forcing.design_day import design_day_weather
    from atticsim.results.metrics import build_result

    site = scenario.site
    weather = design_day_weather(site.latitude, site.longitude, site.altitude, site.utc_offset, date, t_max,
                                 daily_range, dew_point, wind_speed)
    days = 2
    while True:
        _say(progress, f"the design day after {days} repeated days, with and without the fan")
        sim = scenario.simulation.model_copy(update={"spinup_days": days})
        sc = scenario.model_copy(update={"simulation": sim})
        raw = run_raw(sc, weather, start=date, end=date, include_no_fan=True)
        n = raw.network.n_nodes
        residual = float(np.max(np.abs(raw.with_fan.y_end[:n] - raw.y_start_fan[:n])))
        residual_nf = float(np.max(np.abs(raw.without_fan.y_end[:n] - raw.y_start_nofan[:n])))
        residual = max(residual, residual_nf)
        if residual < tolerance or days >= max_days:
            break
        days *= 2
    _say(progress, "temperatures, flows and the day's figures")
    result = build_result(sc, raw)
    result.summary["periodic_residual_k"] = residual
    result.summary["spinup_days_used"] = days
    if residual >= tolerance:
        result.notes.append(f"not periodic within {tolerance} K after {days} repeated days "
                            f"(residual {residual:.3f} K)")
    return result
