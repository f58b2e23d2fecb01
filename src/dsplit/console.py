"""The rich console every command prints through."""

from __future__ import annotations

import sys

from rich.console import Console

# Columns when stdout is a file or pipe: rich falls back to 80 there and cuts table cells to "…".
PIPE_WIDTH = 160


def output_console() -> Console:
    """Console on stdout; its terminal's width on a terminal, ``PIPE_WIDTH`` columns otherwise."""
    return Console(width=None if sys.stdout.isatty() else PIPE_WIDTH)
