"""Shared test helpers, and one thread for every numeric library.

SCF paths of open-shell metal complexes change with the order of multithreaded sums
(measured: two UHF solutions of one complex, and a level-shift rung that converged with
one thread but not with two), so every test runs single-threaded whatever the caller's
OMP_NUM_THREADS: the variables are set before numpy or PySCF is imported, and dsplit's
default thread count follows OMP_NUM_THREADS (qc.setup.resolve_method).  The suite runs
in parallel processes instead (pytest-xdist, see pyproject.toml).
"""

from __future__ import annotations

import os

for _var in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ[_var] = "1"

import pytest  # noqa: E402

from dsplit.geometry.build import ComplexRequest, build_complex  # noqa: E402


def make(metal: str, geometry: str, ligands: dict, **kw):
    """Build a complex from a few fields (name defaults to 't')."""
    return build_complex(ComplexRequest(name=kw.pop("name", "t"), metal=metal, geometry=geometry,
                                        ligands=ligands, **kw))


@pytest.fixture
def build():
    return make


@pytest.fixture(autouse=True)
def one_pyscf_thread():
    """PySCF's OpenMP pool at one thread for each test (a test that asks for more sets it itself)."""
    from pyscf import lib

    before = lib.num_threads()
    lib.num_threads(1)
    yield
    lib.num_threads(before)
