"""The thermostat's timer stage: an RC network and a threshold stage that delay or stretch the fan's call.

Topology
--------
A driving output swings the timing node between 0 V and ``supply``: through ``resistance`` into the
timing capacitor (``capacitance``, other end at ground). A following stage (the second half of the dual
comparator, or a timer IC's threshold comparator) switches when the capacitor's voltage crosses
``threshold`` x ``supply``. The threshold is a fraction of the same supply (a divider, or a timer IC's
internal divider), so the delays do not depend on the supply voltage (ratiometric). Wirings:

- ``"delay-start"``: an input delay between the comparator and the driver. The thermostat's call moves the
  capacitor towards the call level through R; the fan starts when it crosses the threshold. A diode
  across R makes the release instant (it resets the capacitor). Acts as ``start_delay``.
- ``"delay-stop"``: the same with the diode the other way round: the call is instant, the release runs
  through R; the fan stops when the capacitor crosses back. Acts as ``run_on``.
- ``"delay-both"``: no diode; both directions run through R. Acts as ``start_delay`` and ``run_on``.
- ``"minimum-run"``: a monostable after the comparator. The call's start triggers it: its switch lets the
  capacitor charge from 0 V through R towards the supply, and it holds the fan on until the capacitor
  reaches the threshold; a call still standing then keeps the fan on (the trigger held). Acts as
  ``min_run``.

``on_call`` says which way the call drives the capacitor: ``"charges"`` (towards the supply) or
``"discharges"`` (towards 0 V: the usual case behind an open-collector comparator, whose output sinks
while it calls). It sets which closed form each delay takes.

Non-ideal currents at the timing node: the following stage's input current (a dual open-collector
comparator's PNP inputs source tens of nA out of their pins [3]) and the capacitor's leakage (taken as a
resistance that leaks ``leakage_current`` at the supply voltage). Both move the level the capacitor
settles at; the node stays first order, so the same closed form holds with the Thevenin equivalent.

References
----------
.. [1] First-order RC step response v(t) = v_f + (v_0 - v_f) exp(-t/RC): P. Horowitz and W. Hill, The Art
       of Electronics, 3rd ed., 2015, section 1.4 (from memory). Charging from 0 to V_th towards V:
       t = RC ln(V/(V - V_th)); discharging from V_0 to V_th towards 0: t = RC ln(V_0/V_th).
.. [2] Timer IC makers' datasheets, monostable mode: threshold at 2/3 of the supply, t = RC ln 3 = 1.1 RC
       (from memory).
.. [3] Dual open-collector comparator datasheets: input bias current 25 nA typical, 250 nA maximum, flowing
       out of the inputs (PNP input stage) (from memory).
.. [4] Aluminium electrolytic capacitor makers' general-purpose series: leakage at most 0.01 C V or 3 uA,
       whichever is greater, after 2 minutes at rated voltage; tolerance +-20 %. Film capacitors +-5 %,
       class-2 ceramic +-10 % (from memory).
"""

from __future__ import annotations

import math
import numbers
from dataclasses import dataclass, replace

import numpy as np

from atticsim.circuit.comparator import COMMON_MODE_HEADROOM
from atticsim.circuit.tolerance import band, corner_deviations, extremes, random_deviations, require_fractions

#: The wirings and the time rules each one implements.
TIMER_RULES = {
    "delay-start": ("start_delay",),
    "delay-stop": ("run_on",),
    "delay-both": ("start_delay", "run_on"),
    "minimum-run": ("min_run",),
}
WIRINGS = tuple(TIMER_RULES)
ON_CALL = ("charges", "discharges")
CAPACITORS = ("electrolytic", "film", "ceramic")
#: Tolerance class of each capacitor type [-] (makers' usual classes [4], from memory).
CAPACITOR_TOLERANCE = {"electrolytic": 0.20, "film": 0.05, "ceramic": 0.10}
#: Forward drop of a small silicon diode at the small currents that end a reset [V] (from memory).
DIODE_DROP = 0.6
#: A shift of the delay larger than this is reported ("more than a few percent") [-].
SHIFT_LIMIT = 0.03
#: Words for the rules in findings.
RULE_WORDS = {"start_delay": "start delay", "run_on": "run-on", "min_run": "minimum run", "min_rest": "minimum rest"}


@dataclass(frozen=True)
class TimerParams:
    """An RC timer stage (SI units).

    Parameters
    ----------
    wiring : {"delay-start", "delay-stop", "delay-both", "minimum-run"}
        Where the stage sits and what it does (see the module docstring).
    resistance : float
        Timing resistance [ohm] (the whole path the capacitor charges through, a pull-up in series included).
    capacitance : float
        Timing capacitance [F].
    threshold : float
        Switching level of the following stage as a fraction of the supply [-], 0 < threshold < 1.
    supply : float
        Supply the RC network is driven from [V].
    on_call : {"charges", "discharges"}
        What the capacitor does while the thermostat calls (input delays; a monostable always charges).
    input_current : float
        Input current of the following stage flowing into the timing node [A]. Default 0 (ideal).
    leakage_current : float or None
        Capacitor leakage at the supply voltage [A], taken as a resistance supply/leakage_current; None when
        unknown (then 0 in the delays, and the rated limit is reported for electrolytics).
    capacitor : {"electrolytic", "film", "ceramic"}
        Dielectric of the timing capacitor (for the findings).
    """

    wiring: str
    resistance: float
    capacitance: float
    threshold: float
    supply: float
    on_call: str = "charges"
    input_current: float = 0.0
    leakage_current: float | None = None
    capacitor: str = "film"

    def __post_init__(self):
        if self.wiring not in WIRINGS:
            raise ValueError(f"timer wiring must be one of {', '.join(WIRINGS)} (got {self.wiring!r})")
        if self.on_call not in ON_CALL:
            raise ValueError(f"timer on_call must be 'charges' or 'discharges' (got {self.on_call!r})")
        if self.capacitor not in CAPACITORS:
            raise ValueError(f"timer capacitor must be one of {', '.join(CAPACITORS)} (got {self.capacitor!r})")
        for name in ("resistance", "capacitance", "supply"):
            v = getattr(self, name)
            if not (isinstance(v, numbers.Real) and 0.0 < v < math.inf):
                raise ValueError(f"timer {name} must be a positive finite number (got {v!r})")
        if not (isinstance(self.threshold, numbers.Real) and 0.0 < self.threshold < 1.0):
            raise ValueError(f"timer threshold must be a fraction of the supply between 0 and 1 (got {self.threshold!r})")
        if not (isinstance(self.input_current, numbers.Real) and 0.0 <= self.input_current < math.inf):
            raise ValueError(f"timer input_current must be zero or positive (got {self.input_current!r})")
        leak = self.leakage_current
        if leak is not None and not (isinstance(leak, numbers.Real) and 0.0 <= leak < math.inf):
            raise ValueError(f"timer leakage_current must be zero or positive (got {leak!r})")

    @property
    def tau(self):
        """Time constant R C [s]."""
        return self.resistance * self.capacitance

    @property
    def threshold_v(self):
        """Switching level [V]."""
        return self.threshold * self.supply

    @property
    def rules(self):
        """Names of the time rules this wiring implements."""
        return TIMER_RULES[self.wiring]


@dataclass(frozen=True)
class TimerTolerances:
    """Part tolerances of the timer stage (relative).

    Parameters
    ----------
    resistor : float
        Timing resistor [-]. Default 0.05 (5 % carbon film; common practice, no source).
    capacitor : float
        Timing capacitor [-]. Default 0.20 (aluminium electrolytic [4], from memory).
    threshold : float
        Switching level [-]. Default 0.02: a divider of two 1 % resistors moves its ratio f by at most
        2 (1 - f) % < 2 % [C].
    """

    resistor: float = 0.05
    capacitor: float = 0.20
    threshold: float = 0.02

    def __post_init__(self):
        require_fractions(self, ("resistor", "capacitor", "threshold"), "timer ")


@dataclass(frozen=True)
class TimerResult:
    """The timer stage's delays and their spread.

    Attributes
    ----------
    params : TimerParams
        The stage.
    delays : dict
        Rule name -> delay [s] with the input and leakage currents (what the simulation applies).
    ideal : dict
        Rule name -> delay of the ideal stage [s] (the closed forms, no currents at the node).
    worst : dict
        Rule name -> (shortest, longest) delay over every corner of the tolerance box [s].
    band : dict
        Rule name -> Monte-Carlo (5 %, 95 %) percentiles [s].
    samples, seed : int
        Monte-Carlo sample count and seed.
    never_switch : int
        Corners plus samples whose capacitor never reaches the threshold (left out of the figures above).
    findings : tuple of str
        Plain-language checks.
    """

    params: TimerParams
    delays: dict
    ideal: dict
    worst: dict
    band: dict
    samples: int
    seed: int
    never_switch: int
    findings: tuple


def crossing_time(tau, v_start, v_final, v_threshold):
    """Time a first-order node takes from ``v_start`` to ``v_threshold`` on its way to ``v_final``.

    v(t) = v_f + (v_0 - v_f) exp(-t/tau), so t = tau ln((v_f - v_0) / (v_f - v_th)) [1].

    Parameters
    ----------
    tau : float or array
        Time constant [s].
    v_start, v_final, v_threshold : float or array
        Start, settling and threshold voltages [V].

    Returns
    -------
    float or array
        Time [s]; 0 where the threshold is already behind the start, inf where the node never reaches it
        (the threshold at or beyond the settling level).
    """
    tau, v0, vf, vth = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in (tau, v_start, v_final, v_threshold)))
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = (vf - v0) / (vf - vth)
        t = np.where(ratio >= 1.0, tau * np.log(np.where(ratio >= 1.0, ratio, 1.0)),
                     np.where(ratio > 0.0, 0.0, np.inf))
    return float(t) if t.ndim == 0 else t


def charge_time(resistance, capacitance, supply, threshold_v, v_start=0.0):
    """Charging through R towards the supply: t = R C ln((V - V_0)/(V - V_th)) [1]; from 0 V,
    t = R C ln(V/(V - V_th)) (1.0986 R C at V_th = 2/3 V) [s]."""
    return crossing_time(np.multiply(resistance, capacitance), v_start, supply, threshold_v)


def discharge_time(resistance, capacitance, v_start, threshold_v):
    """Discharging through R towards 0 V from V_0: t = R C ln(V_0/V_th) [1] [s]."""
    return crossing_time(np.multiply(resistance, capacitance), v_start, 0.0, threshold_v)


def node_levels(resistance, capacitance, v_source, input_current=0.0, leakage_resistance=math.inf):
    """Time constant and settling level of the timing node driven towards ``v_source``.

    C dv/dt = (v_source - v)/R - v/R_leak + I_in (Kirchhoff's current law), a first-order node with
    tau = C (R || R_leak) and v_f = (R || R_leak)(v_source/R + I_in) (Thevenin).

    Parameters
    ----------
    resistance, capacitance : float or array
        Timing R [ohm] and C [F].
    v_source : float
        Voltage the driving output holds [V].
    input_current : float
        Current into the node from the following stage's input [A].
    leakage_resistance : float or array
        Capacitor leakage as a resistance [ohm] (inf: none).

    Returns
    -------
    tuple
        (tau [s], v_final [V]).
    """
    g = 1.0 / np.asarray(resistance, dtype=float) + 1.0 / np.asarray(leakage_resistance, dtype=float)
    return capacitance / g, (v_source / np.asarray(resistance, dtype=float) + input_current) / g


def _transitions(p, r, c, f, input_current, leakage_current, v_rest=None, v_call=None):
    """(t_start, t_stop) of the stage for arrays of R, C and threshold fraction f [s].

    t_start: from the rest level to the threshold on the call's way (input delays; 0 for a monostable,
    which starts at once); t_stop: from the call level back to the threshold (the monostable: from 0 V,
    where its switch holds the capacitor until the trigger [2], to the threshold). inf where the capacitor
    never gets there. ``v_rest`` / ``v_call`` replace the settled levels they start from."""
    r_leak = p.supply / leakage_current if leakage_current else math.inf
    tau_hi, v_hi = node_levels(r, c, p.supply, input_current, r_leak)
    tau_lo, v_lo = node_levels(r, c, 0.0, input_current, r_leak)
    v_th = f * p.supply
    if p.wiring == "minimum-run":
        return np.zeros_like(tau_hi), crossing_time(tau_hi, 0.0 if v_rest is None else v_rest, v_hi, v_th)
    if p.on_call == "charges":
        tau_call, level_call, tau_rest, level_rest = tau_hi, v_hi, tau_lo, v_lo
        source_call, source_rest = p.supply, 0.0
    else:
        tau_call, level_call, tau_rest, level_rest = tau_lo, v_lo, tau_hi, v_hi
        source_call, source_rest = 0.0, p.supply
    # the reset diode holds the capacitor within a diode drop of the driving level in its instant direction
    if p.wiring == "delay-start":
        level_rest = np.clip(level_rest, source_rest - DIODE_DROP, source_rest + DIODE_DROP)
    elif p.wiring == "delay-stop":
        level_call = np.clip(level_call, source_call - DIODE_DROP, source_call + DIODE_DROP)
    t_start = crossing_time(tau_call, level_rest if v_rest is None else v_rest, level_call, v_th)
    t_stop = crossing_time(tau_rest, level_call if v_call is None else v_call, level_rest, v_th)
    return t_start, t_stop


def _delays(p, r, c, f, input_current, leakage_current, v_rest=None, v_call=None):
    """Delays of wiring p.wiring for arrays of R, C and threshold fraction f: rule -> array [s]; inf for
    every rule where the stage sticks (its capacitor never crosses the threshold one way or the other)."""
    t_start, t_stop = _transitions(p, r, c, f, input_current, leakage_current, v_rest, v_call)
    stuck = ~(np.isfinite(t_start) & np.isfinite(t_stop))
    timed = {"start_delay": t_start, "run_on": t_stop, "min_run": t_stop}
    return {k: np.where(stuck, np.inf, timed[k]) for k in p.rules}


def stuck_words(params, **change):
    """What the fan would do if the stage (changed as given) sticks: "never start", "never stop", or None."""
    p = replace(params, **change)
    t_start, t_stop = _transitions(p, p.resistance, p.capacitance, p.threshold, p.input_current,
                                   p.leakage_current or 0.0)
    if not math.isfinite(float(t_start)):
        return "never start"
    if not math.isfinite(float(t_stop)):
        return "never stop"
    return None


def timer_delays(params, ideal=False):
    """The stage's delays: rule name -> seconds.

    Parameters
    ----------
    params : TimerParams
        The stage.
    ideal : bool
        True: no currents at the timing node (the closed forms [1]); False: with the input current and the
        leakage current (0 when unknown).

    Returns
    -------
    dict
        {"start_delay": s} (delay-start), {"run_on": s} (delay-stop), both (delay-both) or {"min_run": s}
        (minimum-run); inf where the capacitor never reaches the threshold. Each delay starts from a settled
        capacitor (the state before lasted several R C).
    """
    i_in, leak = (0.0, 0.0) if ideal else (params.input_current, params.leakage_current or 0.0)
    d = _delays(params, params.resistance, params.capacitance, params.threshold, i_in, leak)
    return {k: float(v) for k, v in d.items()}


def electrolytic_leakage_limit(capacitance, voltage):
    """Rated leakage limit of a general-purpose aluminium electrolytic: max(0.01 C V, 3 uA) [A] with C in
    uF, V in volts and the result in uA [4] (from memory); in SI, 0.01 C V A with C in farads."""
    return max(0.01 * capacitance * voltage, 3e-6)


def timer_analysis(params, tolerances=TimerTolerances(), samples=2000, seed=0):
    """Delays of the timer stage, their worst case and Monte-Carlo band, and plain-language findings.

    Varied: the timing resistor, capacitor and threshold fraction by their tolerances (the supply cancels:
    the threshold is a fraction of it). Worst case over every corner (each delay is monotonic in R, C and
    the threshold, so the corners bound it); Monte Carlo with each tolerance read as +-3 sigma, as
    :mod:`atticsim.circuit.tolerance` does for the thresholds.

    Parameters
    ----------
    params : TimerParams
        The stage.
    tolerances : TimerTolerances
        Part tolerances.
    samples : int
        Monte-Carlo sample count.
    seed : int
        Random seed.

    Returns
    -------
    TimerResult
    """
    if not isinstance(params, TimerParams):
        raise ValueError("timer analysis needs a TimerParams")
    spans = {"resistance": tolerances.resistor, "capacitance": tolerances.capacitor,
             "threshold": tolerances.threshold}

    def evaluate(dev):
        return _delays(params, params.resistance * (1.0 + dev["resistance"]),
                       params.capacitance * (1.0 + dev["capacitance"]), params.threshold * (1.0 + dev["threshold"]),
                       params.input_current, params.leakage_current or 0.0)

    corners = evaluate(corner_deviations(spans))
    sampled = evaluate(random_deviations(spans, samples, seed))
    never = sum(int(np.any([~np.isfinite(d[k]) for k in d], axis=0).sum()) for d in (corners, sampled))
    delays = timer_delays(params)
    return TimerResult(
        params=params, delays=delays, ideal=timer_delays(params, ideal=True),
        worst={k: extremes(v) for k, v in corners.items()}, band={k: band(v) for k, v in sampled.items()},
        samples=samples, seed=seed, never_switch=never,
        findings=timer_findings(params, tolerances, never))


def _ohm(r):
    return f"{r / 1e6:.3g} Mohm" if r >= 1e6 else f"{r / 1e3:.3g} kohm" if r >= 1e3 else f"{r:.3g} ohm"


def _shift(params, **change):
    """Largest relative change of the delays when the stage is changed as given (inf: never switches)."""
    base = timer_delays(params, ideal=True)
    moved = timer_delays(replace(params, **change))
    return max((moved[k] - base[k]) / base[k] if math.isfinite(moved[k]) else math.inf for k in base)


def _never_words(params, what, **change):
    return f"{what} the capacitor would never cross the threshold and the fan would {stuck_words(params, **change)}"


def _current_findings(p):
    """The following stage's input current and the capacitor's leakage, where they move a delay by more
    than SHIFT_LIMIT."""
    out = []
    if p.input_current > 0.0:
        s = _shift(p, leakage_current=0.0)
        if abs(s) > SHIFT_LIMIT:
            at = f"{p.input_current * 1e9:.0f} nA of input current through {_ohm(p.resistance)}"
            if math.isfinite(s):
                out.append(f"R is large: the following stage's {at} moves the capacitor's end point by "
                           f"{p.input_current * p.resistance:.2f} V and the delay by {100 * s:+.1f} %; keep R below "
                           f"about {_ohm(p.resistance * SHIFT_LIMIT / abs(s))} (raise C to keep R C). A dual "
                           f"open-collector comparator's datasheet maximum is about ten times its typical input "
                           f"current (from memory).")
            else:
                out.append(f"R is large: {_never_words(p, 'with ' + at, leakage_current=0.0)}; use a smaller R with "
                           f"a larger C.")
    if p.leakage_current:
        s = _shift(p, input_current=0.0)
        if abs(s) > SHIFT_LIMIT:
            at = f"{p.leakage_current * 1e6:.2g} uA of leakage at {p.supply:g} V through {_ohm(p.resistance)}"
            what = (f"the capacitor's {at} moves the delay by {100 * s:+.1f} %" if math.isfinite(s)
                    else _never_words(p, "with " + at, input_current=0.0))
            out.append(f"{what}; a film capacitor, or a smaller R with a larger C, leaks less through R.")
    elif p.leakage_current is None and p.capacitor == "electrolytic":
        limit = electrolytic_leakage_limit(p.capacitance, p.supply)
        s = _shift(p, input_current=0.0, leakage_current=limit)
        if abs(s) > SHIFT_LIMIT:
            at = (f"at that limit the delay would move by {100 * s:+.0f} %" if math.isfinite(s)
                  else _never_words(p, "at that limit", input_current=0.0, leakage_current=limit))
            out.append(f"an electrolytic's leakage is loosely specified: the usual rated limit (0.01 C V or 3 uA "
                       f"after 2 minutes at rated voltage, from memory) is {limit * 1e6:.2g} uA here, and {at}. "
                       f"Parts well below their rated voltage usually leak far less: measure it and give "
                       f"leakage_current, or use a film capacitor.")
    return out


def _diode_finding(p):
    """How much sooner an input delay with a reset diode ends when the capacitor had no time to settle."""
    v, ideal = p.supply, timer_delays(p, ideal=True)
    # the diode brings the capacitor to within about one diode drop of its level at once, the rest runs through R
    if p.wiring == "delay-start":
        v_rest = DIODE_DROP if p.on_call == "charges" else v - DIODE_DROP
        early = _delays(p, p.resistance, p.capacitance, p.threshold, 0.0, 0.0, v_rest=v_rest)["start_delay"]
        s = 1.0 - early / ideal["start_delay"]
        after = f"a call that returns within about R C ({p.tau:.0f} s) of a release the start delay"
    else:
        v_call = v - DIODE_DROP if p.on_call == "charges" else DIODE_DROP
        early = _delays(p, p.resistance, p.capacitance, p.threshold, 0.0, 0.0, v_call=v_call)["run_on"]
        s = 1.0 - early / ideal["run_on"]
        after = f"a release within about R C ({p.tau:.0f} s) of a call's start the run-on"
    if s <= 0.01:
        return []
    return [f"the diode resets the capacitor only to about one diode drop ({DIODE_DROP} V, from memory) at once, "
            f"the rest through R: after {after} is up to {100 * s:.0f} % shorter."]


def timer_findings(params, tolerances=TimerTolerances(), never_switch=0):
    """Plain-language checks of a timer stage: node currents, leakage, capacitor type, the diode's reset,
    the capacitor's memory without a diode, the threshold's placement.

    Returns
    -------
    tuple of str
    """
    p = params
    out = _current_findings(p)
    if p.capacitor == "ceramic":
        out.append("a class-2 ceramic capacitor loses a large part of its capacitance under DC bias and with "
                   "temperature (from memory): a film capacitor keeps a timing constant better.")
    if tolerances.capacitor >= 0.1 and tolerances.capacitor > 2.0 * max(tolerances.resistor, tolerances.threshold):
        out.append(f"the capacitor's +-{100 * tolerances.capacitor:.0f} % sets most of the delay's spread; a "
                   f"+-5 % film capacitor narrows it.")
    if p.wiring == "delay-both":
        out.append(f"without a diode the capacitor remembers: a call or a release shorter than about 3 R C "
                   f"({3 * p.tau:.0f} s) leaves it part-way, and the next delay is shorter; the delays above hold "
                   f"when each state lasts longer than that.")
    elif p.wiring in ("delay-start", "delay-stop"):
        out += _diode_finding(p)
    if p.threshold_v > p.supply - COMMON_MODE_HEADROOM:
        out.append(f"the threshold ({p.threshold_v:.2f} V) is within {COMMON_MODE_HEADROOM} V of the {p.supply:g} V "
                   f"supply: outside a dual open-collector comparator's typical input common-mode range (a timer "
                   f"IC's own divider is fine).")
    sens = _threshold_sensitivity(p)
    if sens > 3.0:
        out.append(f"the delay depends steeply on the threshold here: 1 % of threshold error moves it by "
                   f"{sens:.1f} %; a threshold nearer the middle of the swing is steadier.")
    if never_switch:
        out.append(f"at {never_switch} of the tolerance corners and samples the capacitor never crosses the "
                   f"threshold: the stage may stick there; move the threshold nearer the middle of the swing.")
    return tuple(out)


def _threshold_sensitivity(p):
    """Largest |d ln t / d ln f| of the ideal delays (central difference, 0.1 % steps) [-]."""
    h = 1e-3
    up = _delays(p, p.resistance, p.capacitance, p.threshold * (1 + h), 0.0, 0.0)
    dn = _delays(p, p.resistance, p.capacitance, p.threshold * (1 - h), 0.0, 0.0)
    out = 0.0
    for k in up:
        a, b = float(up[k]), float(dn[k])
        if math.isfinite(a) and math.isfinite(b) and a > 0 and b > 0:
            out = max(out, abs(math.log(a / b)) / (2 * h))
    return out
