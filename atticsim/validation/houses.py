"""Houses and weather the validation cases run: the built-in demo house with changes, hand-made weather.

Everything here is invented for the checks (the demo house is a fictional house on a fictional site); the
typical-year files the field cases use come from the pvlib package (real climates).
"""

from __future__ import annotations

import copy
import tomllib
from importlib import resources
from types import SimpleNamespace


def _merge(base: dict, changes: dict) -> dict:
    """Nested dict ``base`` updated by ``changes`` (tables merged key by key, anything else replaced)."""
    out = copy.deepcopy(base)
    for key, value in changes.items():
        if value is None:
            out.pop(key, None)
        elif isinstance(value, dict) and isinstance(out.get(key), dict):
            out[key] = _merge(out[key], value)
        else:
            out[key] = copy.deepcopy(value)
    return out


def demo_house(changes: dict | None = None, label: str = "validation case"):
    """The built-in demo house (fictional) with ``changes`` merged into its TOML tables, validated.

    Parameters
    ----------
    changes : dict, optional
        Nested tables as in a scenario file, e.g. ``{"ceiling": {"insulation": "R-19"}}``; None removes a key.
    label : str
        Names the scenario in error messages.
    """
    from atticsim.scenario.load import scenario_from_dict

    text = resources.files("atticsim.data").joinpath("demo_house.toml").read_text()
    return scenario_from_dict(_merge(tomllib.loads(text), changes or {}), f"<{label}>")


def constant_weather(temp_air, hours=48, ghi=0.0, dni=0.0, dhi=0.0, wind=3.0, dew=None, sky_ir=None,
                     start="2025-07-01", utc_offset=-6, latitude=29.3, longitude=-94.8):
    """A normalised hourly weather frame holding every value constant (hand-made, not a climate).

    Returns
    -------
    (pandas.DataFrame, SimpleNamespace)
        The frame (the normalised columns of :mod:`atticsim.io`) and its site metadata.
    """
    import numpy as np
    import pandas as pd

    tz = f"Etc/GMT{-utc_offset:+d}"
    idx = pd.date_range(pd.Timestamp(start).tz_localize(tz), periods=hours, freq="h", name="time")
    n = len(idx)
    frame = pd.DataFrame({
        "temp_air": np.full(n, float(temp_air)), "temp_dew": np.full(n, float(temp_air - 10.0 if dew is None else dew)),
        "relative_humidity": 50.0, "wind_speed": np.full(n, float(wind)), "wind_direction": np.nan,
        "ghi": np.full(n, float(ghi)), "dni": np.full(n, float(dni)), "dhi": np.full(n, float(dhi)),
        "pressure": 101325.0, "sky_ir": np.full(n, np.nan if sky_ir is None else float(sky_ir)),
    }, index=idx)
    meta = SimpleNamespace(name="hand-made constant weather", latitude=latitude, longitude=longitude,
                           altitude=5.0, utc_offset=utc_offset, source_format="test", invented=True,
                           path="hand-made constant weather", notes=[])
    return frame, meta
