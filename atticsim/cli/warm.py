"""The fast solver compiled into this install's cache in a process of its own (``python -m atticsim.cli.warm
MARKER``), started by a first run that uses the reference solver meanwhile (:mod:`atticsim.cli.options`).

It simulates one day of the built-in demo house (fictional house, invented weather) with the fast solver,
which compiles and caches every compiled function a run uses, then removes MARKER. It prints nothing and
never fails loudly: whatever goes wrong, the next run compiles in the foreground as before.
"""

from __future__ import annotations

import os
import sys


def main(argv: list[str]) -> int:
    marker = argv[0] if argv else None
    try:
        try:
            os.nice(10)  # the user's run comes first
        except OSError:
            pass
        import atticsim

        atticsim.simulate(atticsim.demo_scenario(['simulation.solver="fast"']), start="2025-07-01", end="2025-07-01")
        return 0
    except BaseException:  # noqa: BLE001 - a background helper: the foreground compiles if this failed
        return 1
    finally:
        if marker:
            try:
                os.unlink(marker)
            except OSError:
                pass


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
