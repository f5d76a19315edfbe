"""The short human summary printed on the terminal, in SI or IP units."""

from __future__ import annotations

from atticsim.report.cautions import caution_text
from atticsim.units import IP_FACTORS, c_to_f, k_to_delta_f


def season_lines(s: dict, energy, house, ip: bool = False) -> list[str]:
    """The season books in a few lines: days of each season, what the fan saves while the rooms are cooled,
    what it adds while they are heated, and the net at the meter (``energy`` formats kWh in the units)."""
    from atticsim.forcing.seasons import rule_label

    if s.get("net_benefit_kwh") is None:
        return []
    def days(k):
        return f"{k} day" if k == 1 else f"{k} days"

    lines = [f"  seasons: {days(s['days_cooling'])} cooled, {days(s['days_heating'])} heated, "
             f"{days(s['days_neither'])} neither ({rule_label(house, ip)})"]
    air = s.get("airflow_model") == "balance"
    if s["days_cooling"]:
        lines.append(f"  while cooled: the fan keeps {energy(s['ceiling_heat_kept_out_cooling_kwh'])} of ceiling heat out "
                     f"of the rooms (saves {s['cooling_savings_kwh']:.2f} kWh of electricity at COP {s['cooling_cop']:g})"
                     + (f"; the air it draws adds {energy(s['air_heat_added_cooling_kwh'])} (costs "
                        f"{s['cooling_air_cost_kwh']:.2f} kWh)" if air else ""))
    if s["days_heating"]:
        lines.append(f"  while heated: extra heat lost with the fan {energy(s['ceiling_heat_loss_added_heating_kwh'])} "
                     f"through the ceiling" + (f" and {energy(s['air_heat_loss_added_heating_kwh'])} with the air it "
                                               f"draws" if air else "")
                     + f": {s['heating_penalty_kwh']:.2f} kWh of {s['heating_penalty_carrier']} for heating "
                       f"(efficiency {s['heating_efficiency']:g})")
    fuel = s["heating_penalty_carrier"] == "fuel" and s["days_heating"]
    lines.append(f"  net benefit of the fan: {s['net_benefit_kwh']:+.2f} kWh of electricity at the meter (savings"
                 f"{' - air cost' if air else ''} - fan{' - heating' if not fuel and s['days_heating'] else ''}; "
                 f"negative = costs more than it saves)"
                 + (f", and {s['heating_penalty_kwh']:.2f} kWh of fuel besides" if fuel else ""))
    return lines


def summary_text(result, units: str = "si") -> str:
    """A few lines a technician reads at a glance.

    Parameters
    ----------
    result : SimulationResult
    units : {"si", "ip"}
    """
    s = result.summary
    ip = units == "ip"

    def temp(c):
        return f"{c_to_f(c):.1f} °F" if ip else f"{c:.1f} °C"

    def energy(kwh):
        if kwh is None:
            return "n/a"
        return f"{kwh * IP_FACTORS['energy_kwh'][0]:,.0f} Btu" if ip else f"{kwh:.2f} kWh"

    sc = result.scenario
    lines = [
        f"{sc.house.name} — {s['period_start'][:10]} to {s['period_end'][:10]} ({s['days']:.1f} days)",
        f"  fan: {s['fan_starts']} starts, {s['fan_run_hours']:.1f} h run, {s['fan_energy_kwh']:.2f} kWh electric",
    ]
    per_day, starts_kwh = s.get("fan_starts_per_day"), s.get("fan_start_energy_kwh")
    if per_day is not None and s["days"] > 1.0:
        lines.append(f"  starts: {per_day:.1f} per day" + (f", costing {starts_kwh * 1000.0:.0f} Wh of the fan's "
                                                            f"electricity" if starts_kwh else ""))
    med = s["cycle_minutes_median"]
    lines.append(f"  runs: median {med:.1f} min, {s['short_cycles']} shorter than "
                 f"{s['short_cycle_threshold_min']:.0f} min" if med is not None else
                 "  runs: no complete on/off cycle in the period")
    rise = s["attic_air_max_c"] - s["outdoor_air_max_c"]
    rise_txt = f"{k_to_delta_f(rise):+.1f} °F" if ip else f"{rise:+.1f} K"
    lines.append(f"  attic air: max {temp(s['attic_air_max_c'])} ({rise_txt} vs outdoor max), "
                 f"mean {temp(s['attic_air_mean_c'])}; roof deck max {temp(s['deck_max_c'])}")
    gain, nofan = s["ceiling_heat_gain_kwh"], s["ceiling_heat_gain_no_fan_kwh"]
    lines.append(f"  ceiling heat flow into the rooms: {energy(gain)} with the fan, {energy(nofan)} without"
                 + (" (negative: the rooms lose heat through the ceiling)" if min(gain, nofan or 0.0) < 0 else ""))
    if s.get("airflow_model") == "balance":
        def flow(q):
            return "n/a" if q is None else (f"{q * IP_FACTORS['flow'][0]:.0f} cfm" if ip else f"{q:.3f} m3/s")

        def vol(v):
            return "n/a" if v is None else (f"{v * IP_FACTORS['volume'][0]:,.0f} ft3" if ip else f"{v:,.0f} m3")

        ach = s["natural_ach_mean"]
        lines.append(f"  airflow: fan {flow(s['fan_flow_mean_m3s'])} while running; natural "
                     f"{'n/a' if ach is None else f'{ach:.1f}'} air changes/h with the fan off")
        lines.append(f"  conditioned air drawn through the ceiling: {vol(s['conditioned_air_drawn_m3'])} "
                     f"(without the fan {vol(s['conditioned_air_drawn_no_fan_m3'])}), load on the rooms "
                     f"{energy(s['conditioned_air_load_kwh'])}; house depressurised by the fan up to "
                     f"{s['house_depressurisation_max_pa']:.2f} Pa")
    lines += season_lines(s, energy, sc.house, ip)
    lines.append(f"  energy books close to {s['energy_balance_error_pct']:.2e} %")
    for w in s.get("warnings", []):
        lines.append(f"  WARNING: {w}")
    for note in result.notes:
        lines.append(f"  note: {note}")
    lines.append(caution_text())
    return "\n".join(lines)
