"""The factorised PCM solver gives PySCF's own PCM results (reference: pyscf.solvent.pcm).

Reference library: PySCF's ``pcm.PCM`` (C-PCM, same surface) — energies, response
products and PCM gradients must agree to rounding; only the linear solve differs.
"""

from __future__ import annotations

import numpy as np
import pytest
from pyscf import gto, scf

from dsplit.qc.pcm_factorised import FactorisedPCM, attach_factorised_pcm

WATER = "O 0 0 0.117; H 0 0.757 -0.467; H 0 -0.757 -0.467"


@pytest.fixture(scope="module")
def pair():
    mol = gto.M(atom=WATER, basis="sto-3g", verbose=0)
    ref = scf.RHF(mol).PCM()
    ref.with_solvent.eps = 78.36
    ref.kernel()
    new = attach_factorised_pcm(scf.RHF(mol), 78.36)
    new.kernel()
    return ref, new


def test_same_energy_and_class(pair):
    ref, new = pair
    assert isinstance(new.with_solvent, FactorisedPCM)
    assert new.e_tot == pytest.approx(ref.e_tot, abs=1e-9)
    assert new.with_solvent.e == pytest.approx(ref.with_solvent.e, abs=1e-9)


def test_same_response_product(pair):
    ref, new = pair
    rng = np.random.default_rng(7)
    x = rng.standard_normal((2, ref.mol.nao, ref.mol.nao))
    x = x + x.transpose(0, 2, 1)
    assert np.allclose(new.with_solvent._B_dot_x(x), ref.with_solvent._B_dot_x(x), atol=1e-10)


def test_same_gradient(pair):
    ref, new = pair
    assert np.allclose(new.nuc_grad_method().kernel(), ref.nuc_grad_method().kernel(), atol=1e-7)


def test_integral_cache_and_its_fallback_agree(pair, monkeypatch):
    from dsplit.qc import pcm_factorised

    ref, new = pair
    dm = ref.make_rdm1()
    assert new.with_solvent._intermediates.get("dsplit_v") is not None  # small case: cached
    cached = new.with_solvent._get_vind(dm)
    monkeypatch.setattr(pcm_factorised, "CACHE_SHARE", 0.0)
    fresh = attach_factorised_pcm(scf.RHF(ref.mol), 78.36).with_solvent
    uncached = fresh._get_vind(dm)
    assert fresh._intermediates.get("dsplit_v") is None
    assert cached[0] == pytest.approx(uncached[0], abs=1e-10)
    assert np.allclose(cached[1], uncached[1], atol=1e-10)
    assert np.allclose(uncached[1], ref.with_solvent._get_vind(dm)[1], atol=1e-10)
