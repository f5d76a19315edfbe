"""Where weather comes from: a file (read and validated by ``atticsim.io``), a typical-year file shipped
with pvlib, or a built-in demo site.

Spec strings:

- ``demo:NAME`` or ``demo:NAME:YEAR``: a year of INVENTED weather for one of the demo climates in
  :mod:`atticsim.forcing.synthetic`;
- ``pvlib:FILE``: a typical-year file from the installed pvlib package's data folder (real climates:
  ``12839.tm2`` hot-humid, ``723170TYA.CSV`` mixed humid, ``703165TY.csv`` cold maritime);
- anything else: a path to a weather file (atticsim CSV, TMY3, TMY2 or EPW; format detected from content).
"""

from __future__ import annotations

from functools import lru_cache
from pathlib import Path


@lru_cache(maxsize=8)
def _demo(name: str, year: int):
    from atticsim.forcing.synthetic import demo_weather

    return demo_weather(name, year)


def pvlib_data_file(name: str) -> Path:
    """Path of a file in the installed pvlib package's data folder (not copied into this project)."""
    import pvlib

    path = Path(pvlib.__file__).resolve().parent / "data" / name
    if not path.is_file():
        raise ValueError(f"pvlib:{name}: weather: no such file in pvlib's data folder")
    return path


def resolve_weather_path(spec: str) -> str:
    """A weather spec's file path (``pvlib:`` resolved), or the spec itself for demo weather."""
    if spec.startswith("pvlib:"):
        return str(pvlib_data_file(spec[len("pvlib:"):]))
    return spec


def load_weather(spec: str, year: int | None = None):
    """Load weather for a spec string.

    Parameters
    ----------
    spec : str
        ``"demo:NAME"``, ``"demo:NAME:YEAR"``, ``"pvlib:FILE"`` or a path to a weather file.
    year : int, optional
        Calendar year to lay a typical-year file (TMY3, TMY2, EPW) or demo weather on.

    Returns
    -------
    (pandas.DataFrame, meta)
        The normalised weather frame and its metadata (with a ``notes`` list of repairs made).
    """
    if spec.startswith("demo:"):
        parts = spec.split(":")
        if len(parts) > 3 or (len(parts) == 3 and not (parts[2].isdigit() and 1800 <= int(parts[2]) <= 2200)):
            raise ValueError(f"{spec}: weather: write demo:NAME or demo:NAME:YEAR with a year from 1800 to 2200")
        from atticsim.forcing.synthetic import DEMO_CLIMATES

        if parts[1] not in DEMO_CLIMATES:
            raise ValueError(f"{spec}: weather: no demo weather {parts[1]!r}; known: demo:"
                             f"{', demo:'.join(sorted(DEMO_CLIMATES))}")
        y = year if year is not None else (int(parts[2]) if len(parts) > 2 else 2025)
        frame, meta = _demo(parts[1], y)
        return frame.copy(), meta
    from atticsim.io import read_weather

    # a dated file (atticsim's CSV) refuses a year other than its own: --year lays typical years only
    frame, meta, report = read_weather(resolve_weather_path(spec), year=year)
    return frame, _with_notes(meta, report)


def _with_notes(meta, report):
    from types import SimpleNamespace

    fields = {k: getattr(meta, k) for k in meta.__dataclass_fields__}
    notes = list(getattr(report, "repairs", [])) + list(getattr(report, "notes", []))
    return SimpleNamespace(**fields, notes=notes)
