"""Fragment levels for the MO diagram: diagonal Fock elements in orthogonal AOs.

ε(μ) = (UᵀFU)_μμ for meta-Löwdin orthogonalised AOs U (Sun et al., J. Chem.
Theory Comput. 10, 3784 (2014)): the energy of a metal valence d/s/p function
or a ligand donor valence function inside the complex's own Fock operator, the
left and right columns of a level diagram.  Ligand functions are split into σ
(along the M–L axis) and π (perpendicular) by projecting the donor p functions.
"""

from __future__ import annotations

import numpy as np

from dsplit.units import hartree_to_ev


def _period(z: int) -> int:
    """Row of the periodic table for atomic number z."""
    for row, last in enumerate((2, 10, 18, 36, 54, 86, 118), start=1):
        if z <= last:
            return row
    return 7


def _shell(labels, atom: int, name: str) -> list[int]:
    return [i for i, (a, _s, sh, _c) in enumerate(labels) if a == atom and sh == name]


def _core_electrons(mol, atom: int) -> int:
    """Electrons replaced by an ECP on this atom (0 without ECP)."""
    try:
        return int(mol.atom_nelec_core(atom))
    except Exception:
        return 0


def fragment_levels(calc, donor_atoms: list[int], directions: list[np.ndarray]) -> dict:
    """{'metal': [{label, energy_eV}], 'ligand': [...]} from the converged Fock matrix (α for open shells)."""
    from pyscf import lo

    mf = calc.mf
    mol = calc.mol
    u = lo.orth_ao(mol, "meta_lowdin")
    fock = np.asarray(mf.get_fock(dm=mf.make_rdm1()))
    if fock.ndim == 3:
        fock = fock[0]
    f = u.T @ fock @ u
    labels = mol.ao_labels(fmt=False)
    metal_sym = mol.atom_symbol(0)
    out_metal = []
    n = _period(int(mol.atom_charge(0)) + _core_electrons(mol, 0))  # valence shell number: 3d metals → 4s, 4p
    for name in (f"{n - 1}d", f"{n}s", f"{n}p"):
        idx = _shell(labels, 0, name)
        if idx:
            out_metal.append({"label": f"{metal_sym} {name}",
                              "energy_eV": hartree_to_ev(float(np.mean(np.diag(f)[idx])))})
    sigma, pi = [], []
    for atom, u_dir in zip(donor_atoms, directions):
        z = int(mol.atom_charge(atom)) + _core_electrons(mol, atom)
        idx = _shell(labels, atom, f"{_period(z)}p")
        if len(idx) != 3:
            continue
        block = f[np.ix_(idx, idx)]  # p order x, y, z in PySCF's spherical p shells
        e_sigma = float(u_dir @ block @ u_dir)
        sigma.append(e_sigma)
        pi.append((float(np.trace(block)) - e_sigma) / 2.0)
    out_ligand = []
    if sigma:
        out_ligand.append({"label": "donor p (σ)", "energy_eV": hartree_to_ev(float(np.mean(sigma)))})
        out_ligand.append({"label": "donor p (π)", "energy_eV": hartree_to_ev(float(np.mean(pi)))})
    return {"metal": out_metal, "ligand": out_ligand,
            "note": "diagonal Fock elements of meta-Löwdin orthogonal AOs (α for open shells)"}
