"""The attic/house pressure balance's root finds, compiled (numba).

:func:`atticsim.airflow.balance.solve_attic_balance` finds the house pressure for each trial attic
pressure (inner root find) and the attic pressure that balances the attic (outer root find); in Python
those nested root finds were most of a vented scenario's run time (a few hundred path evaluations a
balance, a balance every airflow step). This module does the same two root finds in compiled code, with
the same path laws, the same bracket widening and Brent's method to the same tolerances; the caller
computes the flows at the solution as before, in Python.

The paths arrive packed (see ``AtticAirPaths._packed``):

- ``vents``: one row per vent, (Cd A [m^2], height [m], wind Cp [-]);
- ``leaks``: one row per ceiling leak, (C [m^3/(s Pa^n)], n [-], height [m]);
- ``house``: (present, C, n, height, Cp) of the house envelope;
- ``fan``: (present, height, Cp, idle Cd A [m^2], shutoff pressure [Pa]) and its curve: pressures
  ``curve_p`` [Pa], flows ``curve_q`` [m^3/s] and the PCHIP cubic of each interval ``curve_seg``
  (rows of (a, b, c, d): q = ((a t + b) t + c) t + d, t = pressure - curve_p[i]).

Conditions: (rho_outdoor, rho_attic, rho_house [kg/m^3], wind velocity pressure [Pa], fan running (0/1),
fan pressure factor [-], fan speed ratio [-]); settings: (DP_LAMINAR [Pa], largest bracket [Pa], xtol
[Pa], rtol [-], iterations).

Results: (attic pressure [Pa], house pressure [Pa], status): status 0 solved; 1 / 2 the attic / house
balance has no sign change up to the largest bracket; 3 / 4 Brent's method did not converge on the
attic / house balance.
"""

from __future__ import annotations

import math

import numba as nb
import numpy as np

from atticsim import jitcache
from atticsim.constants import GRAVITY

jitcache.check()  # stale compiled code out before numba loads any (see atticsim.jitcache)
jitcache.route()  # this module's compiled functions cache in atticsim's own folder

# conditions, entries of ``cond``
_RHO_O, _RHO_A, _RHO_H, _Q_WIND, _RUNNING, _FAN_FACTOR, _SPEED = range(7)
# settings, entries of ``ctl``
_LAMINAR, _MAX_BRACKET, _XTOL, _RTOL, _MAXITER = range(5)
# statuses
SOLVED, ATTIC_NO_SIGN_CHANGE, HOUSE_NO_SIGN_CHANGE, ATTIC_NOT_CONVERGED, HOUSE_NOT_CONVERGED = range(5)


@nb.njit(cache=True)
def orifice_mass(dp, k, rho_pos, rho_neg, lam):
    """Orifice law m = Cd A sqrt(2 rho |dp|) sign(dp) [kg/s], linear below ``lam`` (ASHRAE Handbook
    Fundamentals, ventilation chapter; rho of the upstream air). ``lam``: ``balance.DP_LAMINAR``."""
    if dp >= lam:
        return k * math.sqrt(2.0 * rho_pos * dp)
    if dp <= -lam:
        return -k * math.sqrt(-2.0 * rho_neg * dp)
    rho = rho_pos if dp >= 0.0 else rho_neg
    return k * math.sqrt(2.0 * rho * lam) * dp / lam


@nb.njit(cache=True)
def power_law_mass(dp, c, n, rho_pos, rho_neg, lam):
    """Power law m = rho C |dp|^n sign(dp) [kg/s], linear below ``lam`` (ASHRAE Handbook Fundamentals,
    ventilation chapter; rho of the upstream air). ``lam``: ``balance.DP_LAMINAR``."""
    if dp >= lam:
        return rho_pos * c * dp**n
    if dp <= -lam:
        return -rho_neg * c * (-dp) ** n
    rho = rho_pos if dp >= 0.0 else rho_neg
    return rho * c * lam**n * dp / lam


@nb.njit(cache=True)
def curve_flow(x, p, q, seg):
    """The fan curve's flow at pressure rise x [Pa] as published: its PCHIP interpolant, extended by
    straight lines through the end intervals (as ``FanCurve.base_flow``)."""
    m = p.size
    if x < p[0]:
        return q[0] + (q[1] - q[0]) / (p[1] - p[0]) * (x - p[0])
    if x > p[m - 1]:
        return q[m - 1] + (q[m - 1] - q[m - 2]) / (p[m - 1] - p[m - 2]) * (x - p[m - 1])
    i = min(np.searchsorted(p, x, side="right") - 1, m - 2)
    t = x - p[i]
    return ((seg[i, 0] * t + seg[i, 1]) * t + seg[i, 2]) * t + seg[i, 3]


@nb.njit(cache=True)
def outdoor_offset(z, cp, cond):
    """Outdoor minus attic pressure at height z [m] for p_attic = 0 [Pa]: wind Cp rho V^2 / 2 (ASHRAE
    Handbook Fundamentals, airflow around buildings chapter) and stack -(rho_o - rho_a) g z (ventilation
    chapter, stack pressure)."""
    return cp * cond[_Q_WIND] - (cond[_RHO_O] - cond[_RHO_A]) * GRAVITY * z


@nb.njit(cache=True)
def leak_offset(z, cond):
    """House minus attic pressure across a ceiling leak at height z [m] for equal zone pressures [Pa]: the
    stack term -(rho_h - rho_a) g z (ASHRAE Handbook Fundamentals, ventilation chapter, stack pressure)."""
    return -(cond[_RHO_H] - cond[_RHO_A]) * GRAVITY * z


@nb.njit(cache=True)
def envelope_offset(house, cond):
    """Outdoor minus house pressure at the envelope's height for p_house = 0 [Pa] (0 without one): wind
    Cp rho V^2 / 2 and stack -(rho_o - rho_h) g z, as :func:`outdoor_offset` (same sources)."""
    if house[0] == 0.0:
        return 0.0
    return house[4] * cond[_Q_WIND] - (cond[_RHO_O] - cond[_RHO_H]) * GRAVITY * house[3]


@nb.njit(cache=True)
def _house_net(p_h, p_a, leaks, house, cond, ctl):
    """Net mass flow into the house [kg/s] at house pressure p_h and attic pressure p_a."""
    lam = ctl[_LAMINAR]
    m = power_law_mass(envelope_offset(house, cond) - p_h, house[1], house[2], cond[_RHO_O], cond[_RHO_H], lam)
    for j in range(leaks.shape[0]):
        dp = p_h - p_a + leak_offset(leaks[j, 2], cond)
        m -= power_law_mass(dp, leaks[j, 0], leaks[j, 1], cond[_RHO_H], cond[_RHO_A], lam)
    return m


# Brent's method as a step machine (so that the two root finds share it without passing functions, which
# numba cannot cache): the state holds the last point, the bracket's other end and the last two steps.
_XPRE, _XCUR, _XBLK, _FPRE, _FCUR, _FBLK, _SPRE, _SCUR = range(8)


@nb.njit(cache=True)
def _brent_start(st, a, b, fa, fb):
    """Start Brent's method on [a, b], where fa = f(a) and fb = f(b) are non-zero and differ in sign."""
    st[_XPRE], st[_XCUR], st[_XBLK] = a, b, 0.0
    st[_FPRE], st[_FCUR], st[_FBLK] = fa, fb, 0.0
    st[_SPRE] = st[_SCUR] = 0.0


@nb.njit(cache=True)
def _brent_next(st, ctl):
    """One step of Brent's method once st[_FCUR] = f(st[_XCUR]): returns (the next point to evaluate,
    False), or (the root, True) when the bracket is below (xtol + rtol |x|) as scipy's brentq stops.
    Brent, Algorithms for Minimization without Derivatives (1973), ch. 4: bisection, secant and inverse
    quadratic interpolation, an interpolated step kept only while the bracket shrinks fast enough."""
    xpre, xcur, xblk = st[_XPRE], st[_XCUR], st[_XBLK]
    fpre, fcur, fblk = st[_FPRE], st[_FCUR], st[_FBLK]
    spre, scur = st[_SPRE], st[_SCUR]
    if fpre != 0.0 and fcur != 0.0 and (fpre < 0.0) != (fcur < 0.0):
        xblk, fblk = xpre, fpre
        spre = scur = xcur - xpre
    if abs(fblk) < abs(fcur):
        xpre, xcur, xblk = xcur, xblk, xcur
        fpre, fcur, fblk = fcur, fblk, fcur
    delta = 0.5 * (ctl[_XTOL] + ctl[_RTOL] * abs(xcur))
    sbis = 0.5 * (xblk - xcur)
    if fcur == 0.0 or abs(sbis) < delta:
        return xcur, True
    if abs(spre) > delta and abs(fcur) < abs(fpre):
        if xpre == xblk:
            stry = -fcur * (xcur - xpre) / (fcur - fpre)  # secant
        else:
            dpre = (fpre - fcur) / (xpre - xcur)
            dblk = (fblk - fcur) / (xblk - xcur)
            stry = -fcur * (fblk * dblk - fpre * dpre) / (dblk * dpre * (fblk - fpre))  # inverse quadratic
        if 2.0 * abs(stry) < min(abs(spre), 3.0 * abs(sbis) - delta):
            spre, scur = scur, stry
        else:
            spre, scur = sbis, sbis
    else:
        spre, scur = sbis, sbis
    xpre, fpre = xcur, fcur
    if abs(scur) > delta:
        xcur += scur
    else:
        xcur += delta if sbis > 0.0 else -delta
    st[_XPRE], st[_XCUR], st[_XBLK] = xpre, xcur, xblk
    st[_FPRE], st[_FBLK] = fpre, fblk
    st[_SPRE], st[_SCUR] = spre, scur
    return xcur, False


@nb.njit(cache=True)
def _house_pressure(p_a, leaks, house, cond, ctl, status):
    """House pressure that balances the house at attic pressure p_a [Pa]: its net inflow falls strictly
    with p_house, so a bracket [-s, s] is widened fourfold until the sign changes, then Brent's method.
    NaN, with ``status`` set, on failure."""
    env = envelope_offset(house, cond)
    if house[0] == 0.0:
        return 0.0
    if leaks.shape[0] == 0:
        return env  # no flow through the envelope: p_house where its driving pressure is zero
    scale = max(1.0, abs(p_a), abs(env))
    for j in range(leaks.shape[0]):
        scale = max(scale, abs(leak_offset(leaks[j, 2], cond)))
    big = ctl[_MAX_BRACKET]
    scale = min(scale, big)
    a, b = -scale, scale
    fa, fb = _house_net(a, p_a, leaks, house, cond, ctl), _house_net(b, p_a, leaks, house, cond, ctl)
    while fa < 0.0 or fb > 0.0:
        if scale >= big:
            status[0] = HOUSE_NO_SIGN_CHANGE
            return math.nan
        scale = min(4.0 * scale, big)
        if fa < 0.0:
            a = -scale
            fa = _house_net(a, p_a, leaks, house, cond, ctl)
        if fb > 0.0:
            b = scale
            fb = _house_net(b, p_a, leaks, house, cond, ctl)
    if fa == 0.0:
        return a
    if fb == 0.0:
        return b
    st = np.empty(8)
    _brent_start(st, a, b, fa, fb)
    for _ in range(int(ctl[_MAXITER])):
        x, done = _brent_next(st, ctl)
        if done:
            return x
        st[_FCUR] = _house_net(x, p_a, leaks, house, cond, ctl)
    status[0] = HOUSE_NOT_CONVERGED
    return math.nan


@nb.njit(cache=True)
def _attic_net(p_a, vents, leaks, house, fan, curve_p, curve_q, curve_seg, cond, ctl, status):
    """Net mass flow into the attic [kg/s] at attic pressure p_a (NaN when the house balance failed)."""
    lam = ctl[_LAMINAR]
    rho_o, rho_a, rho_h = cond[_RHO_O], cond[_RHO_A], cond[_RHO_H]
    m = 0.0
    for j in range(vents.shape[0]):
        m += orifice_mass(outdoor_offset(vents[j, 1], vents[j, 2], cond) - p_a, vents[j, 0], rho_o, rho_a, lam)
    running = cond[_RUNNING] != 0.0
    if fan[0] != 0.0 and not running and fan[3] > 0.0:
        m += orifice_mass(outdoor_offset(fan[1], fan[2], cond) - p_a, fan[3], rho_o, rho_a, lam)
    if leaks.shape[0] > 0:
        p_h = _house_pressure(p_a, leaks, house, cond, ctl, status)
        if p_h != p_h:
            return math.nan
        for j in range(leaks.shape[0]):
            dp = p_h - p_a + leak_offset(leaks[j, 2], cond)
            m += power_law_mass(dp, leaks[j, 0], leaks[j, 1], rho_h, rho_a, lam)
    if running:
        # pressure rise attic -> outdoors at the fan, mapped onto the published curve (fan laws)
        x = (outdoor_offset(fan[1], fan[2], cond) - p_a) * cond[_FAN_FACTOR]
        q = cond[_SPEED] * curve_flow(x, curve_p, curve_q, curve_seg)
        m -= q * (rho_a if q >= 0.0 else rho_o)
    return m


@nb.njit(cache=True)
def solve_pressures(vents, leaks, house, fan, curve_p, curve_q, curve_seg, cond, ctl):
    """(attic pressure [Pa], house pressure [Pa], status) that balance the attic and the house: the attic's
    net inflow falls strictly with p_attic; bracket widened and Brent's method as for the house."""
    status = np.zeros(1, dtype=np.int64)
    scale = max(1.0, abs(envelope_offset(house, cond)))
    for j in range(vents.shape[0]):
        scale = max(scale, abs(outdoor_offset(vents[j, 1], vents[j, 2], cond)))
    running = cond[_RUNNING] != 0.0
    if fan[0] != 0.0 and not running and fan[3] > 0.0:
        scale = max(scale, abs(outdoor_offset(fan[1], fan[2], cond)))
    for j in range(leaks.shape[0]):
        scale = max(scale, abs(leak_offset(leaks[j, 2], cond)))
    if running:
        scale = max(scale, abs(outdoor_offset(fan[1], fan[2], cond)), fan[4] / cond[_FAN_FACTOR])
    big = ctl[_MAX_BRACKET]
    scale = min(scale, big)
    a, b = -scale, scale
    fa = _attic_net(a, vents, leaks, house, fan, curve_p, curve_q, curve_seg, cond, ctl, status)
    fb = _attic_net(b, vents, leaks, house, fan, curve_p, curve_q, curve_seg, cond, ctl, status)
    while status[0] == SOLVED and (fa < 0.0 or fb > 0.0):
        if scale >= big:
            return math.nan, math.nan, ATTIC_NO_SIGN_CHANGE
        scale = min(4.0 * scale, big)
        if fa < 0.0:
            a = -scale
            fa = _attic_net(a, vents, leaks, house, fan, curve_p, curve_q, curve_seg, cond, ctl, status)
        if fb > 0.0:
            b = scale
            fb = _attic_net(b, vents, leaks, house, fan, curve_p, curve_q, curve_seg, cond, ctl, status)
    if status[0] != SOLVED:
        return math.nan, math.nan, status[0]
    p_a = a if fa == 0.0 else b
    if fa != 0.0 and fb != 0.0:
        st = np.empty(8)
        _brent_start(st, a, b, fa, fb)
        done = False
        for _ in range(int(ctl[_MAXITER])):
            p_a, done = _brent_next(st, ctl)
            if done:
                break
            st[_FCUR] = _attic_net(p_a, vents, leaks, house, fan, curve_p, curve_q, curve_seg, cond, ctl, status)
            if status[0] != SOLVED:
                return math.nan, math.nan, status[0]
        if not done:
            return math.nan, math.nan, ATTIC_NOT_CONVERGED
    p_h = _house_pressure(p_a, leaks, house, cond, ctl, status)
    return p_a, p_h, status[0]


jitcache.restore()
