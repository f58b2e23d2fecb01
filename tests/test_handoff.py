"""Hand-off files read back by outside tools: PySCF's Molden, cube and FCIDUMP readers, PySCF
itself running reproduce.py in a fresh process, and qcelemental's QCSchema models.

Two runs, one per fixture: an open shell through the whole pipeline (``compute`` of
[CrF6]3−, B3LYP/STO-3G, PCM water, cubes on) and a closed shell with an ECP
([PdCl4]2−, HF/LANL2DZ, PCM water) as a bare Calculation.
"""

from __future__ import annotations

import base64
import json
import os
import re
import subprocess
import sys
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from dsplit.spec import spec_from_dict

PNG_MAGIC = b"\x89PNG\r\n\x1a\n"  # PNG signature, ISO/IEC 15948 (RFC 2083) section 3.1


@pytest.fixture(scope="module")
def one_thread():
    from pyscf import lib

    old = lib.num_threads()
    lib.num_threads(1)
    yield
    lib.num_threads(old)


@pytest.fixture(scope="module")
def open_run(tmp_path_factory, one_thread):
    from dsplit.api.compute import compute

    spec = spec_from_dict({"name": "crf6-handoff",
                           "complex": {"metal": "Cr", "oxidation_state": 3, "geometry": "octahedral",
                                       "ligands": {"fluorido": 6}},
                           "method": {"theory": "B3LYP", "basis": "sto-3g", "grid_level": 1, "cubes": True}})
    out = tmp_path_factory.mktemp("open") / "run"
    run = compute(spec, out, threads=1)
    assert run.exit_code == 0
    return run.out_dir, run.result


@pytest.fixture(scope="module")
def closed_calc(tmp_path_factory, one_thread):
    from dsplit.analysis.orbitals import build_orbital_table
    from dsplit.geometry.build import build_complex
    from dsplit.qc.engine import run_calculation
    from dsplit.qc.setup import resolve_method
    from dsplit.api.handoff import write_handoff_files
    from dsplit.report.result import build_result

    spec = spec_from_dict({"name": "pdcl4-handoff",
                           "complex": {"metal": "Pd", "oxidation_state": 2, "geometry": "square-planar",
                                       "ligands": {"chlorido": 4}, "multiplicity": 1},
                           "method": {"theory": "HF", "basis": "lanl2dz"}})
    cx = build_complex(spec.complex)
    folder = tmp_path_factory.mktemp("closed")
    calc = run_calculation(cx, resolve_method(cx, spec.method, threads=1), folder, stability=False)
    assert calc.ok
    table = build_orbital_table(calc)
    doc = build_result(spec, cx, calc, table, {})
    rec = write_handoff_files(calc, table, folder, doc=doc, pictures=False)
    assert not rec.notes
    return calc, table, doc, folder


def _reproduce(folder: Path, script: str = "reproduce.py") -> tuple[int, float]:
    env = dict(os.environ, OMP_NUM_THREADS="1")
    done = subprocess.run([sys.executable, script], cwd=folder, env=env, capture_output=True, text=True,
                          timeout=300)
    found = re.search(r"^E = (\S+) Eh", done.stdout, re.M)
    assert found, done.stdout + done.stderr
    return done.returncode, float(found.group(1))


def _geometry_bohr(folder: Path) -> tuple[list[str], np.ndarray]:
    import ase.io
    from ase.units import Bohr

    atoms = ase.io.read(folder / "geometry.xyz")
    keep = [i for i, s in enumerate(atoms.get_chemical_symbols()) if s != "X"]
    return [atoms.get_chemical_symbols()[i] for i in keep], atoms.positions[keep] / Bohr


# ---------------------------------------------------------------- Molden

def test_molden_round_trip_closed_shell(closed_calc):
    # pyscf.tools.molden.load reads the file back: same MO energies (to the 10 significant digits
    # PySCF writes) and, up to sign, the same coefficients in the same basis
    from pyscf.tools import molden

    calc, table, _, folder = closed_calc
    mol, energies, coeff, occ, labels, _ = molden.load(str(folder / "orbitals.molden"))
    assert np.allclose(energies, calc.mf.mo_energy, rtol=1e-9, atol=1e-12)
    assert np.abs(np.abs(coeff) - np.abs(calc.mf.mo_coeff)).max() < 1e-10
    assert np.abs(mol.intor("int1e_ovlp") - calc.mol.intor("int1e_ovlp")).max() < 1e-10
    assert np.array_equal(occ, calc.mf.mo_occ)
    assert [s.lower() for s in labels] == [s.lower() for s in table.channels[0].irreps]


def test_molden_round_trip_open_shell_has_both_spins(open_run):
    # unrestricted: an α and a β set; energies as in result.json, each degenerate set spanning the
    # same space as the checkpoint's orbitals (the frame alignment rotates inside sets only)
    from pyscf.scf import chkfile
    from pyscf.tools import molden

    from dsplit.units import ev_to_hartree

    folder, doc = open_run
    mol, energies, coeff, occ, labels, spins = molden.load(str(folder / "orbitals.molden"))
    assert len(energies) == 2 and {str(s).lower() for s in spins[0]} == {"alpha"} and {str(s).lower() for s in spins[1]} == {"beta"}
    ref = chkfile.load(str(folder / "scf.chk"), "scf")
    s = mol.intor("int1e_ovlp")
    for k, spin in enumerate(("alpha", "beta")):
        rows = sorted((o for o in doc["orbitals"] if o["spin"] == spin), key=lambda o: o["index"])
        assert np.allclose(energies[k], [ev_to_hartree(o["energy_eV"]) for o in rows], rtol=1e-9, atol=1e-12)
        assert [x.lower() for x in labels[k]] == [o["irrep"].lower() for o in rows]
        e_ref, c_ref = ref["mo_energy"][k], ref["mo_coeff"][k]
        start = 0
        while start < len(e_ref):
            stop = start + 1
            while stop < len(e_ref) and abs(e_ref[stop] - e_ref[start]) < 1e-6:
                stop += 1
            a, b = coeff[k][:, start:stop], c_ref[:, start:stop]
            assert np.abs(a @ a.T @ s @ b - b).max() < 1e-8  # span(a) contains b
            start = stop


# ---------------------------------------------------------------- cubes

def _cube(path: Path) -> tuple[list[int], np.ndarray, np.ndarray, np.ndarray]:
    """(nuclear charges, atom positions (Bohr), step vectors, values) from a cube file.

    Layout of the Gaussian cube format (Gaussian 'cubegen' documentation; PySCF tools.cubegen)."""
    lines = path.read_text().splitlines()
    natm = int(lines[2].split()[0])
    n = [int(lines[3 + k].split()[0]) for k in range(3)]
    steps = np.array([[float(x) for x in lines[3 + k].split()[1:]] for k in range(3)])
    atoms = [lines[6 + i].split() for i in range(natm)]
    values = np.array(" ".join(lines[6 + natm:]).split(), dtype=float).reshape(n)
    return [int(a[0]) for a in atoms], np.array([[float(x) for x in a[2:]] for a in atoms]), steps, values


def test_cube_orbitals_are_normalised_and_atoms_match_the_geometry(open_run):
    # Σ|ψ|²ΔV over the box ≈ ⟨ψ|ψ⟩ = 1; tolerance 2 %: measured 0.6 % at the default 0.15 Å on
    # [CrF6]3− (3-21G), the tight metal d functions being sampled by a Riemann sum
    from ase.data import atomic_numbers
    from pyscf import gto
    from pyscf.tools import cubegen

    folder, doc = open_run
    symbols, xyz = _geometry_bohr(folder)
    orbitals = [c for c in doc["handoff"]["cubes"] if c["kind"] == "orbital"]
    assert len(orbitals) == 10  # five d-manifold MOs per spin (unrestricted)
    for c in orbitals:
        z, pos, steps, values = _cube(folder / c["file"])
        assert z == [atomic_numbers[s] for s in symbols]
        assert np.abs(pos - xyz).max() < 2e-6  # the header holds 6 decimals
        dv = abs(np.linalg.det(steps))
        assert abs((values ** 2).sum() * dv - 1.0) < 0.02, c["file"]
    # PySCF's own reader takes the file
    mol = gto.M(atom=list(zip(symbols, xyz)), unit="Bohr", basis="sto-3g", charge=-3, spin=3, verbose=0)
    field = cubegen.Cube(mol).read(str(folder / orbitals[0]["file"]))
    assert field.shape == tuple(orbitals[0]["grid"])


def test_cube_densities_count_electrons(open_run):
    # ∫(ρα − ρβ) = Nα − Nβ = 2S = 3 for a quartet; ∫(ρ* − ρ0) = 0 (same electron count);
    # both on the cube grid, within the 2 % grid error of the orbital test (definitions, any textbook)
    folder, doc = open_run
    by_kind = {c["kind"]: c for c in doc["handoff"]["cubes"]}
    for kind, expected in (("spin density", 3.0), ("density difference", 0.0)):
        _, _, steps, values = _cube(folder / by_kind[kind]["file"])
        assert abs(values.sum() * abs(np.linalg.det(steps)) - expected) < 0.06, kind


# ---------------------------------------------------------------- FCIDUMP

def test_fcidump_gives_the_casci_energy(open_run):
    # pyscf.tools.fcidump.read + pyscf.fci: the lowest root with (Nα, Nβ) electrons equals the
    # project's CASCI energy to 1e-8 Eh; FCIDUMP layout: Knowles & Handy, Comput. Phys. Commun. 54,
    # 75 (1989) (from memory)
    from pyscf import fci
    from pyscf.tools import fcidump

    folder, doc = open_run
    space = doc["handoff"]["active_space"]
    d = fcidump.read(str(folder / "active_space.fcidump"), verbose=False)
    nel = (d["NELEC"] + d["MS2"]) // 2, (d["NELEC"] - d["MS2"]) // 2
    assert d["NORB"] == 5 and list(nel) == space["electrons_alpha_beta"] == [3, 0]
    solver = fci.direct_spin1.FCI()
    solver.conv_tol = 1e-12
    e, _ = solver.kernel(d["H1"], d["H2"], d["NORB"], nel, ecore=d["ECORE"])
    assert abs(e - space["casci_energy_hartree"]) < 1e-8
    # variational principle: the lowest root lies at or below the energy of any determinant, here
    # t2g³ (α in the three lowest active orbitals): E = E_core + Σ h_ii + ½ Σ_ij [(ii|jj) − (ij|ji)]
    from pyscf import ao2mo

    g = ao2mo.restore(1, d["H2"], 5)
    occ = range(3)
    e_det = d["ECORE"] + sum(d["H1"][i, i] for i in occ) + 0.5 * sum(g[i, i, j, j] - g[i, j, j, i]
                                                                    for i in occ for j in occ)
    assert e <= e_det + 1e-10


def test_fcidump_symmetry_labels_hold_the_lowest_root(open_run):
    # ORBSYM/ISYM in the usual D2h numbering (PySCF tools.fcidump.ORBSYM_MAP): an FCI restricted to
    # the stated state symmetry finds the same lowest energy as the unrestricted one
    from pyscf import fci
    from pyscf.tools import fcidump

    folder, doc = open_run
    space = doc["handoff"]["active_space"]
    assert space["group"] == "D2h"
    d = fcidump.read(str(folder / "active_space.fcidump"), molpro_orbsym=True, verbose=False)
    solver = fci.direct_spin1_symm.FCI()
    solver.conv_tol = 1e-12
    wfnsym = fcidump.ORBSYM_MAP["D2h"].index(d["ISYM"])
    e, _ = solver.kernel(d["H1"], d["H2"], 5, (3, 0), ecore=d["ECORE"], orbsym=np.array(d["ORBSYM"]), wfnsym=wfnsym)
    assert abs(e - space["casci_energy_hartree"]) < 1e-8


def test_d0_frozen_core_energy_is_the_exact_hf_energy(tmp_path, one_thread):
    # [TiF6]2− is d0: with the five empty d MOs active, the FCIDUMP core holds every electron and
    # E_core = ⟨Φ_HF|H|Φ_HF⟩; at HF that is the RHF energy with exact integrals, which a plain PySCF
    # RHF gives independently (the run's orbitals come from a density-fitted SCF, so they sit a
    # second-order amount, measured 4e-9 Eh, above the exact minimum)
    from pyscf import gto, scf
    from pyscf.tools import fcidump

    from dsplit.analysis.orbitals import build_orbital_table
    from dsplit.geometry.build import build_complex
    from dsplit.qc.active_space import ground_d_active_space
    from dsplit.qc.engine import run_calculation
    from dsplit.qc.setup import resolve_method
    from dsplit.report.handoff import fcidump_text

    spec = spec_from_dict({"name": "tif6", "complex": {"metal": "Ti", "oxidation_state": 4, "geometry": "octahedral",
                                                       "ligands": {"fluorido": 6}},
                           "method": {"theory": "HF", "basis": "sto-3g", "solvent": "none"}})
    cx = build_complex(spec.complex)
    calc = run_calculation(cx, resolve_method(cx, spec.method, threads=1), tmp_path, stability=False)
    space = ground_d_active_space(calc, build_orbital_table(calc))
    (tmp_path / "d0.fcidump").write_text(fcidump_text(space))
    d = fcidump.read(str(tmp_path / "d0.fcidump"), verbose=False)
    assert d["NELEC"] == 0 and d["NORB"] == 5
    plain = scf.RHF(gto.M(atom=calc.mol.atom, unit=calc.mol.unit, basis="sto-3g", charge=-2, verbose=0))
    e_exact = plain.kernel()
    assert plain.converged and e_exact - 1e-9 <= d["ECORE"] < e_exact + 1e-7
    assert abs(space.casci_energy - d["ECORE"]) < 1e-10


# ---------------------------------------------------------------- reproduce.py

def test_reproduce_script_gives_the_open_shell_energy(open_run):
    # a fresh PySCF process with PySCF's plain PCM (not the project's factorised one), UKS, grid level 1
    folder, doc = open_run
    code, energy = _reproduce(folder)
    assert code == 0 and abs(energy - doc["energy_hartree"]) < 1e-6
    text = (folder / "reproduce.py").read_text()
    assert "dsplit" not in "".join(line for line in text.splitlines() if line.startswith(("import", "from")))


def test_reproduce_script_gives_the_closed_shell_energy_both_ways(closed_calc):
    # electrons per symmetry block, and the embedded-orbital maximum-overlap route; ECP, RHF, PCM
    from dsplit.qc.recipe import scf_recipe
    from dsplit.report.reproduce_script import reproduce_script

    calc, _, doc, folder = closed_calc
    assert "mf.irrep_nelec = " in (folder / "reproduce.py").read_text()
    code, energy = _reproduce(folder)
    assert code == 0 and abs(energy - calc.energy_hartree) < 1e-6
    text = reproduce_script(scf_recipe(calc, hold="maximum-overlap"), "overlap route", {})
    (folder / "reproduce_overlap.py").write_text(text)
    code, energy = _reproduce(folder, "reproduce_overlap.py")
    assert code == 0 and abs(energy - calc.energy_hartree) < 1e-6


# ---------------------------------------------------------------- QCSchema

def test_qcschema_documents_validate(open_run):
    # MolSSI QCSchema v1 through qcelemental's models (the reference implementation on PyPI)
    from qcelemental.models import AtomicInput, AtomicResult

    folder, doc = open_run
    job = AtomicInput(**json.loads((folder / "qcschema_input.json").read_text()))
    res = AtomicResult(**json.loads((folder / "qcschema_output.json").read_text()))
    assert job.driver == "energy" and job.model.method == "b3lyp" and job.model.basis == "sto-3g"
    assert res.success and abs(res.return_result - doc["energy_hartree"]) < 1e-12
    assert res.molecule.molecular_multiplicity == 4 and res.molecule.molecular_charge == -3
    symbols, xyz = _geometry_bohr(folder)
    assert list(res.molecule.symbols) == symbols
    assert np.abs(np.asarray(res.molecule.geometry).reshape(-1, 3) - xyz).max() < 1e-6


def test_unverified_run_hands_on_a_failed_operation_only(closed_calc, tmp_path):
    # a run that is not a result: QCSchema FailedOperation, no orbitals or energies handed on
    from qcelemental.models import FailedOperation

    from dsplit.api.handoff import write_handoff_files

    calc, table, doc, _ = closed_calc
    bad = replace(calc, configuration_verified=False)
    rec = write_handoff_files(bad, table, tmp_path, doc=dict(doc, configuration_verified=False))
    assert sorted(p.name for p in tmp_path.iterdir()) == ["qcschema_input.json", "qcschema_output.json"]
    failed = FailedOperation(**json.loads((tmp_path / "qcschema_output.json").read_text()))
    assert not failed.success and failed.error.error_type == "unverified_configuration"
    assert rec.notes


# ---------------------------------------------------------------- pictures and report

def test_report_embeds_the_d_orbital_pictures(open_run):
    folder, doc = open_run
    pics = doc["handoff"]["pictures"]
    assert len(pics) == 5
    html = (folder / "report.html").read_text()
    rows = {(o["spin"], o["index"]): o for o in doc["orbitals"]}
    for p in pics:
        png = (folder / p["file"]).read_bytes()
        assert png.startswith(PNG_MAGIC)
        assert base64.b64encode(png).decode("ascii") in html  # static and embedded
        o = rows[(p["spin"], p["mo_index"])]
        assert o["in_manifold"] and p["label"] == (o.get("donor_irrep") or o["irrep"])
        assert f"{p['energy_eV']:.2f}\u00a0eV" in html
    assert not re.search(r"(src|href)=\"(https?:)?//", html) and "<script" not in html
    # Oh d orbitals: the t2g set is dxy, dyz, dxz and the eg set dz², dx²−y² (any ligand-field textbook)
    frames = {p["label"]: set() for p in pics}
    for p in pics:
        frames[p["label"]].add(p["frame_orbital"])
    assert frames == {"t2g": {"xy", "yz", "xz"}, "eg": {"z2", "x2-y2"}}


def test_level_diagram_shows_one_thumbnail_per_pictured_manifold_orbital(open_run):
    from matplotlib.offsetbox import AnnotationBbox

    from dsplit.report.figures import level_diagram, style

    folder, doc = open_run
    thumbs = {(p["spin"], p["mo_index"]): (folder / p["file"]).read_bytes() for p in doc["handoff"]["pictures"]}
    with style():
        plain, with_thumbs = level_diagram(doc), level_diagram(doc, thumbnails=thumbs)
    boxes = [a for a in with_thumbs.axes[0].artists if isinstance(a, AnnotationBbox)]
    assert len(boxes) == 5 and not [a for a in plain.axes[0].artists if isinstance(a, AnnotationBbox)]
    assert with_thumbs.get_figwidth() > plain.get_figwidth()


def test_without_scikit_image_the_run_still_writes_its_files(closed_calc, tmp_path, monkeypatch):
    from dsplit.report import orbital_pictures
    from dsplit.api.handoff import write_handoff_files

    calc, table, doc, _ = closed_calc
    monkeypatch.setattr(orbital_pictures, "skimage_available", lambda: False)
    rec = write_handoff_files(calc, table, tmp_path, doc=doc, pictures=True)
    assert not rec.pictures and any("scikit-image" in n for n in rec.notes)
    assert {"orbitals.molden", "reproduce.py", "active_space.fcidump"} <= set(rec.files)


# ---------------------------------------------------------------- inputs

def test_cubes_key_is_validated_and_false_keeps_the_hash():
    from dsplit.errors import InputError

    base = {"name": "x", "complex": {"metal": "Cr", "oxidation_state": 3, "geometry": "octahedral",
                                     "ligands": {"fluorido": 6}}}
    with pytest.raises(InputError, match="method.cubes"):
        spec_from_dict(dict(base, method={"cubes": "yes"}))
    plain = spec_from_dict(base)
    assert spec_from_dict(dict(base, method={"cubes": False})).content_hash() == plain.content_hash()
    assert spec_from_dict(dict(base, method={"cubes": True})).content_hash() != plain.content_hash()


def test_cube_spacing_out_of_range_is_exit_2_before_anything_is_written(tmp_path):
    from click.testing import CliRunner

    from dsplit.cli import main

    out = tmp_path / "run"
    res = CliRunner().invoke(main, ["compute", "--metal", "Cr", "--oxidation-state", "3", "--geometry", "octahedral",
                                    "--ligands", "fluorido=6", "--cubes", "--cube-spacing", "5", "--out", str(out)])
    assert res.exit_code == 2 and "--cube-spacing" in res.output
    assert not out.exists() and list(tmp_path.iterdir()) == []
