"""Shared helpers for the benchmark scripts (not part of the package)."""

from __future__ import annotations

import time
from contextlib import contextmanager


@contextmanager
def timed(store: dict, key: str):
    t0 = time.perf_counter()
    yield
    store[key] = time.perf_counter() - t0


def build(metal: str, ox: int, geometry: str, ligands: dict, **kw):
    from dsplit.geometry.build import ComplexRequest, build_complex

    return build_complex(ComplexRequest(name="bench", metal=metal, geometry=geometry, ligands=ligands,
                                        oxidation_state=ox, **kw))
