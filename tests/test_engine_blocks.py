"""When fixed block occupations reach the wanted excited configuration (qc/excited.py).

Fixing the electron count per symmetry block keeps aufbau order inside each block
(PySCF ``irrep_nelec``; common practice), so a wanted particle above an empty orbital
of the same block cannot be reached that way.
"""

import numpy as np

from dsplit.qc.excited import block_aufbau_reaches


def test_lowest_orbital_of_block_reached():
    syms = [["a1g", "b1g", "a1g", "b1g"]]
    occ = [np.array([1.0, 0.0, 1.0, 0.0])]  # both a1g filled
    e = [np.array([-1.0, -0.5, 0.2, 0.4])]
    assert block_aufbau_reaches(syms, occ, e)


def test_particle_above_empty_orbital_of_its_block_not_reached():
    # electron moved b1g → the upper a1g, while a lower a1g (think metal 4s) stays empty
    syms = [["b1g", "a1g", "a1g"]]
    occ = [np.array([0.0, 0.0, 1.0])]
    e = [np.array([-0.5, 0.1, 0.3])]
    assert not block_aufbau_reaches(syms, occ, e)


def test_each_spin_channel_checked():
    syms = [["ag", "ag"], ["ag", "ag"]]
    occ = [np.array([1.0, 0.0]), np.array([0.0, 1.0])]
    e = [np.array([-1.0, 0.0]), np.array([-1.0, 0.0])]
    assert not block_aufbau_reaches(syms, occ, e)


def test_closed_shell_maximum_overlap_keeps_two_electrons_per_orbital():
    # The maximum-overlap method (Gilbert, Besley & Gill, J. Phys. Chem. A 112, 13164 (2008)) started
    # from a converged closed shell must stay there: water RHF/STO-3G, E = −74.963 Eh (the SCF itself;
    # PySCF 2.14's own mom_occ fills every orbital with one electron here, −46.42 Eh, measured)
    from pyscf import gto, scf

    from dsplit.qc.targeting import maximum_overlap

    mol = gto.M(atom="O 0 0 0; H 0 0.757 0.587; H 0 -0.757 0.587", basis="sto-3g", verbose=0)
    ref = scf.RHF(mol).run()
    mom = maximum_overlap(scf.RHF(mol), ref.mo_coeff, ref.mo_occ)
    mom.kernel(dm0=ref.make_rdm1())
    assert mom.converged and abs(mom.e_tot - ref.e_tot) < 1e-8
    assert sorted(mom.mo_occ.tolist(), reverse=True) == ref.mo_occ.tolist()
