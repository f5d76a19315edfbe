"""Words and units for the figures a run reports, read from the keys' names, so that a key added to the
summary later shows in every report without a change here (a label below only improves the words)."""

from __future__ import annotations

#: Unit endings of keys and columns -> unit shown (longest ending first).
UNITS = (
    ("_w_m2", "W/m²"), ("_m3_s", "m³/s"), ("_m3s", "m³/s"), ("_m_s", "m/s"), ("_kwh", "kWh"), ("_kbtu", "kBtu"),
    ("_btu_h_ft2", "Btu/h·ft²"), ("_btu_h", "Btu/h"), ("_cfm", "cfm"), ("_ft3", "ft³"), ("_ft2", "ft²"),
    ("_in_wc", "in. w.c."), ("_mph", "mph"), ("_delta_f", "°F (difference)"), ("_m3", "m³"), ("_m2", "m²"),
    ("_pct", "%"), ("_pa", "Pa"), ("_hours", "h"), ("_min", "min"), ("_per_k", "W/K"), ("_w", "W"),
    ("_c", "°C"), ("_f", "°F"), ("_k", "K"), ("_h", "h"), ("_s", "s"), ("_m", "m"),
)

#: Plain words for known keys (the unit comes from the ending).
LABELS = {
    "period_start": "period starts", "period_end": "period ends", "days": "days simulated",
    "fan_run_hours": "fan run time", "fan_starts": "fan starts", "fan_energy_kwh": "fan electricity",
    "fan_starts_per_day": "fan starts per day", "fan_start_energy_kwh": "electricity of the motor's starts (included in the fan electricity)",
    "short_cycles": "short cycles (runs shorter than the short-cycle time)",
    "cycle_minutes_median": "median run length [min]",
    "attic_air_max_c": "attic air, highest", "attic_air_mean_c": "attic air, mean",
    "attic_upper_air_max_c": "upper attic air, highest", "outdoor_air_max_c": "outdoor air, highest",
    "deck_max_c": "roof deck underside, highest", "sensor_max_c": "sensor, highest",
    "ceiling_heat_gain_kwh": "heat into the rooms through the ceiling, with the fan",
    "ceiling_heat_gain_no_fan_kwh": "heat into the rooms through the ceiling, without the fan",
    "solar_absorbed_kwh": "sun absorbed by the roof", "ventilation_heat_removed_kwh": "heat carried out by the attic's air",
    "energy_balance_error_pct": "energy books' closure error (with the fan)",
    "energy_balance_error_no_fan_pct": "energy books' closure error (without the fan)",
    "short_cycle_threshold_min": "short-cycle time", "thermostat_kind": "thermostat kind",
    "switch_on_sensor_c": "switch-on (sensor temperature)", "switch_off_sensor_c": "switch-off (sensor temperature)",
    "sensor_above_local_air_max_k": "sensor above its local air, most", "sensor_placement": "sensor placement",
    "airflow_model": "airflow model", "fan_flow_mean_m3s": "fan flow while running, mean",
    "natural_ach_mean": "natural air changes per hour with the fan off, mean",
    "conditioned_air_drawn_m3": "conditioned air drawn into the attic, with the fan",
    "conditioned_air_drawn_no_fan_m3": "conditioned air drawn into the attic, without the fan",
    "conditioned_air_load_kwh": "load of that air on the cooling, with the fan",
    "conditioned_air_load_no_fan_kwh": "load of that air on the cooling, without the fan",
    "house_depressurisation_max_pa": "house depressurised by the fan, most",
    "net_benefit_kwh": "net benefit at the meter (+ = the fan saves)",
    "periodic_residual_k": "design day: periodic to", "spinup_days_used": "design day: days repeated",
    "month": "month", "date": "day",
}


def split_unit(key: str) -> tuple[str, str]:
    """(name without its unit ending, unit) of a key; unit '' when the ending names none."""
    for ending, unit in UNITS:
        if key.endswith(ending) and len(key) > len(ending):
            return key[: -len(ending)], unit
    return key, ""


def label(key: str) -> str:
    """Words for a key: the known label, else its name with spaces."""
    if key in LABELS:
        return LABELS[key]
    name, _ = split_unit(key)
    return name.replace("_", " ")


def unit(key: str) -> str:
    return "" if key in ("cycle_minutes_median",) else split_unit(key)[1]


def scalar_items(summary: dict):
    """(key, value) of the summary's single figures, in its order (lists, tables and texts of notes left
    to their own sections)."""
    for k, v in summary.items():
        if k in ("warnings", "notes", "cautions") or isinstance(v, (list, dict)):
            continue
        yield k, v
