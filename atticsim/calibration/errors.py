"""The calibration's input errors: one line ``"<file or --option>: <key>: <reason>"``."""

from __future__ import annotations

from atticsim.errors import InputError


class CalibrationError(InputError):
    """Bad measured data or fit options; ``str(err)`` is one line naming the file or option, the column or
    key, and the reason."""

    def __init__(self, where: str, key: str, reason: str):
        self.where, self.key, self.reason = str(where), key, reason
        super().__init__(f"{self.where}: {key}: {reason}" if key else f"{self.where}: {reason}")
