"""Fragment levels for the MO diagram: diagonal Fock elements in orthogonal AOs.

ε(μ) = (UᵀFU)_μμ for meta-Löwdin orthogonalised AOs U (Sun et al., J. Chem.
Theory Comput. 10, 3784 (2014)): the energy of a metal valence d/s/p function
or a ligand donor valence function inside the complex's own Fock operator, the
left and right columns of a level diagram.  Ligand functions are split into σ
(along the M–L axis) and π (perpendicular) by projecting the donor p functions.
"""

from __future__ import annotations

import numpy as np

from dsplit.models.units import hartree_to_ev


def _valence_shell(labels, atom: int, l_char: str) -> str | None:
    shells = sorted({sh for a, _s, sh, _c in labels if a == atom and sh.endswith(l_char)},
                    key=lambda sh: int(sh[:-1]))
    return shells[-1] if l_char == "s" and shells else (shells[0] if shells else None)


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
    for l_char, name in (("d", "d"), ("s", "s"), ("p", "p")):
        shell = _valence_shell(labels, 0, l_char) if l_char != "p" else None
        if l_char == "p":  # the valence p shell follows the valence s shell (e.g. 4p after 4s)
            s_shell = _valence_shell(labels, 0, "s")
            cand = f"{s_shell[:-1]}p" if s_shell else None
            shell = cand if any(sh == cand for a, _s, sh, _c in labels if a == 0) else None
        if shell is None:
            continue
        idx = [i for i, (a, _s, sh, _c) in enumerate(labels) if a == 0 and sh == shell]
        out_metal.append({"label": f"{metal_sym} {shell}", "energy_eV": hartree_to_ev(float(np.mean(np.diag(f)[idx])))})
    sigma, pi = [], []
    for atom, u_dir in zip(donor_atoms, directions):
        shell = _valence_shell(labels, atom, "p")
        if shell is None:
            continue
        idx = [i for i, (a, _s, sh, _c) in enumerate(labels) if a == atom and sh == shell]
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
