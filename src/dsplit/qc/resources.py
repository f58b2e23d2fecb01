"""Per-calculation settings of PySCF that would otherwise leak into the whole process.

- ``pyscf_threads(n)``: PySCF's OpenMP thread count for one calculation, restored after
  (``pyscf.lib.num_threads`` is process-wide).
- ``pyscf_warnings_to_notes()``: Python warnings raised inside PySCF (e.g. the B3LYP
  definition note of libxc) are collected as notes of the calculation instead of being
  printed on the user's terminal.  PySCF's own log goes to each molecule's log stream
  (``verbose``/``stdout`` per object, see qc.setup.build_mole), never to the terminal;
  PySCF also copies every warning of that log to ``sys.stderr`` (``pyscf.lib.logger.warn``,
  ``lib.check_sanity``) — for the duration of a calculation those copies are taken back
  (they are in the log already) and the stream is restored after.
"""

from __future__ import annotations

import contextlib
import io
import warnings
from typing import Iterator


@contextlib.contextmanager
def pyscf_threads(n: int | None) -> Iterator[None]:
    """Run the block with ``n`` OpenMP threads in PySCF (None: leave as is); restore after."""
    from pyscf import lib

    before = lib.num_threads()
    if n:
        lib.num_threads(int(n))
    try:
        yield
    finally:
        lib.num_threads(before)


@contextlib.contextmanager
def pyscf_warnings_to_notes() -> Iterator[list[str]]:
    """Collect Python warnings of the block (one note per distinct message, in the yielded list)
    and take back PySCF's stderr copies of its log warnings."""
    notes: list[str] = []
    with warnings.catch_warnings(record=True) as caught, contextlib.redirect_stderr(io.StringIO()):
        warnings.simplefilter("always")
        try:
            yield notes
        finally:
            seen: set[str] = set()
            for w in caught:
                text = " ".join(str(w.message).split())
                if text not in seen:
                    seen.add(text)
                    notes.append(f"PySCF warning: {text}")
