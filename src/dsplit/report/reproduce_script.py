"""reproduce.py: a standalone script (PySCF and numpy only) that runs a run's ground SCF again.

The script text is built from a :class:`dsplit.qc.recipe.ScfRecipe`; every number in it
is written with ``repr`` (shortest round-trip form), so the molecule, the point charges
and the embedded start orbitals are bit-for-bit those of the run.  Running it prints
the energy and its difference from the run's ``energy_hartree``; it exits 1 when the SCF
did not converge or the two differ by more than ``TOLERANCE`` (1e-6 Eh).
"""

from __future__ import annotations

import base64
import pprint
import zlib

import numpy as np

from dsplit.qc.recipe import ScfRecipe

TOLERANCE_HARTREE = 1e-6

_CLASSES = {"RHF": ("scf", "RHF"), "ROHF": ("scf", "ROHF"), "UHF": ("scf", "UHF"),
            "RKS": ("dft", "RKS"), "ROKS": ("dft", "ROKS"), "UKS": ("dft", "UKS")}

_HOLD = '''

def packed(text, shape):
    """A float64 array stored as base64 of its zlib-compressed bytes."""
    return np.frombuffer(zlib.decompress(base64.b64decode(text)), dtype="<f8").reshape(shape)


def hold_by_overlap(mf, groups):
    """Occupy, in every SCF cycle, the MOs that overlap most with the run's occupied MOs.

    groups: per spin channel, a list of (reference occupied MOs, occupation).  Each group
    takes as many new MOs as it has columns, by the largest summed squared overlap
    (maximum-overlap rule, Gilbert, Besley & Gill, J. Phys. Chem. A 112, 13164 (2008)).
    """
    s = mf.get_ovlp()

    def occupy(coeff, channel):
        occ = np.zeros(coeff.shape[1])
        free = np.ones(coeff.shape[1], dtype=bool)
        for ref, n in channel:
            p = np.einsum("ij,ij->j", *(2 * [ref.T @ s @ coeff]))
            p[~free] = -1.0
            pick = np.argsort(-p, kind="stable")[:ref.shape[1]]
            occ[pick] = n
            free[pick] = False
        return occ

    def get_occ(mo_energy=None, mo_coeff=None):
        coeff = mf.mo_coeff if mo_coeff is None else mo_coeff
        if len(groups) == 2:
            return np.array([occupy(coeff[k], groups[k]) for k in (0, 1)])
        return occupy(coeff, groups[0])

    mf.get_occ = get_occ
    return mf


def start_density(groups):
    dms = [sum(n * ref @ ref.T for ref, n in channel) for channel in groups]
    return np.array(dms) if len(dms) == 2 else dms[0]
'''


def _packed(a: np.ndarray) -> str:
    data = base64.b64encode(zlib.compress(np.ascontiguousarray(a, dtype="<f8").tobytes(), 9)).decode("ascii")
    lines = [data[i:i + 96] for i in range(0, len(data), 96)] or [""]
    body = "\n".join(f'        "{line}"' for line in lines)
    return f'packed(\n{body},\n        {tuple(a.shape)!r})'


def _groups(groups: list[list[tuple[np.ndarray, float]]]) -> str:
    chans = []
    for channel in groups:
        items = ",\n".join(f"    ({_packed(c)}, {n!r})" for c, n in channel)
        chans.append(f"  [\n{items},\n  ]")
    return "[\n" + ",\n".join(chans) + ",\n]"


def _literal(x, indent: int = 0) -> str:
    text = pprint.pformat(x, width=100, sort_dicts=False)
    return text.replace("\n", "\n" + " " * indent)


def reproduce_script(recipe: ScfRecipe, title: str, versions: dict[str, str]) -> str:
    """The text of reproduce.py for one run (``title``: one line naming the run)."""
    r = recipe
    module, cls = _CLASSES[r.reference]
    held = ("electrons per symmetry block (irrep_nelec) of the verified state" if r.state_by == "irrep_nelec"
            else "maximum overlap with the run's occupied orbitals, embedded below "
                 f"({'; '.join(r.notes)})")
    doc = [f'"""Reproduce the ground SCF of {title} with plain PySCF.',
           "",
           f"Written by dsplit {versions.get('dsplit', '?')} with PySCF {versions.get('pyscf', '?')}; other PySCF "
           "versions may differ in defaults",
           "(DFT grids, basis-set files) by more than the tolerance.",
           f"The state is held by {held}.",
           "Run:  python reproduce.py   (prints the energy; exit 1 if it differs from the run's by more than "
           f"{TOLERANCE_HARTREE:g} Eh)",
           '"""']
    out = doc + ["", "import base64", "import zlib", "", "import numpy as np", f"from pyscf import gto, {module}",
                 "", f"RUN_ENERGY_HARTREE = {r.energy_hartree!r}", f"TOLERANCE_HARTREE = {TOLERANCE_HARTREE!r}"]
    if r.start_groups is not None:
        out += _HOLD.rstrip("\n").split("\n")
    out += ["", "", "# geometry as the run's Mole held it (Bohr); symbols, then x, y, z",
            f"ATOMS = {_literal([(s, tuple(xyz)) for s, xyz in r.atoms], 8)}",
            "mol = gto.M(atom=ATOMS, unit='Bohr', basis=" + repr(r.basis) + (f", ecp={r.ecp!r}" if r.ecp else "")
            + f", charge={r.charge!r}, spin={r.spin!r},",
            f"            symmetry={r.symmetry!r}" + (f", symmetry_subgroup={r.symmetry_subgroup!r}"
                                                       if r.symmetry_subgroup else "") + ", verbose=0)"]
    if r.symmetry:
        out.append(f"assert mol.groupname == {r.group!r}, f'PySCF chose {{mol.groupname}}, the run used {r.group}'")
    out += ["", f"mf = {module}.{cls}(mol)"]
    if r.xc is not None:
        out += [f"mf.xc = {r.xc!r}", f"mf.grids.level = {r.grid_level!r}"]
    out += [f"mf.conv_tol = {r.conv_tol!r}", f"mf.max_cycle = {r.max_cycle!r}", "mf.init_guess = 'atom'"]
    if r.auxbasis is not None:
        out += ["# density fitting with the auxiliary basis PySCF resolved for the run",
                f"mf = mf.density_fit(auxbasis={_literal(r.auxbasis, 26)})"]
    if r.point_charges:
        out += ["# point-charge donors (Bohr, charge in e)", "from pyscf import qmmm",
                f"POINT_CHARGES = {_literal([(tuple(xyz), q) for xyz, q in r.point_charges], 16)}",
                "mf = qmmm.mm_charge(mf, [xyz for xyz, _ in POINT_CHARGES], [q for _, q in POINT_CHARGES], "
                "unit='Bohr')"]
    if r.pcm is not None:
        out += ["# continuum solvent: PySCF's PCM with the run's settings", "mf = mf.PCM()"]
        out += [f"mf.with_solvent.{k} = {v!r}" for k, v in r.pcm.items()]
    if r.state_by == "irrep_nelec":
        out += [f"mf.irrep_nelec = {_literal(r.irrep_nelec, 16)}", "dm0 = mf.get_init_guess(key='atom')"]
    else:
        out += [f"START = {_groups(r.start_groups)}", "mf = hold_by_overlap(mf, START)", "dm0 = start_density(START)"]
    out += ["", "energy = mf.kernel(dm0)",
            "if not mf.converged:  # the run's own SCF had a second-order rung too",
            "    mf = mf.newton()",
            "    energy = mf.kernel(mf.make_rdm1())",
            "difference = energy - RUN_ENERGY_HARTREE",
            "print(f'E = {energy:.10f} Eh (converged: {mf.converged})')",
            "print(f'run energy_hartree = {RUN_ENERGY_HARTREE:.10f} Eh, difference {difference:+.2e} Eh')",
            "raise SystemExit(0 if mf.converged and abs(difference) <= TOLERANCE_HARTREE else 1)", ""]
    if r.start_groups is None:
        out = [line for line in out if line not in ("import base64", "import zlib")]
    return "\n".join(out)
