"""Preferred-number series of resistor values (IEC 60063) and rounding to them.

E12 and E24 are hard-coded: their two-digit values were fixed by convention and differ from
round(10**(i/n), 1) at 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7 and 8.2. E96 follows its rule
round(10**(i/96), 2) exactly, so it is computed.

Reference: IEC 60063:2015, Preferred number series for resistors and capacitors, tables 1-3.
"""

from __future__ import annotations

import math
import numbers

import numpy as np

#: IEC 60063 E12 series (one decade).
E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)
#: IEC 60063 E24 series (one decade).
E24 = (1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
       3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1)
#: IEC 60063 E96 series (one decade): round(10^(i/96), 2).
E96 = tuple(round(10.0 ** (i / 96.0), 2) for i in range(96))

_SERIES = {"E12": E12, "E24": E24, "E96": E96}
#: Relative slack when deciding that a value already is a series value.
_REL = 1e-9


def series_values(series):
    """Mantissas of one decade of a series.

    Parameters
    ----------
    series : str
        "E12", "E24" or "E96".

    Returns
    -------
    tuple of float
        Values in [1, 10).
    """
    try:
        return _SERIES[str(series).upper()]
    except KeyError:
        raise ValueError(f"resistor series must be one of E12, E24, E96 (got {series!r})") from None


def _neighbours(value, series):
    """(largest series value <= value, smallest series value >= value) [same unit as value]."""
    if not (isinstance(value, numbers.Real) and 0.0 < value < math.inf):
        raise ValueError(f"value to round to a resistor series must be positive and finite (got {value!r})")
    mant = series_values(series)
    decade = math.floor(math.log10(value))
    # mantissa x decade, cleaned of binary noise (4.7 * 1000 -> 4700.0)
    grid = np.array([float(f"{m * 10.0**d:.12g}") for d in (decade - 1, decade, decade + 1, decade + 2)
                     for m in mant])
    near = np.isclose(grid, value, rtol=_REL, atol=0.0)
    if near.any():
        v = float(grid[near][0])
        return v, v
    return float(grid[grid < value].max()), float(grid[grid > value].min())


def round_down(value, series="E24"):
    """Largest series value not above value (a maximum rounded down) [same unit as value]."""
    return _neighbours(value, series)[0]


def round_up(value, series="E24"):
    """Smallest series value not below value (a minimum rounded up) [same unit as value]."""
    return _neighbours(value, series)[1]


def round_nearest(value, series="E24"):
    """Series value nearest to value on a logarithmic scale [same unit as value]."""
    lo, hi = _neighbours(value, series)
    return lo if math.log(value / lo) <= math.log(hi / value) else hi
