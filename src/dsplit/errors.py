"""Errors the command line turns into one line and an exit code.

``InputError`` (exit 2) always names the offending field and what is allowed;
``CalculationError`` (exit 3) marks an unconverged or unverified calculation.
"""

from __future__ import annotations


class InputError(ValueError):
    """Bad input: names the field and the fix.  The CLI prints one line, exits 2."""

    exit_code = 2

    def __init__(self, field: str, message: str) -> None:
        self.field = field
        self.message = message
        super().__init__(f"{field}: {message}")


class CalculationError(RuntimeError):
    """A calculation that did not converge or could not be verified (exit 3)."""

    exit_code = 3
