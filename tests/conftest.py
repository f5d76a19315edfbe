"""Shared fixtures: the demo scenario and small hand-made weather frames."""

from types import SimpleNamespace

import numpy as np
import pandas as pd
import pytest

from atticsim.scenario import demo_scenario


def make_weather(temp_air, ghi=0.0, dni=0.0, dhi=0.0, wind=3.0, dew=None, start="2025-07-01",
                 step_s=3600.0, utc_offset=-6, sky_ir=np.nan):
    """A normalised weather frame from arrays (hand-made test data, not a climate)."""
    temp_air = np.asarray(temp_air, float)
    n = temp_air.size
    tz = f"Etc/GMT{-utc_offset:+d}"
    idx = pd.date_range(pd.Timestamp(start).tz_localize(tz), periods=n, freq=pd.Timedelta(seconds=step_s),
                        name="time")
    bc = lambda v: np.broadcast_to(np.asarray(v, float), (n,)).copy()  # noqa: E731
    frame = pd.DataFrame({
        "temp_air": temp_air, "temp_dew": bc(temp_air - 10.0 if dew is None else dew),
        "relative_humidity": 50.0, "wind_speed": bc(wind), "wind_direction": np.nan,
        "ghi": bc(ghi), "dni": bc(dni), "dhi": bc(dhi), "pressure": 101325.0, "sky_ir": bc(sky_ir),
    }, index=idx)
    meta = SimpleNamespace(name="test", latitude=29.3, longitude=-94.8, altitude=5.0,
                           utc_offset=utc_offset, source_format="test", invented=True, path="test-weather")
    return frame, meta


@pytest.fixture
def demo():
    return demo_scenario()
