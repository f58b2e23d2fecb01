"""The rich console every command prints through."""

from __future__ import annotations

import os
import sys

from rich.console import Console

# Columns when stdout is a file or pipe and $COLUMNS is unset: rich falls back to 80 there and cuts
# table cells to "…".
PIPE_WIDTH = 160


def output_console() -> Console:
    """Console on stdout: the terminal's width, else $COLUMNS (rich reads it), else ``PIPE_WIDTH``."""
    chosen = sys.stdout.isatty() or "COLUMNS" in os.environ
    return Console(width=None if chosen else PIPE_WIDTH)
