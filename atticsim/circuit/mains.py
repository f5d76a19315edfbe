"""Mains-side checks of the thermostat: capacitive-dropper supply, bleed resistor, triac, fuse, snubber.

These are design-review arithmetic, not a safety approval: every result carries `MAINS_CAUTION`.

References
----------
.. [1] Capacitive ("transformerless") power supply application notes of microcontroller and semiconductor
       makers: dropper current I = V 2 pi f C; with a bridge into a zener the capacitor's charge swings
       2 C (V_pk - V_z - 2 V_d) every half cycle, so I_dc = 4 f C (V_pk - V_z - 2 V_d).
.. [2] IEC 60335-1 (household appliances, general requirements), clause 22.5: one second after an appliance
       is unplugged, disconnected at the peak of the rated voltage, the voltage between the plug pins shall
       not exceed 34 V; capacitors of 0.1 uF rated capacitance or less are exempt (editions differ on
       "or less"; from memory, checked against a published summary of the clause).
.. [3] Semiconductor makers' application notes on triac power dissipation: P = V_T0 I_T(AV) + r_T I_T(RMS)^2,
       with I_T(AV) = (2 sqrt 2 / pi) I_T(RMS) = 0.9003 I_T(RMS) for full sine-wave conduction.
.. [4] IEC 60127 miniature fuses: rated currents from the R10 series (1, 1.25, 1.6, 2, 2.5, 3.15, 4, 5, 6.3, 8).
"""

from __future__ import annotations

import math
import numbers
from dataclasses import dataclass

#: Printed with every mains-side result.
MAINS_CAUTION = (
    "CAUTION: the thermostat's fan side runs at mains potential, and a capacitive-dropper supply gives NO "
    "isolation: every part of the low-voltage circuit, the thermistor and its wiring included, is at mains "
    "potential and can kill. Build, install and test it only if you are a qualified person, in an insulated, "
    "earthed enclosure with the sensor insulated for mains voltage, follow your local electrical codes and have "
    "the work checked by a licensed electrician; these figures are a design check, not a safety approval.")

#: Usual mains supplies (nominal rms voltage [V], frequency [Hz]).
MAINS_120V_60HZ = (120.0, 60.0)
MAINS_230V_50HZ = (230.0, 50.0)
MAINS_240V_50HZ = (240.0, 50.0)

#: Voltage limit 1 s after unplugging [V] (IEC 60335-1 cl. 22.5) and the capacitance exempt from it [F].
DISCHARGE_LIMIT_V = 34.0
DISCHARGE_EXEMPT_F = 0.1e-6
#: Fuse rated currents [A] (IEC 60127, R10 series).
FUSE_RATINGS = (0.5, 0.63, 0.8, 1.0, 1.25, 1.6, 2.0, 2.5, 3.15, 4.0, 5.0, 6.3, 8.0, 10.0, 12.5, 16.0)
#: Full-wave average over rms of a sine, 2 sqrt(2)/pi [-].
SINE_AVG_OVER_RMS = 2.0 * math.sqrt(2.0) / math.pi


@dataclass(frozen=True)
class MainsParams:
    """Mains-side parts of the thermostat (SI units; defaults are datasheet-typical values, from memory).

    Parameters
    ----------
    line_voltage : float
        Nominal mains voltage [V rms] (120, 230 or 240 class: 90-264 V).
    frequency : float
        Mains frequency [Hz], 50 or 60.
    dropper_capacitance : float
        Dropper capacitor [F].
    zener_voltage : float
        Zener (rail) voltage [V].
    bleed_resistor : float
        Resistor across the dropper capacitor [ohm].
    fan_current : float
        Fan motor running current [A rms].
    line_tolerance : float
        Relative mains tolerance [-]. Default 0.10 (+-10 %, the usual utility band).
    dropper_tolerance : float
        Relative tolerance of the dropper capacitor [-]. Default 0.10 (film capacitor class).
    series_resistor : float
        Inrush-limiting resistor in series with the dropper [ohm]. Default 100.
    diode_drop : float
        Forward drop of one rectifier diode at the dropper current [V]. Default 1.0.
    zener_power_rating : float
        Zener power rating [W]. Default 1.0.
    zener_min_current : float
        Current kept in the zener to hold regulation [A]. Default 0.002.
    comparator_current : float
        Comparator's own supply current [A]. Default 0.001 (dual comparator, datasheet typical).
    fan_start_multiple : float
        Starting over running current of the motor [-]. Default 6 (small induction motors: 3-8).
    triac_current_rating : float
        Triac on-state rms current rating I_T(RMS) [A]. Default 8.
    triac_surge_current : float
        Triac non-repetitive surge peak current I_TSM [A]. Default 80.
    triac_v_t0 : float
        Triac threshold voltage V_T0 [V]. Default 0.85.
    triac_r_t : float
        Triac dynamic resistance r_T [ohm]. Default 0.045.
    triac_rth_jc, triac_rth_cs, triac_rth_ja : float
        Junction-case, case-sink (with insulating pad) and junction-ambient (no sink) thermal resistances
        [K/W]. Defaults 2.0, 0.5, 60.
    triac_tj_max : float
        Maximum junction temperature [degC]. Default 125.
    ambient_c : float
        Air temperature around the triac [degC]. Default 60 (a box in a hot attic).
    fuse_rating : float or None
        Fuse on the triac side [A]; None to have one suggested.
    capacitor_voltage_rating, bridge_voltage_rating : float or None
        Dropper capacitor and bridge voltage ratings [V]; None if not known.
    driver_surge_current : float
        Opto-triac driver's peak surge current [A], which sets the least gate resistor. Default 1.2.
    """

    line_voltage: float
    frequency: float
    dropper_capacitance: float
    zener_voltage: float
    bleed_resistor: float
    fan_current: float
    line_tolerance: float = 0.10
    dropper_tolerance: float = 0.10
    series_resistor: float = 100.0
    diode_drop: float = 1.0
    zener_power_rating: float = 1.0
    zener_min_current: float = 0.002
    comparator_current: float = 0.001
    fan_start_multiple: float = 6.0
    triac_current_rating: float = 8.0
    triac_surge_current: float = 80.0
    triac_v_t0: float = 0.85
    triac_r_t: float = 0.045
    triac_rth_jc: float = 2.0
    triac_rth_cs: float = 0.5
    triac_rth_ja: float = 60.0
    triac_tj_max: float = 125.0
    ambient_c: float = 60.0
    fuse_rating: float | None = None
    capacitor_voltage_rating: float | None = None
    bridge_voltage_rating: float | None = None
    driver_surge_current: float = 1.2

    def __post_init__(self):
        if not (isinstance(self.line_voltage, numbers.Real) and 90.0 <= self.line_voltage <= 264.0):
            raise ValueError(f"mains line_voltage must be 90-264 V rms (120 V or 230-240 V class; got "
                             f"{self.line_voltage!r})")
        if self.frequency not in (50, 60):
            raise ValueError(f"mains frequency must be 50 or 60 Hz (got {self.frequency!r})")
        for name in ("dropper_capacitance", "zener_voltage", "bleed_resistor", "fan_current", "diode_drop",
                     "zener_power_rating", "fan_start_multiple", "triac_current_rating", "triac_surge_current",
                     "triac_rth_jc", "triac_rth_ja", "driver_surge_current"):
            v = getattr(self, name)
            if not (isinstance(v, numbers.Real) and 0.0 < v < math.inf):
                raise ValueError(f"mains {name} must be a positive number (got {v!r})")
        for name in ("series_resistor", "zener_min_current", "comparator_current", "triac_v_t0", "triac_r_t",
                     "triac_rth_cs"):
            v = getattr(self, name)
            if not (isinstance(v, numbers.Real) and 0.0 <= v < math.inf):
                raise ValueError(f"mains {name} must be zero or positive (got {v!r})")
        for name in ("line_tolerance", "dropper_tolerance"):
            v = getattr(self, name)
            if not (isinstance(v, numbers.Real) and 0.0 <= v < 0.5):
                raise ValueError(f"mains {name} must be a fraction between 0 and 0.5 (got {v!r})")
        if not self.ambient_c < self.triac_tj_max:
            raise ValueError("triac ambient temperature must be below its maximum junction temperature")
        for name in ("fuse_rating", "capacitor_voltage_rating", "bridge_voltage_rating"):
            v = getattr(self, name)
            if v is not None and not (isinstance(v, numbers.Real) and v > 0.0):
                raise ValueError(f"mains {name} must be positive or omitted (got {v!r})")
        low_peak = math.sqrt(2.0) * self.line_voltage * (1.0 - self.line_tolerance)
        if not self.zener_voltage + 2.0 * self.diode_drop < low_peak:
            raise ValueError(f"zener voltage plus two diode drops must be below the low-line peak "
                             f"({low_peak:.0f} V) for a capacitive dropper to deliver any current")


@dataclass(frozen=True)
class MainsReport:
    """Results of the mains-side checks (SI units) with plain-language findings.

    Attributes
    ----------
    peak_voltage, peak_voltage_high : float
        Mains peak at nominal and at high line [V].
    dropper_current : float
        Dropper rms current into a short at nominal line, V 2 pi f C [A].
    dc_available_low, dc_available_high : float
        Rectified DC current into the zener node at low line with the least capacitance, and at high line
        with the most [A].
    load_current : float
        Circuit + comparator + zener minimum current [A].
    supply_margin : float
        dc_available_low - load_current [A].
    zener_power : float
        Zener dissipation at high line with the load off (all the current in the zener) [W].
    series_resistor_power : float
        Dissipation of the inrush resistor at high line [W].
    inrush_peak : float
        Peak current into a discharged dropper switched on at the high-line peak [A].
    discharge_time_constant : float
        Bleed resistor times the largest dropper capacitance [s].
    discharge_voltage_1s : float
        Voltage 1 s after unplugging at the nominal peak [V].
    bleed_resistor_max : float
        Largest bleed resistor meeting IEC 60335-1 cl. 22.5 [ohm].
    triac_loss : float
        Triac conduction loss at the running current [W].
    triac_junction_free_air_c : float
        Triac junction temperature without a heat sink [degC].
    heatsink_rth_needed : float or None
        Largest heat-sink thermal resistance (sink to air) that keeps the junction 10 K under its maximum
        [K/W]; None when no sink is needed, NaN when no sink is good enough.
    starting_current : float
        Motor starting current [A rms].
    gate_resistor_min : float
        Least resistor between the opto-triac driver and the triac gate [ohm].
    fuse_suggested : float or None
        Smallest IEC 60127 rating covering 1.25x the running current without exceeding the triac's
        rating [A]; None if none fits.
    findings : tuple of str
        Plain-language checks and reminders.
    caution : str
        MAINS_CAUTION.
    """

    peak_voltage: float
    peak_voltage_high: float
    dropper_current: float
    dc_available_low: float
    dc_available_high: float
    load_current: float
    supply_margin: float
    zener_power: float
    series_resistor_power: float
    inrush_peak: float
    discharge_time_constant: float
    discharge_voltage_1s: float
    bleed_resistor_max: float
    triac_loss: float
    triac_junction_free_air_c: float
    heatsink_rth_needed: float | None
    starting_current: float
    gate_resistor_min: float
    fuse_suggested: float | None
    findings: tuple
    caution: str = MAINS_CAUTION


def dropper_current(line_voltage, frequency, capacitance):
    """Rms current of a dropper capacitor across the mains, I = V 2 pi f C [A] ([1]).

    Parameters
    ----------
    line_voltage : float
        Mains voltage [V rms].
    frequency : float
        Mains frequency [Hz].
    capacitance : float
        Dropper capacitance [F].
    """
    return line_voltage * 2.0 * math.pi * frequency * capacitance


def dropper_dc_current(line_voltage, frequency, capacitance, zener_voltage, diode_drop):
    """Average DC current a dropper and full bridge deliver into a zener, 4 f C (V_pk - V_z - 2 V_d) [A] ([1]).

    Parameters
    ----------
    line_voltage : float
        Mains voltage [V rms].
    frequency : float
        Mains frequency [Hz].
    capacitance : float
        Dropper capacitance [F].
    zener_voltage : float
        Zener voltage [V].
    diode_drop : float
        Drop of one bridge diode [V].
    """
    return 4.0 * frequency * capacitance * max(math.sqrt(2.0) * line_voltage - zener_voltage - 2.0 * diode_drop, 0.0)


def discharge_voltage(peak_voltage, resistance, capacitance, time_s=1.0):
    """Voltage left on a capacitor discharging through a resistor, V_pk exp(-t/RC) [V] (RC circuit law).

    Parameters
    ----------
    peak_voltage : float
        Voltage at disconnection [V].
    resistance : float
        Discharge resistance [ohm].
    capacitance : float
        Capacitance [F].
    time_s : float
        Time after disconnection [s].
    """
    return peak_voltage * math.exp(-time_s / (resistance * capacitance))


def triac_conduction_loss(current_rms, v_t0, r_t):
    """Triac on-state loss for full sine-wave conduction, P = V_T0 0.9003 I_rms + r_T I_rms^2 [W] ([3]).

    Parameters
    ----------
    current_rms : float
        Load current [A rms].
    v_t0 : float
        Threshold voltage [V].
    r_t : float
        Dynamic (slope) resistance [ohm].
    """
    return v_t0 * SINE_AVG_OVER_RMS * current_rms + r_t * current_rms**2


def check_mains(mains, circuit_current):
    """Check the dropper supply, bleed resistor, triac, fuse and snubber of the thermostat.

    Parameters
    ----------
    mains : MainsParams
        Mains-side parts.
    circuit_current : float
        Largest current the low-voltage circuit draws from the rail [A]; e.g.
        ``comparator.supply_current(params, hottest_c, True)`` at the hottest sensor temperature.

    Returns
    -------
    MainsReport
        Figures, findings and the caution.
    """
    if not (isinstance(circuit_current, numbers.Real) and 0.0 <= circuit_current < 1.0):
        raise ValueError(f"circuit supply current must be between 0 and 1 A (got {circuit_current!r})")
    m = mains
    f = m.frequency
    v_lo, v_hi = m.line_voltage * (1.0 - m.line_tolerance), m.line_voltage * (1.0 + m.line_tolerance)
    c_lo, c_hi = (m.dropper_capacitance * (1.0 + s * m.dropper_tolerance) for s in (-1.0, 1.0))
    v_pk, v_pk_hi = math.sqrt(2.0) * m.line_voltage, math.sqrt(2.0) * v_hi
    out = []

    # supply: the worst case for the load is low line with the least capacitance [1]
    i_ac = dropper_current(m.line_voltage, f, m.dropper_capacitance)
    i_dc_lo = dropper_dc_current(v_lo, f, c_lo, m.zener_voltage, m.diode_drop)
    i_dc_hi = dropper_dc_current(v_hi, f, c_hi, m.zener_voltage, m.diode_drop)
    load = circuit_current + m.comparator_current + m.zener_min_current
    margin = i_dc_lo - load
    if margin < 0.0:
        out.append(f"supply too weak: at low line ({v_lo:.0f} V) the dropper gives {i_dc_lo * 1e3:.1f} mA DC but "
                   f"the circuit needs {load * 1e3:.1f} mA (LED, dividers, comparator, zener); use a larger "
                   f"dropper capacitor or a larger LED resistor.")
    elif margin < 0.2 * load:
        out.append(f"supply margin is thin: {margin * 1e3:.1f} mA spare at low line on {load * 1e3:.1f} mA needed.")
    else:
        out.append(f"supply covers the load: {i_dc_lo * 1e3:.1f} mA available at low line for "
                   f"{load * 1e3:.1f} mA needed.")

    # zener: high line, most capacitance, load off -> all the current in the zener (worst case)
    p_z = m.zener_voltage * i_dc_hi
    if p_z > 0.5 * m.zener_power_rating:
        out.append(f"zener dissipates up to {p_z:.2f} W at high line with the load off; its "
                   f"{m.zener_power_rating:.1f} W rating should be at least twice that (derating; common "
                   f"practice).")
    else:
        out.append(f"zener dissipates up to {p_z:.2f} W at high line with the load off (rated "
                   f"{m.zener_power_rating:.1f} W).")

    # inrush resistor: carries the full dropper current; worst at high line
    p_rs = dropper_current(v_hi, f, c_hi) ** 2 * m.series_resistor
    inrush = v_pk_hi / m.series_resistor if m.series_resistor > 0.0 else math.inf
    if m.series_resistor == 0.0:
        out.append("no series resistor: switching on at the mains peak drives an unlimited current spike into "
                   "the bridge and zener; add 100-470 ohm (flameproof type).")
    else:
        out.append(f"series resistor: {p_rs:.2f} W at high line, inrush peak {inrush:.1f} A; use a "
                   f"flameproof type.")

    # voltage ratings against the high-line peak
    for label, rating in (("dropper capacitor", m.capacitor_voltage_rating),
                          ("bridge rectifier", m.bridge_voltage_rating)):
        if rating is not None and rating < v_pk_hi:
            out.append(f"{label} rated {rating:.0f} V is below the high-line peak {v_pk_hi:.0f} V.")
    out.append("use an X2 safety-class film capacitor for the dropper.")

    # bleed resistor, IEC 60335-1 cl. 22.5 [2]; largest capacitance is the slowest case
    tau = m.bleed_resistor * c_hi
    v_1s = discharge_voltage(v_pk, m.bleed_resistor, c_hi)
    tau_max = 1.0 / math.log(v_pk / DISCHARGE_LIMIT_V)  # V_pk exp(-1/tau) <= 34 V
    r_max = tau_max / c_hi
    if m.dropper_capacitance <= DISCHARGE_EXEMPT_F:
        out.append("dropper capacitor of 0.1 uF or less: exempt from the IEC 60335-1 cl. 22.5 discharge test.")
    elif v_1s > DISCHARGE_LIMIT_V:
        out.append(f"bleed resistor too large: {v_1s:.0f} V remain on the plug pins 1 s after unplugging at the "
                   f"peak (IEC 60335-1 cl. 22.5 allows {DISCHARGE_LIMIT_V:.0f} V); use at most {r_max / 1e3:.0f} kOhm.")
    else:
        out.append(f"bleed resistor meets IEC 60335-1 cl. 22.5: {v_1s:.0f} V after 1 s (limit "
                   f"{DISCHARGE_LIMIT_V:.0f} V).")
    out.append(f"the bleed resistor sees the full {v_pk_hi:.0f} V peak; small resistors are often rated only "
               f"200-250 V, so use two in series.")

    # triac conduction loss and heat sink [3]; T_j = T_a + P Rth
    p_t = triac_conduction_loss(m.fan_current, m.triac_v_t0, m.triac_r_t)
    tj_free = m.ambient_c + p_t * m.triac_rth_ja
    tj_allowed = m.triac_tj_max - 10.0  # 10 K design margin (common practice, no source)
    if tj_free <= tj_allowed:
        rth_sink = None
        out.append(f"triac loses {p_t:.2f} W; junction {tj_free:.0f} degC in {m.ambient_c:.0f} degC air without "
                   f"a heat sink: none needed.")
    else:
        rth_sink = (tj_allowed - m.ambient_c) / p_t - m.triac_rth_jc - m.triac_rth_cs
        if rth_sink <= 0.0:
            rth_sink = math.nan
            out.append(f"triac loses {p_t:.2f} W: no heat sink keeps its junction under {tj_allowed:.0f} degC in "
                       f"{m.ambient_c:.0f} degC air; use a larger triac or a relay.")
        else:
            out.append(f"triac loses {p_t:.2f} W: it needs a heat sink of at most {rth_sink:.1f} K/W "
                       f"(junction kept under {tj_allowed:.0f} degC in {m.ambient_c:.0f} degC air).")

    # current ratings against running and starting current (common practice, no source)
    i_start = m.fan_start_multiple * m.fan_current
    if m.triac_current_rating < 2.0 * m.fan_current:
        out.append(f"triac rated {m.triac_current_rating:.1f} A rms for a {m.fan_current:.2f} A motor: choose at "
                   f"least twice the running current for an inductive load.")
    if m.triac_surge_current < math.sqrt(2.0) * i_start:
        out.append(f"triac surge rating {m.triac_surge_current:.0f} A is below the starting current's peak "
                   f"{math.sqrt(2.0) * i_start:.0f} A.")
    fits = [r for r in FUSE_RATINGS if 1.25 * m.fan_current <= r <= m.triac_current_rating]
    fuse = fits[0] if fits else None
    if m.fuse_rating is None:
        if fuse is None:
            out.append("no standard fuse covers the running current without exceeding the triac's rating.")
        else:
            out.append(f"fuse the triac side with a {fuse:g} A time-delay fuse (no more than the triac's rating; "
                       f"time-delay for the {i_start:.1f} A starting current).")
    else:
        if m.fuse_rating > m.triac_current_rating:
            out.append(f"fuse {m.fuse_rating:g} A is above the triac's {m.triac_current_rating:g} A rating: the "
                       f"triac side must be fused at no more than the triac's rating.")
        if m.fuse_rating < 1.25 * m.fan_current:
            out.append(f"fuse {m.fuse_rating:g} A is under 1.25x the {m.fan_current:.2f} A running current: "
                       f"it may open in normal running.")
        out.append(f"use a time-delay fuse: the motor starts at about {i_start:.1f} A.")

    # snubber and gate resistor reminders
    r_gate = v_pk_hi / m.driver_surge_current
    out.append(f"the fan motor is inductive: fit an RC snubber across the triac (typically 100 ohm + 0.1 uF, "
               f"X2 class) unless it is a snubberless type, and a gate resistor of at least {r_gate:.0f} ohm "
               f"between the opto-triac driver and the gate.")
    out.append("defer to your local electrical code and a qualified person.")

    return MainsReport(
        peak_voltage=v_pk, peak_voltage_high=v_pk_hi, dropper_current=i_ac, dc_available_low=i_dc_lo,
        dc_available_high=i_dc_hi, load_current=load, supply_margin=margin, zener_power=p_z,
        series_resistor_power=p_rs, inrush_peak=inrush, discharge_time_constant=tau, discharge_voltage_1s=v_1s,
        bleed_resistor_max=r_max, triac_loss=p_t, triac_junction_free_air_c=tj_free,
        heatsink_rth_needed=rth_sink, starting_current=i_start, gate_resistor_min=r_gate,
        fuse_suggested=fuse, findings=tuple(out))
