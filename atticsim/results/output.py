"""Write a run's files atomically: everything goes to a temporary folder beside DIR, then is moved in.

Nothing half-written is left behind on failure, and an existing DIR with files in it is never
overwritten unless the caller passes ``force=True``.
"""

from __future__ import annotations

import json
import math
import shutil
import tempfile
from pathlib import Path


class OutputExistsError(FileExistsError):
    """DIR already holds files and overwriting was not asked for."""


def _clean(value):
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, dict):
        return {k: _clean(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_clean(v) for v in value]
    if hasattr(value, "item"):
        return _clean(value.item())
    return value


def write_json(path: Path, data) -> None:
    """Write JSON with NaN/inf as null and numpy scalars as plain numbers."""
    path.write_text(json.dumps(_clean(data), indent=2) + "\n")


def check_output_dir(out: Path, force: bool) -> None:
    """Raise OutputExistsError if ``out`` exists with files in it and ``force`` is False."""
    if out.exists() and not out.is_dir():
        raise OutputExistsError(f"{out}: exists and is not a folder")
    if out.exists() and any(out.iterdir()) and not force:
        raise OutputExistsError(f"{out}: folder already holds files; pass --force to overwrite")


def write_outputs(out: str | Path, writers: dict, force: bool = False) -> list[Path]:
    """Write files into ``out`` atomically.

    Parameters
    ----------
    out : str or Path
        Target folder.
    writers : dict
        file name -> callable(path) that writes that file.
    force : bool
        Replace an existing folder's contents.

    Returns
    -------
    list of Path
        The files written (in their final place).
    """
    out = Path(out)
    check_output_dir(out, force)
    out.parent.mkdir(parents=True, exist_ok=True)
    tmp = Path(tempfile.mkdtemp(prefix=f".{out.name}.", dir=out.parent))
    try:
        for name, write in writers.items():
            write(tmp / name)
        if out.exists():
            backup = out.with_name(f".{out.name}.old")
            if backup.exists():
                shutil.rmtree(backup)
            out.rename(backup)
            tmp.rename(out)
            shutil.rmtree(backup)
        else:
            tmp.rename(out)
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    return [out / name for name in writers]
