"""NTC thermistor models: Beta and Steinhart-Hart, both directions, and fitting from an R-T table.

Temperatures are in degC at the interface (kelvin inside), resistances in ohm. Every function accepts
floats or numpy arrays and returns the same shape.

References
----------
.. [1] J. S. Steinhart and S. R. Hart, "Calibration curves for thermistors", Deep-Sea Research 15 (1968)
       497-503 (from memory).
.. [2] Thermistor makers' application notes on the Beta (B-constant) equation,
       R(T) = R25 * exp(B * (1/T - 1/T25)).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from atticsim.constants import KELVIN

#: Reference temperature of R25 and of the Beta constant [degC].
T25_C = 25.0

_KINDS = ("beta", "steinhart_hart")


def _kelvin(temp_c):
    """Convert degC to K, refusing temperatures at or below absolute zero."""
    if isinstance(temp_c, float):  # fast path for the simulation's scalar calls
        if not temp_c + KELVIN > 0.0:
            raise ValueError("thermistor temperature must be above -273.15 degC and not NaN")
        return temp_c + KELVIN
    t = np.asanyarray(temp_c, dtype=float) + KELVIN
    if np.any(~(t > 0.0)):
        raise ValueError("thermistor temperature must be above -273.15 degC and not NaN")
    return t


def _positive(value, name):
    """Return value as a float array, refusing zero, negative or NaN entries."""
    if isinstance(value, float):
        if not value > 0.0:
            raise ValueError(f"{name} must be positive (got {value!r})")
        return value
    v = np.asanyarray(value, dtype=float)
    if np.any(~(v > 0.0)):
        raise ValueError(f"{name} must be positive (got {value!r})")
    return v


def _out(x):
    """Return a Python float for 0-d results, the array otherwise."""
    return float(x) if np.ndim(x) == 0 else x


def beta_resistance(temp_c, r25, beta):
    """Thermistor resistance from the Beta model.

    Parameters
    ----------
    temp_c : float or array
        Thermistor temperature [degC].
    r25 : float
        Resistance at 25 degC [ohm].
    beta : float
        Beta constant (B25/xx) [K].

    Returns
    -------
    float or array
        Resistance [ohm].
    """
    _positive(r25, "thermistor R25")
    _positive(beta, "thermistor Beta")
    return _out(_beta_r(_kelvin(temp_c), r25, beta))


def _beta_r(t_k, r25, beta):
    """Beta model R(T) [ohm] at t_k [K], parameters already checked."""
    # R = R25 exp(B (1/T - 1/T25)): thermistor makers' Beta equation [2]
    return r25 * np.exp(beta * (1.0 / t_k - 1.0 / (T25_C + KELVIN)))


def beta_temperature(resistance, r25, beta):
    """Thermistor temperature from the Beta model.

    Parameters
    ----------
    resistance : float or array
        Thermistor resistance [ohm].
    r25 : float
        Resistance at 25 degC [ohm].
    beta : float
        Beta constant [K].

    Returns
    -------
    float or array
        Temperature [degC].
    """
    _positive(r25, "thermistor R25")
    _positive(beta, "thermistor Beta")
    return _out(_beta_t(_positive(resistance, "thermistor resistance"), r25, beta))


def _beta_t(r, r25, beta):
    """Beta model T(R) [degC] for r [ohm] > 0, parameters already checked."""
    # 1/T = 1/T25 + ln(R/R25)/B: the Beta equation [2] solved for T
    inv_t = 1.0 / (T25_C + KELVIN) + np.log(r / r25) / beta
    if np.any(inv_t <= 0.0):
        raise ValueError("thermistor resistance is too small for the Beta model (temperature would be infinite)")
    return 1.0 / inv_t - KELVIN


def steinhart_hart_temperature(resistance, a, b, c):
    """Thermistor temperature from the Steinhart-Hart equation.

    Parameters
    ----------
    resistance : float or array
        Thermistor resistance [ohm].
    a, b, c : float
        Steinhart-Hart coefficients [1/K].

    Returns
    -------
    float or array
        Temperature [degC].
    """
    return _out(_sh_t(_positive(resistance, "thermistor resistance"), a, b, c))


def _sh_t(r, a, b, c):
    """Steinhart-Hart T(R) [degC] for r [ohm] > 0."""
    x = np.log(r)
    # 1/T = A + B ln R + C (ln R)^3: Steinhart & Hart 1968 [1]
    inv_t = a + b * x + c * x**3
    if np.any(inv_t <= 0.0):
        raise ValueError("Steinhart-Hart coefficients give a non-positive 1/T for this resistance")
    return 1.0 / inv_t - KELVIN


def steinhart_hart_resistance(temp_c, a, b, c):
    """Thermistor resistance from the Steinhart-Hart equation (its cubic in ln R solved).

    Parameters
    ----------
    temp_c : float or array
        Thermistor temperature [degC].
    a, b, c : float
        Steinhart-Hart coefficients [1/K]; b must be positive (an NTC).

    Returns
    -------
    float or array
        Resistance [ohm].
    """
    if not b > 0.0:
        raise ValueError(f"Steinhart-Hart B must be positive for an NTC thermistor (got {b!r})")
    return _out(_sh_r(_kelvin(temp_c), a, b, c))


def _sh_r(t, a, b, c):
    """Steinhart-Hart R(T) [ohm] at t [K], b > 0 already checked."""
    if c > 0.0:
        # C x^3 + B x + (A - 1/T) = 0 has one real root (B, C > 0); Cardano's formula for the depressed
        # cubic x^3 + p x + q = 0 (any algebra text, e.g. Abramowitz & Stegun 3.8.2, from memory)
        p, q = b / c, (a - 1.0 / t) / c
        y = np.sqrt((p / 3.0) ** 3 + (q / 2.0) ** 2)
        x = np.cbrt(y - q / 2.0) - np.cbrt(y + q / 2.0)
    elif c == 0.0:
        x = (1.0 / t - a) / b
    else:
        # C < 0 (a poor fit): Newton from the linear solution, refusing a curve that turns over
        x = (1.0 / t - a) / b
        for _ in range(60):
            slope = b + 3.0 * c * x**2
            if np.any(slope <= 0.0):
                raise ValueError("Steinhart-Hart coefficients with C < 0 are not monotonic at this temperature")
            step = (a + b * x + c * x**3 - 1.0 / t) / slope
            x = x - step
            if np.all(np.abs(step) < 1e-13):
                break
    return np.exp(x)


def fit_steinhart_hart(temps_c, resistances):
    """Fit Steinhart-Hart coefficients to an R-T table.

    Three points are solved exactly; more points are fitted by linear least squares on 1/T.

    Parameters
    ----------
    temps_c : sequence of float
        Temperatures [degC], all different.
    resistances : sequence of float
        Resistances at those temperatures [ohm].

    Returns
    -------
    tuple of float
        (A, B, C) [1/K].
    """
    t = _kelvin(np.atleast_1d(np.asarray(temps_c, dtype=float)))
    r = _positive(np.atleast_1d(np.asarray(resistances, dtype=float)), "thermistor table resistance")
    if t.ndim != 1 or t.shape != r.shape:
        raise ValueError("thermistor table needs as many resistances as temperatures")
    if t.size < 3:
        raise ValueError(f"thermistor table needs at least 3 points for Steinhart-Hart (got {t.size})")
    if np.unique(t).size != t.size:
        raise ValueError("thermistor table has repeated temperatures")
    order = np.argsort(t)
    if np.any(np.diff(r[order]) >= 0.0):
        raise ValueError("thermistor table resistance must fall as temperature rises (NTC)")
    x = np.log(r)
    # 1/T = A + B x + C x^3 is linear in (A, B, C): Steinhart & Hart 1968 [1]
    m = np.column_stack([np.ones_like(x), x, x**3])
    if t.size == 3:
        coef = np.linalg.solve(m, 1.0 / t)
    else:
        coef, *_ = np.linalg.lstsq(m, 1.0 / t, rcond=None)
    return float(coef[0]), float(coef[1]), float(coef[2])


@dataclass(frozen=True)
class Thermistor:
    """An NTC thermistor.

    Parameters
    ----------
    kind : str
        "beta" (parameters = (R25 [ohm], Beta [K])) or "steinhart_hart" (parameters = (A, B, C) [1/K]).
    parameters : tuple of float
        Model parameters, see `kind`.
    """

    kind: str
    parameters: tuple

    def __post_init__(self):
        if self.kind not in _KINDS:
            raise ValueError(f"thermistor kind must be 'beta' or 'steinhart_hart' (got {self.kind!r})")
        params = tuple(float(p) for p in self.parameters)
        object.__setattr__(self, "parameters", params)
        if self.kind == "beta":
            if len(params) != 2:
                raise ValueError("a Beta thermistor needs parameters (R25, Beta)")
            _positive(params[0], "thermistor R25")
            _positive(params[1], "thermistor Beta")
        else:
            if len(params) != 3:
                raise ValueError("a Steinhart-Hart thermistor needs parameters (A, B, C)")
            if not params[1] > 0.0:
                raise ValueError(f"Steinhart-Hart B must be positive for an NTC thermistor (got {params[1]!r})")

    @classmethod
    def from_beta(cls, r25, beta):
        """Beta-model thermistor from R25 [ohm] and Beta [K]."""
        return cls("beta", (r25, beta))

    @classmethod
    def from_steinhart_hart(cls, a, b, c):
        """Steinhart-Hart thermistor from its coefficients A, B, C [1/K]."""
        return cls("steinhart_hart", (a, b, c))

    @classmethod
    def from_table(cls, temps_c, resistances):
        """Steinhart-Hart thermistor fitted to an R-T table (temperatures [degC], resistances [ohm])."""
        return cls("steinhart_hart", fit_steinhart_hart(temps_c, resistances))

    @property
    def r25(self):
        """Resistance at 25 degC [ohm]."""
        return self.resistance(T25_C)

    def resistance(self, temp_c):
        """Resistance [ohm] at thermistor temperature temp_c [degC] (float or array)."""
        t_k = _kelvin(temp_c)
        return _out(_beta_r(t_k, *self.parameters) if self.kind == "beta" else _sh_r(t_k, *self.parameters))

    def temperature(self, resistance):
        """Temperature [degC] at resistance [ohm] (float or array)."""
        r = _positive(resistance, "thermistor resistance")
        return _out(_beta_t(r, *self.parameters) if self.kind == "beta" else _sh_t(r, *self.parameters))


@dataclass(frozen=True)
class ToleratedThermistor:
    """A thermistor whose R25 and Beta are off nominal by given factors (one sample of a part's tolerance).

    R(T) = f_R25 * R25 * (R_nom(T) / R25)^f_B, which for a Beta-model part is exactly the Beta model with
    R25 * f_R25 and B * f_B, and for a Steinhart-Hart part scales its ln(R/R25) the same way.
    Factors may be floats or numpy arrays (one entry per sample).

    Parameters
    ----------
    nominal : Thermistor
        The nominal part.
    r25_factor : float or array
        R25 / nominal R25 [-].
    beta_factor : float or array
        Beta / nominal Beta [-].
    """

    nominal: Thermistor
    r25_factor: object = 1.0
    beta_factor: object = 1.0

    def __post_init__(self):
        _positive(self.r25_factor, "thermistor R25 factor")
        _positive(self.beta_factor, "thermistor Beta factor")

    @property
    def r25(self):
        """Resistance at 25 degC [ohm]."""
        return self.resistance(T25_C)

    def resistance(self, temp_c):
        """Resistance [ohm] at thermistor temperature temp_c [degC]."""
        r25 = self.nominal.r25
        # ln(R/R25) scales with B in the Beta equation [2]; R25 scales the whole curve
        return _out(self.r25_factor * r25 * (self.nominal.resistance(temp_c) / r25) ** self.beta_factor)

    def temperature(self, resistance):
        """Temperature [degC] at resistance [ohm]."""
        r = _positive(resistance, "thermistor resistance")
        r25 = self.nominal.r25
        return self.nominal.temperature(r25 * (r / (self.r25_factor * r25)) ** (1.0 / self.beta_factor))
