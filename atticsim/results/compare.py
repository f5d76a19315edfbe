"""Two result folders side by side: read a run's folder (``summary.json`` and its time series, CSV or
Parquet) and the differences of their summaries."""

from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path


class CompareError(ValueError):
    """A folder that cannot be compared; the text is one line ``<folder>: <file>: <reason>``."""


#: Time-series columns a comparison reads (with every deck column); others are left on disk.
SERIES_COLUMNS = ("outdoor_air_c", "attic_air_c", "sensor_c", "fan_on")


@dataclass
class RunFolder:
    """A finished run's folder as read back."""

    folder: Path
    summary: dict
    timeseries: object
    series_file: str

    @property
    def name(self) -> str:
        return self.folder.name or str(self.folder)

    @property
    def title(self) -> str:
        return self.name

    @property
    def period(self) -> str:
        return f"{str(self.summary.get('period_start', ''))[:16]} to {str(self.summary.get('period_end', ''))[:16]}"


def _read_series(path: Path, folder: Path):
    import pandas as pd

    try:
        if path.suffix == ".parquet":
            import pyarrow.parquet as pq

            names = pq.read_schema(path).names
            cols = [c for c in names if c in SERIES_COLUMNS or c.startswith(("deck_", "time"))]
            frame = pd.read_parquet(path, columns=cols)
            if "time" in frame.columns:
                frame = frame.set_index("time")
        else:
            with open(path) as fh:
                names = fh.readline().strip().split(",")
                first = fh.readline().split(",", 1)[0]
            cols = [c for c in names if c in SERIES_COLUMNS or c.startswith("deck_")]
            if not names or names[0] != "time":
                raise CompareError(f"{folder}: {path.name}: first column is not 'time'")
            frame = pd.read_csv(path, usecols=["time", *cols], engine="pyarrow")
            frame["time"] = pd.to_datetime(frame["time"], format="ISO8601", utc=True)
            frame = frame.set_index("time")
            # back to the offset the file was written in (local standard time)
            offset = pd.Timestamp(first).utcoffset() if first else None
            if offset is not None:
                import datetime as _dt

                frame.index = frame.index.tz_convert(_dt.timezone(offset))
    except (OSError, ValueError, KeyError) as exc:
        if isinstance(exc, CompareError):
            raise
        raise CompareError(f"{folder}: {path.name}: cannot read: {exc}") from None
    missing = [c for c in ("outdoor_air_c", "attic_air_c", "fan_on") if c not in frame.columns]
    if missing:
        raise CompareError(f"{folder}: {path.name}: missing column(s) {', '.join(missing)}")
    return frame


def read_run_folder(folder) -> RunFolder:
    """Read a run's folder: ``summary.json`` and ``timeseries.parquet`` (else ``timeseries.csv``).

    Raises
    ------
    CompareError
        The folder, its summary or its time series is missing or unreadable.
    """
    folder = Path(folder)
    if not folder.is_dir():
        raise CompareError(f"{folder}: not a folder")
    sp = folder / "summary.json"
    if not sp.is_file():
        raise CompareError(f"{folder}: summary.json: not found (is this a run's --out folder?)")
    try:
        summary = json.loads(sp.read_text())
    except json.JSONDecodeError as exc:
        raise CompareError(f"{folder}: summary.json: not valid JSON ({exc.msg}, line {exc.lineno})") from None
    for name in ("timeseries.parquet", "timeseries.csv"):
        if (folder / name).is_file():
            return RunFolder(folder, summary, _read_series(folder / name, folder), name)
    raise CompareError(f"{folder}: timeseries.csv: not found (nor timeseries.parquet)")


def summary_differences(a: dict, b: dict) -> list[tuple[str, object, object, float | None]]:
    """(key, A, B, B - A) for every single figure in either summary, in A's order then B's; the difference
    is None where either side is not a number."""
    keys = list(dict.fromkeys([*a, *b]))
    out = []
    for k in keys:
        va, vb = a.get(k), b.get(k)
        if isinstance(va, (list, dict)) or isinstance(vb, (list, dict)):
            continue
        num = lambda v: isinstance(v, (int, float)) and not isinstance(v, bool)  # noqa: E731
        out.append((k, va, vb, (vb - va) if num(va) and num(vb) else None))
    return out
