"""Where weather comes from: a file (read and validated by ``atticsim.io``) or a built-in demo site.

``demo:NAME`` (optionally ``demo:NAME:YEAR``) generates a year of INVENTED weather for one of the
demo climates in :mod:`atticsim.forcing.synthetic`; anything else is a weather file path.
"""

from __future__ import annotations

from functools import lru_cache


@lru_cache(maxsize=8)
def _demo(name: str, year: int):
    from atticsim.forcing.synthetic import demo_weather

    return demo_weather(name, year)


def load_weather(spec: str):
    """Load weather for a spec string.

    Parameters
    ----------
    spec : str
        ``"demo:NAME"``, ``"demo:NAME:YEAR"`` or a path to a weather file.

    Returns
    -------
    (pandas.DataFrame, meta)
        The normalised weather frame and its metadata (with a ``notes`` list of repairs made).
    """
    if spec.startswith("demo:"):
        parts = spec.split(":")
        year = int(parts[2]) if len(parts) > 2 else 2025
        frame, meta = _demo(parts[1], year)
        return frame.copy(), meta
    from atticsim.io import read_weather

    frame, meta, report = read_weather(spec)
    return frame, _with_notes(meta, report)


def _with_notes(meta, report):
    from types import SimpleNamespace

    fields = dict(vars(meta)) if hasattr(meta, "__dict__") else {
        k: getattr(meta, k) for k in meta.__dataclass_fields__}
    notes = list(getattr(report, "repairs", [])) + list(getattr(report, "notes", []))
    return SimpleNamespace(**fields, notes=notes)
