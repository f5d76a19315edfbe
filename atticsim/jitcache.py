"""Keep numba's on-disk cache of the compiled solver in step with the sources it was built from.

numba checks a cached function against its own file only (a hash of that file's content). The compiled
solver inlines functions and constants from several modules (the network kernel, the blocks, the
heat-transfer and sensor correlations...), so a change to one of them would leave the others' cached
machine code stale. Before anything is compiled or loaded, :func:`check` hashes those sources; when the
hash differs from the one stored beside the cache, the cache files of those modules are removed and
rebuilt on first use.
"""

from __future__ import annotations

import hashlib
from pathlib import Path

_ROOT = Path(__file__).resolve().parent
#: The modules whose code or constants end up in compiled functions.
SOURCES = ("constants.py", "jitcache.py", "network/kernel.py", "network/model.py", "network/heat_transfer.py",
           "network/placement.py", "sensor/air.py", "sensor/convection.py", "sensor/body.py",
           "io/weather_frame.py", "hybrid/blocks.py", "hybrid/compiled.py")
_STAMP = "atticsim-jit.stamp"
_checked = False


def _digest() -> str:
    h = hashlib.sha256()
    for name in SOURCES:
        path = _ROOT / name
        h.update(name.encode())
        h.update(path.read_bytes() if path.exists() else b"")
    return h.hexdigest()


def check() -> None:
    """Remove stale numba cache files of the compiled modules (once per process; cheap)."""
    global _checked
    if _checked:
        return
    _checked = True
    digest = _digest()
    stamp = _ROOT / "hybrid" / "__pycache__" / _STAMP
    try:
        if stamp.exists() and stamp.read_text() == digest:
            return
        for folder in {(_ROOT / name).parent / "__pycache__" for name in SOURCES}:
            if folder.is_dir():
                for f in list(folder.glob("*.nbi")) + list(folder.glob("*.nbc")):
                    f.unlink(missing_ok=True)
        stamp.parent.mkdir(exist_ok=True)
        stamp.write_text(digest)
    except OSError:
        # a read-only install: numba then caches in its own user directory (or not at all); nothing to do
        pass
