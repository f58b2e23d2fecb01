"""Archive mechanics without SCF: commit, manifest, ase.db index, concurrency, verify, rebuild.

Runs are fabricated: a real spec and a real built complex (no SCF), with made-up
Δ values, written through the same ``run_archived`` path as real runs.
"""

from __future__ import annotations

import hashlib
import json
import subprocess
import sys
import textwrap
from pathlib import Path
from types import SimpleNamespace

import pytest

from dsplit.archive import index
from dsplit.archive.manifest import check_folder, sha256_file
from dsplit.archive.paths import RUN_ID_RE, run_folders
from dsplit.archive.store import run_archived
from dsplit.archive.verify import verify_archive
from dsplit.spec import spec_from_dict

LIGANDS = ("aqua", "ammine", "cyanido", "chlorido", "fluorido")


def fake_spec(i: int, name: str | None = None, metal: str = "Fe", ox: int = 2):
    lig = LIGANDS[i % len(LIGANDS)]
    return spec_from_dict({"name": name or f"fake-{lig}", "complex": {
        "metal": metal, "oxidation_state": ox, "geometry": "octahedral", "ligands": {lig: 6},
        "bond_length": 1.9 + 0.001 * i}, "method": {"theory": "HF", "basis": "sto-3g", "solvent": "none"}})


def fake_result(spec, delta_ev: float, checks=("agrees", "differs", "not applicable")) -> dict:
    """A result.json-shaped document from a real built complex and a made-up Δ."""
    from dsplit.geometry.build import build_complex
    from dsplit.units import ev_to_cm1
    from dsplit.report.result import complex_section

    cx = build_complex(spec.complex)
    return {"schema": "dsplit.result", "schema_version": 1, "name": spec.name, "spec": spec.normalised(),
            "spec_hash": spec.content_hash(), "complex": complex_section(cx),
            "method": {"theory": "HF", "basis": "sto-3g", "solvent": {"name": "none"}},
            "converged": True, "configuration_verified": True, "configuration": cx.configuration,
            "multiplicity": cx.multiplicity, "energy_hartree": -1000.0 - delta_ev,
            "splitting": {"orbital": {"delta_eV": delta_ev, "delta_cm1": ev_to_cm1(delta_ev)}},
            "checks": [{"name": f"c{k}", "verdict": v, "numbers": {}, "detail": ""} for k, v in enumerate(checks)]}


def fake_run(root: Path, i: int, **kw):
    spec = fake_spec(i, **kw)
    doc = fake_result(spec, 1.0 + 0.01 * i)

    def produce(out: Path):
        out.mkdir(parents=True)
        (out / "result.json").write_text(json.dumps(doc))
        (out / "scf.log").write_text("fabricated run, no SCF\n")
        return SimpleNamespace(result=doc, exit_code=0)

    return run_archived(spec, root, produce)


def test_sha256_known_vector(tmp_path):
    # FIPS 180-2, Appendix B.1: SHA-256("abc")
    p = tmp_path / "abc"
    p.write_bytes(b"abc")
    assert sha256_file(p) == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"


def test_commit_layout_manifest_and_row(tmp_path):
    run = fake_run(tmp_path, 0)
    folder = run.out_dir
    assert folder.parent.parent == tmp_path and RUN_ID_RE.match(folder.name)
    man = json.loads((folder / "manifest.json").read_text())
    assert set(man["files"]) == {"result.json", "scf.log"}
    for rel, entry in man["files"].items():  # independent hash of each file
        assert entry["sha256"] == hashlib.sha256((folder / rel).read_bytes()).hexdigest()
    assert man["key_versions"]["dsplit"] and man["key_versions"]["pyscf"]
    assert run.result["archive"]["run_id"] == folder.name
    assert check_folder(folder) == []
    rows = index.iter_rows_kv(index.select(tmp_path))
    assert len(rows) == 1
    r = rows[0]
    assert (r["metal"], r["oxidation_state"], r["geometry"], r["ligands"]) == ("Fe", 2, "octahedral", "aqua:6")
    assert (r["n_agrees"], r["n_differs"], r["n_not_applicable"]) == (1, 1, 1)
    assert r["delta_orbital_eV"] == pytest.approx(1.0)
    from ase.formula import Formula

    # [Fe(H2O)6]: 1 Fe + 6 O + 12 H (formula of the ion, common chemistry)
    assert Formula(r["formula"]).count() == {"Fe": 1, "O": 6, "H": 12}


def test_same_request_is_one_row(tmp_path):
    a = fake_run(tmp_path, 3)
    b = fake_run(tmp_path, 3)
    assert a.out_dir == b.out_dir and a.result == b.result
    assert len(index.select(tmp_path)) == 1


def test_filters_and_sort(tmp_path):
    for i in range(5):
        fake_run(tmp_path, i)
    fake_run(tmp_path, 5, name="fake-co", metal="Co", ox=3)
    assert [r["metal"] for r in index.iter_rows_kv(index.select(tmp_path, "metal=Co"))] == ["Co"]
    rows = index.iter_rows_kv(index.select(tmp_path, "delta_orbital_eV>1.025", sort="-delta_orbital_eV"))
    assert [r["delta_orbital_eV"] for r in rows] == pytest.approx([1.05, 1.04, 1.03])
    assert len(index.select(tmp_path, "ligands=cyanido:6")) == 1
    assert len(index.select(tmp_path, "n_chlorido=6")) == 1


@pytest.mark.parametrize("selection, sort", [
    (None, None), ("metal=Fe", "-delta_orbital_eV"), ("delta_orbital_eV>1.015", "name"), ("n_aqua", None),
    ("ligands!=aqua:6", "delta_orbital_eV"), ("verified=True,oxidation_state<=2", "-ligands"),
])
def test_fast_path_matches_ase_db(tmp_path, selection, sort):
    for i in range(5):
        fake_run(tmp_path, i)
    fake_run(tmp_path, 5, name="fake-co", metal="Co", ox=3)
    fast = index.fast_rows(tmp_path, selection, sort=sort)
    via_ase = index.iter_rows_kv(index.select(tmp_path, selection, sort=sort))  # ase.db as the reference
    assert fast is not None and [r["run_id"] for r in fast] == [r["run_id"] for r in via_ase]
    assert index.fast_rows(tmp_path, "Fe") is None  # element symbols are left to ase.db


_WRITER = textwrap.dedent("""
    import sys, time
    from pathlib import Path
    sys.path.insert(0, {tests!r})
    from test_archive_index import fake_run
    root, k, n, go = Path(sys.argv[1]), int(sys.argv[2]), int(sys.argv[3]), Path(sys.argv[4])
    while not go.exists():
        time.sleep(0.01)
    for j in range(n):
        fake_run(root, 100 * k + j, name=f"proc{{k}}-run{{j}}")
""")


def test_four_processes_write_at_once(tmp_path):
    script = tmp_path / "writer.py"
    script.write_text(_WRITER.format(tests=str(Path(__file__).parent)))
    root, go = tmp_path / "arch", tmp_path / "go"
    n = 6
    procs = [subprocess.Popen([sys.executable, str(script), str(root), str(k), str(n), str(go)])
             for k in range(4)]
    import time

    time.sleep(1.5)  # let all four import, then release them together
    go.touch()
    assert [p.wait(timeout=120) for p in procs] == [0, 0, 0, 0]
    rows = index.iter_rows_kv(index.select(root))
    assert len(rows) == 4 * n == len({r["run_id"] for r in rows})
    assert len(list(run_folders(root))) == 4 * n
    out = subprocess.run([sys.executable, "-m", "ase", "db", str(root / "index.db"), "-n"],
                         capture_output=True, text=True, check=True)
    assert out.stdout.split()[0] == str(4 * n)
    assert verify_archive(root).ok
    # the page writers queue (dsplit.archive.page): the last page written holds every run
    assert (root / "index.html").read_text(encoding="utf-8").count('data-state="verified"') == 4 * n


_TWIN = textwrap.dedent("""
    import json, sys, time
    from pathlib import Path
    from types import SimpleNamespace
    sys.path.insert(0, {tests!r})
    from test_archive_index import fake_result, fake_spec
    from dsplit.archive.store import run_archived
    root, go, counter = Path(sys.argv[1]), Path(sys.argv[2]), Path(sys.argv[3])
    spec = fake_spec(7, name="shared-run")
    doc = fake_result(spec, 2.0)

    def produce(out):
        with counter.open("a") as fh:
            fh.write("produced\\n")
        time.sleep(1.0)
        out.mkdir(parents=True)
        (out / "result.json").write_text(json.dumps(doc))
        return SimpleNamespace(result=doc, exit_code=0)

    while not go.exists():
        time.sleep(0.01)
    print(run_archived(spec, root, produce).out_dir)
""")


def test_same_run_from_two_processes_is_made_once(tmp_path):
    script = tmp_path / "twin.py"
    script.write_text(_TWIN.format(tests=str(Path(__file__).parent)))
    root, go, counter = tmp_path / "arch", tmp_path / "go", tmp_path / "count"
    procs = [subprocess.Popen([sys.executable, str(script), str(root), str(go), str(counter)],
                              stdout=subprocess.PIPE, text=True) for _ in range(2)]
    import time

    time.sleep(1.5)
    go.touch()
    outs = [p.communicate(timeout=120)[0].strip() for p in procs]
    assert [p.returncode for p in procs] == [0, 0]
    assert outs[0] == outs[1] and Path(outs[0]).is_dir()
    assert counter.read_text().count("produced") == 1  # the second process waited, then hit the cache
    assert len(index.select(root)) == 1


def test_corrupted_run_reported_not_fatal(tmp_path):
    a = fake_run(tmp_path, 0)
    b = fake_run(tmp_path, 1)
    (a.out_dir / "result.json").write_text("{ not json")
    (b.out_dir / "manifest.json").write_text("[]")
    rep = verify_archive(tmp_path)
    assert not rep.ok
    assert any("result.json" in p for p in rep.damaged[f"{a.out_dir.parent.name}/{a.out_dir.name}"])
    assert any("manifest.json" in p for p in rep.damaged[f"{b.out_dir.parent.name}/{b.out_dir.name}"])
    assert len(index.select(tmp_path)) == 2  # listing reads the index only
    n, skipped = index.rebuild(tmp_path)
    assert n == 0 and len(skipped) == 2


def test_rebuild_restores_index(tmp_path):
    for i in range(3):
        fake_run(tmp_path, i)
    before = sorted(r["run_id"] for r in index.iter_rows_kv(index.select(tmp_path)))
    index.index_path(tmp_path).unlink()
    assert "missing" in " ".join(verify_archive(tmp_path).index_problems)
    n, skipped = index.rebuild(tmp_path)
    assert n == 3 and not skipped
    assert sorted(r["run_id"] for r in index.iter_rows_kv(index.select(tmp_path))) == before
    assert verify_archive(tmp_path).ok


def test_tampered_file_detected(tmp_path):
    run = fake_run(tmp_path, 0)
    (run.out_dir / "scf.log").write_text("edited afterwards\n")
    (run.out_dir / "extra.txt").write_text("not in the manifest\n")
    problems = check_folder(run.out_dir)
    assert any("scf.log does not match" in p for p in problems)
    assert any("extra.txt is not listed" in p for p in problems)


def test_unfinished_folder_is_not_a_run(tmp_path):
    fake_run(tmp_path, 0)
    half = tmp_path / "fake-aqua" / f".tmp-a{'0' * 15}-host-999999-abc"
    half.mkdir()
    (half / "result.json").write_text("{}")
    assert len(list(run_folders(tmp_path))) == 1
    rep = verify_archive(tmp_path)
    assert rep.ok and len(rep.unfinished) == 1


def test_interrupted_index_creation_leaves_no_half_schema(tmp_path, monkeypatch):
    import dsplit.archive.index as ix

    def interrupted(src, dst):
        raise KeyboardInterrupt

    monkeypatch.setattr(ix.os, "replace", interrupted)
    with pytest.raises(KeyboardInterrupt):
        fake_run(tmp_path, 0)
    monkeypatch.undo()
    assert not ix.index_path(tmp_path).exists()  # no index.db with half of ase.db's tables
    assert ix.select(tmp_path) == []
    fake_run(tmp_path, 0)  # the cache hit adds the missing row
    assert len(ix.select(tmp_path)) == 1 and verify_archive(tmp_path).ok


def test_interrupted_producer_leaves_nothing(tmp_path):
    spec = fake_spec(0)

    def produce(out: Path):
        out.mkdir(parents=True)
        (out / "result.json").write_text("{}")
        raise KeyboardInterrupt

    with pytest.raises(KeyboardInterrupt):
        run_archived(spec, tmp_path, produce)
    assert list(run_folders(tmp_path)) == []
    assert [p.name for p in (tmp_path / spec.name).iterdir()] == []
    assert index.select(tmp_path) == []
