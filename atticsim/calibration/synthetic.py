"""Synthetic logger data: what a logger would record in a simulated attic, with a logger's noise and drift.

For testing the fit against a known truth, for the invented demo log, and for planning a logging campaign
(will a week of this probe tell these keys apart?). The readings are the model's own values at the stamps
(:func:`atticsim.calibration.fit.model_at`) plus white noise of ``noise_k`` and a slow drift (a random wander of
``drift_k`` over about ``drift_hours``): INVENTED data, not a measurement.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from atticsim.calibration.measured import SIGNATURE


def synthetic_log(scenario, weather=None, start=None, end=None, columns=("attic_air_c", "sensor_c"),
                  step_s: float = 300.0, noise_k: float = 0.15, drift_k: float = 0.0, outdoor_noise_k: float = 0.3,
                  fan: bool = True, outdoor: bool = True, deck_plane: int = 0, seed: int = 0,
                  drift_hours: float = 12.0) -> pd.DataFrame:
    """Readings a logger would take in the simulated attic.

    Parameters
    ----------
    scenario : Scenario
        The house at its "true" values (the fan under its own thermostat).
    weather : (DataFrame, meta), optional
        Default the scenario's weather.
    start, end : str
        The log's first and last instants (ISO, on the weather's clock).
    columns : sequence of str
        Measured temperature columns (:data:`atticsim.calibration.measured.TEMPERATURE_COLUMNS`).
    step_s : float
        Sampling step [s] (a multiple of 60 s).
    noise_k : float
        White noise on every temperature column (standard deviation) [K].
    drift_k, drift_hours : float
        A slow drift on every temperature column, each its own: a random wander of standard deviation
        ``drift_k`` [K] whose values stay alike over about ``drift_hours`` [h] (:func:`wander`).
    outdoor_noise_k : float
        White noise of the outdoor column [K] (no drift).
    fan, outdoor : bool
        Add the fan's state and the outdoor air.
    deck_plane : int
        The roof plane of ``deck_c``.
    seed : int
        Seed of the random numbers (the same seed gives the same readings).

    Returns
    -------
    pandas.DataFrame
        Columns as a logger file names them, tz-aware index ``time``.
    """
    from atticsim.calibration.fit import model_at
    from atticsim.pipeline import run_raw

    if step_s % 60:
        raise ValueError(f"step_s must be a multiple of 60 s (got {step_s:g})")
    sc = scenario.model_copy(update={"simulation": scenario.simulation.model_copy(update={"output_step": 60.0})})
    raw = run_raw(sc, weather, start=start, end=end, include_no_fan=False)
    span = raw.period.t_end - raw.period.t_start
    seconds = np.arange(0.0, span + 1e-6, step_s)
    rng = np.random.default_rng(seed)
    values = model_at(raw, list(columns), seconds, deck_plane)
    data = {c: np.round(v + rng.normal(0.0, noise_k, v.size) + wander(seconds, drift_k, drift_hours, rng), 2)
            for c, v in zip(columns, values)}
    if outdoor:
        out = model_at(raw, ["outdoor_c"], seconds)[0]
        data["outdoor_c"] = np.round(out + rng.normal(0.0, outdoor_noise_k, out.size), 2)
    if fan:
        run = raw.with_fan
        k = np.searchsorted(run.t - raw.period.t_start, seconds, side="right") - 1
        data["fan_on"] = run.fan[np.clip(k, 0, run.fan.size - 1)].astype(int)
    index = raw.period.start + pd.to_timedelta(seconds, unit="s")
    return pd.DataFrame(data, index=pd.DatetimeIndex(index, name="time"))


def wander(seconds: np.ndarray, sd: float, hours: float, rng) -> np.ndarray:
    """A slow random wander of a logger's error: an Ornstein-Uhlenbeck process of standard deviation ``sd`` [K]
    and correlation time ``hours`` [h] at instants ``seconds`` (its exact discretisation,
    x_k = a x_(k-1) + sd sqrt(1 - a^2) e_k with a = exp(-dt / tau); Gillespie 1996, Phys. Rev. E 54(2), from
    memory), starting from its stationary spread."""
    if sd <= 0:
        return np.zeros(len(seconds))
    tau = hours * 3600.0
    x = np.empty(len(seconds))
    x[0] = rng.normal(0.0, sd)
    for k in range(1, len(seconds)):
        a = np.exp(-(seconds[k] - seconds[k - 1]) / tau)
        x[k] = a * x[k - 1] + sd * np.sqrt(1.0 - a * a) * rng.normal()
    return x


def write_log(frame: pd.DataFrame, path, header: dict | None = None, notes=()) -> None:
    """Write readings as a logger file (:mod:`atticsim.calibration.measured`'s layout).

    Parameters
    ----------
    frame : pandas.DataFrame
        Readings with a tz-aware ``time`` index.
    path : str or path-like
    header : dict, optional
        ``# key: value`` lines (house, site, logger, invented).
    notes : sequence of str
        ``# note:`` lines.
    """
    lines = [SIGNATURE] + [f"# {k}: {v}" for k, v in (header or {}).items()] + [f"# note: {n}" for n in notes]
    out = frame.copy()
    text = out.index.strftime("%Y-%m-%dT%H:%M:%S%z")
    out.index = text.str[:-2] + ":" + text.str[-2:]
    out.index.name = "time"
    with open(path, "w", encoding="utf-8", newline="") as fh:
        fh.write("\n".join(lines) + "\n")
        out.to_csv(fh, lineterminator="\n")


__all__ = ["synthetic_log", "write_log"]
