"""The timer stage's delays against ngspice transients, an independent circuit simulator.

Each test writes a netlist of the stage (a driving output stepping the RC network, a silicon diode across R
where one direction is instant, or a monostable's latch and discharge switch as behavioural sources), runs
ngspice in batch mode and measures with .meas the instant the following stage's output crosses half way
(the capacitor crossing the threshold). ngspice integrates the network numerically; our module uses the
closed forms. Source of the check values: ngspice (Debian package `ngspice`), run here.
"""

import shutil

import pytest

from atticsim.circuit.timer import TimerParams, timer_delays
from atticsim.validation.ngspice import measure, timer_netlist as input_delay_netlist

NGSPICE = shutil.which("ngspice")
pytestmark = pytest.mark.skipif(NGSPICE is None, reason="ngspice is not installed (apt-get install ngspice)")

#: Agreement asked of every delay: 0.5 % (our own requirement; the transients' steps of RC/2000 err far less).
REL = 0.005


def run_ngspice(text, tmp_path, names):
    """Run a netlist (kept in tmp_path for a failing test's reader); the .meas results named in ``names`` [s]."""
    return measure(text, names, folder=tmp_path)


def _tran(tau, t_end):
    # steps of a two-thousandth of R C: the .meas interpolation then errs far below 0.5 %
    return [".options RELTOL=1e-6 ABSTOL=1e-12 VNTOL=1e-9", f".tran {tau / 2000!r} {t_end!r} 0 {tau / 2000!r} UIC"]


def monostable_netlist(p, t_call, t_release, t_end):
    """A monostable after the comparator: a latch set while the call stands, reset when the capacitor
    crosses the threshold; its switch holds the capacitor at 0 V while the latch is reset."""
    edge = p.tau * 1e-6
    lines = [
        "* atticsim timer stage, monostable",
        f"VCC vcc 0 {p.supply!r}",
        f"VCALL call 0 PWL(0 0 {t_call!r} 0 {t_call + edge!r} 1 {t_release!r} 1 {t_release + edge!r} 0)",
        f"RT vcc c {p.resistance!r}",
        f"CT c 0 {p.capacitance!r} IC=0",
        # latch state q in 0..1: set while the call stands (set wins), reset past the threshold; the last term
        # makes it regenerative (it pulls q to 0 or 1, so the latch does not stop half way when the
        # discharge switch takes the reset away)
        f"BQ 0 q I = 1e-3*(V(call)*(1 - V(q)) - (1 - V(call))*0.5*(1 + tanh(1e4*(V(c) - {p.threshold_v!r})))*V(q))"
        " + 1e-4*(0.5*(1 + tanh(20*(V(q) - 0.5))) - V(q))",
        "CQ q 0 1n IC=0",
        # discharge switch: 10 ohm across the capacitor while the latch is reset (a sharp switch on q, which
        # settles a few ppm short of 1: a linear (1 - q) leaves a megohm across the capacitor)
        "BDIS c 0 I = V(c)/10*0.5*(1 - tanh(1e3*(V(q) - 0.5)))",
    ]
    lines += _tran(p.tau, t_end)
    lines += [".meas tran T_ON WHEN V(q)=0.5 RISE=1", ".meas tran T_OFF WHEN V(q)=0.5 FALL=1", ".end"]
    return "\n".join(lines) + "\n"


# our own test values (invented), one per wiring and direction of the call
INPUT_DELAYS = {
    "delay-start-charges": TimerParams("delay-start", 1e6, 100e-6, 2.0 / 3.0, 12.0, "charges"),
    "delay-start-discharges": TimerParams("delay-start", 470e3, 220e-6, 0.5, 9.1, "discharges"),
    "delay-stop-charges": TimerParams("delay-stop", 2.2e6, 47e-6, 0.4, 12.0, "charges"),
    "delay-stop-discharges": TimerParams("delay-stop", 330e3, 470e-6, 0.75, 9.1, "discharges"),
    "delay-both-charges": TimerParams("delay-both", 1e6, 68e-6, 0.6, 12.0, "charges"),
    "delay-both-discharges": TimerParams("delay-both", 680e3, 100e-6, 0.3, 5.0, "discharges"),
}


@pytest.mark.parametrize("name", list(INPUT_DELAYS))
def test_input_delay_matches_ngspice(name, tmp_path):
    p = INPUT_DELAYS[name]
    t_call = 0.05 * p.tau
    t_release = t_call + 10.0 * p.tau  # long enough for the capacitor to settle (e^-10)
    m = run_ngspice(input_delay_netlist(p, t_call, t_release, t_release + 10.0 * p.tau), tmp_path, {"t_on", "t_off"})
    start, stop = m["t_on"] - t_call, m["t_off"] - t_release
    ours = timer_delays(p, ideal=True)
    # check values: ngspice transient of the same stage, within 0.5 %
    if "start_delay" in ours:
        assert start == pytest.approx(ours["start_delay"], rel=REL)
    else:  # the diode makes the start instant: well under a thousandth of R C
        assert 0.0 <= start < 1e-3 * p.tau
    if "run_on" in ours:
        assert stop == pytest.approx(ours["run_on"], rel=REL)
    else:
        assert 0.0 <= stop < 1e-3 * p.tau


def test_monostable_matches_ngspice_short_call(tmp_path):
    # a call shorter than the monostable's period: the fan runs the whole period from the start
    p = TimerParams("minimum-run", 2.2e6, 100e-6, 2.0 / 3.0, 9.1)
    t_call = 0.05 * p.tau
    m = run_ngspice(monostable_netlist(p, t_call, t_call + 0.2 * p.tau, 3.0 * p.tau), tmp_path, {"t_on", "t_off"})
    assert m["t_on"] - t_call < 1e-3 * p.tau
    # check value: ngspice transient; our closed form 1.0986 R C = 241.7 s
    assert m["t_off"] - t_call == pytest.approx(timer_delays(p, ideal=True)["min_run"], rel=REL)


def test_monostable_long_call_keeps_the_fan_on_until_the_call_ends(tmp_path):
    # a call longer than the period: the held trigger keeps the fan on; it stops when the call ends
    p = TimerParams("minimum-run", 1e6, 47e-6, 0.5, 12.0)
    t_call, t_release = 0.05 * p.tau, 3.05 * p.tau
    m = run_ngspice(monostable_netlist(p, t_call, t_release, 5.0 * p.tau), tmp_path, {"t_on", "t_off"})
    assert timer_delays(p, ideal=True)["min_run"] < t_release - t_call
    assert m["t_off"] == pytest.approx(t_release, abs=1e-3 * p.tau)


def test_node_currents_match_ngspice(tmp_path):
    # the following stage's input current into the timing node and the capacitor's leakage (a resistance
    # that leaks leakage_current at the supply voltage): our Thevenin closed form against ngspice with a
    # current source and a resistor at the node. Values invented, chosen so that they move the delays by
    # +11 % and -56 % (100 nA x 4.7 Mohm = 0.47 V; 1 uA at 12 V = 12 Mohm in parallel with C)
    p = TimerParams("delay-both", 4.7e6, 22e-6, 0.5, 12.0, input_current=100e-9, leakage_current=1e-6)
    t_call = 10.0 * p.tau  # the capacitor first settles at its rest level (not 0 V with these currents)
    t_release = t_call + 10.0 * p.tau
    extras = [f"IB 0 c DC {p.input_current!r}", f"RL c 0 {p.supply / p.leakage_current!r}"]
    m = run_ngspice(input_delay_netlist(p, t_call, t_release, t_release + 10.0 * p.tau, extras), tmp_path,
                    {"t_on", "t_off"})
    ours, ideal = timer_delays(p), timer_delays(p, ideal=True)
    assert m["t_on"] - t_call == pytest.approx(ours["start_delay"], rel=REL)
    assert m["t_off"] - t_release == pytest.approx(ours["run_on"], rel=REL)
    # and the currents matter here: the ideal closed form misses ngspice by more than the tolerance
    assert abs(ideal["start_delay"] / (m["t_on"] - t_call) - 1.0) > 4 * REL
    assert abs(ideal["run_on"] / (m["t_off"] - t_release) - 1.0) > 4 * REL
