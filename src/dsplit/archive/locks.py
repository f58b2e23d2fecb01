"""Advisory file locks (``fcntl.flock``) for archive writers.

The kernel drops a flock when its process dies, so a killed writer never leaves a
lock behind (unlike a lock *file* whose existence is the lock).  Where ``fcntl``
is missing (Windows) the locks are no-ops and SQLite's own locking remains.
"""

from __future__ import annotations

import contextlib
import os
import time
from pathlib import Path
from typing import Iterator

try:
    import fcntl
except ImportError:  # pragma: no cover - not POSIX
    fcntl = None  # type: ignore[assignment]

from dsplit.archive.paths import LOCKS_DIR


def lock_path(root: Path, stem: str) -> Path:
    folder = root / LOCKS_DIR
    folder.mkdir(parents=True, exist_ok=True)
    return folder / f"{stem}.lock"


@contextlib.contextmanager
def file_lock(path: Path, timeout: float | None = None, on_wait=None) -> Iterator[None]:
    """Hold an exclusive flock on ``path``; wait up to ``timeout`` s (None: for ever).

    ``on_wait()`` is called once if the lock is busy (e.g. to tell the user).
    Raises TimeoutError when the wait runs out.
    """
    fd = os.open(path, os.O_RDWR | os.O_CREAT, 0o644)
    try:
        if fcntl is not None:
            try:
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            except BlockingIOError:
                if on_wait is not None:
                    on_wait()
                if timeout is None:
                    fcntl.flock(fd, fcntl.LOCK_EX)
                else:
                    deadline = time.monotonic() + timeout
                    while True:
                        try:
                            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
                            break
                        except BlockingIOError:
                            if time.monotonic() > deadline:
                                raise TimeoutError(f"lock {path} busy for {timeout} s") from None
                            time.sleep(0.05)
        yield
    finally:
        os.close(fd)  # closing the descriptor releases the flock
