"""Weather input: readers for typical-year files and the project's own CSV, and their validation.

Every reader returns ``(frame, meta, report)``: the normalised weather frame (see
:mod:`atticsim.io.weather_frame`), a :class:`WeatherMeta` and a
:class:`ValidationReport`.  Call :func:`read_weather` for any file; it detects the
format from the content.  pvlib is imported only when a typical-year file is read.
"""

from atticsim.io.csv_format import read_weather_csv, write_weather_csv
from atticsim.io.detect import detect_format, read_weather
from atticsim.io.typical_year import DEFAULT_TYPICAL_YEAR, read_epw, read_tmy2, read_tmy3
from atticsim.io.weather_frame import (
    DEFAULT_MAX_GAP_H,
    WEATHER_COLUMNS,
    WEATHER_UNITS,
    ValidationReport,
    WeatherError,
    WeatherMeta,
    validate_weather,
)
from atticsim.air import (
    dew_point_from_relative_humidity,
    relative_humidity_from_dew_point,
    saturation_vapour_pressure,
    standard_atmosphere_pressure,
)

__all__ = [
    "DEFAULT_MAX_GAP_H",
    "DEFAULT_TYPICAL_YEAR",
    "WEATHER_COLUMNS",
    "WEATHER_UNITS",
    "ValidationReport",
    "WeatherError",
    "WeatherMeta",
    "detect_format",
    "dew_point_from_relative_humidity",
    "read_epw",
    "read_tmy2",
    "read_tmy3",
    "read_weather",
    "read_weather_csv",
    "relative_humidity_from_dew_point",
    "saturation_vapour_pressure",
    "standard_atmosphere_pressure",
    "validate_weather",
    "write_weather_csv",
]
