"""Archived compute with a real (tiny) SCF: cache hit, recompute, run-id, refused names.

[TiF6]2− at HF/STO-3G in the gas phase: Ti(IV) is d0 (group 4 minus 4 —
textbook electron counting, from memory), closed shell, about a second of SCF.
"""

from __future__ import annotations

import dataclasses
import json
import os
import stat
import time

import pytest

from dsplit.archive import index
from dsplit.archive.paths import default_archive_root, run_id_for
from dsplit.api.compute import compute_archived
from dsplit.archive.store import archive_run_id, lookup
from dsplit.errors import InputError
from dsplit.spec import spec_from_dict

TIF6 = {"name": "tif6-test", "complex": {"metal": "Ti", "oxidation_state": 4, "geometry": "octahedral",
                                         "ligands": {"fluorido": 6}},
        "method": {"theory": "HF", "basis": "sto-3g", "solvent": "none"}}


@pytest.fixture(scope="module")
def first_run(tmp_path_factory):
    root = tmp_path_factory.mktemp("arch")
    spec = spec_from_dict(TIF6)
    t0 = time.perf_counter()
    run = compute_archived(spec, root, threads=1)
    return root, spec, run, time.perf_counter() - t0


def _no_scf(*args, **kwargs):
    raise AssertionError("an SCF was started")


def test_first_run_is_archived(first_run):
    root, spec, run, _ = first_run
    assert run.exit_code == 0 and not run.cached
    assert run.out_dir == root / spec.name / archive_run_id(spec) and run.run_id == run.out_dir.name
    man = json.loads((run.out_dir / "manifest.json").read_text())
    assert {"result.json", "spec.json", "geometry.xyz"} <= set(man["files"])
    assert any(f.endswith(".log") for f in man["files"])  # the PySCF log
    assert run.result["configuration"].replace(" ", "") == "t2g^0eg^0"  # d0 (from memory)
    rows = index.iter_rows_kv(index.select(root, f"run_id={run.out_dir.name}"))
    assert len(rows) == 1 and rows[0]["metal"] == "Ti" and rows[0]["d_electrons"] == 0
    from ase.formula import Formula

    assert Formula(rows[0]["formula"]).count() == {"Ti": 1, "F": 6}
    # a finished run folder gets the user's usual folder permissions (the group sharing the archive
    # can read it), not the owner-only mode of a temporary folder (common practice)
    umask = os.umask(0)
    os.umask(umask)
    assert stat.S_IMODE(run.out_dir.stat().st_mode) == 0o777 & ~umask


def test_second_compute_is_a_cache_hit(first_run, monkeypatch):
    root, spec, run, _ = first_run
    monkeypatch.setattr("dsplit.qc.engine.run_calculation", _no_scf)
    again = compute_archived(spec_from_dict(TIF6), root, threads=1)
    assert again.result == run.result
    assert again.out_dir == run.out_dir and again.exit_code == 0 and again.cached
    assert lookup(root, spec) is not None


def test_failed_recompute_keeps_the_old_run(first_run, monkeypatch):
    root, spec, run, _ = first_run
    before = (run.out_dir / "manifest.json").read_bytes()
    monkeypatch.setattr("dsplit.qc.engine.run_calculation", _no_scf)
    with pytest.raises(AssertionError, match="SCF was started"):
        compute_archived(spec, root, recompute=True, threads=1)
    assert (run.out_dir / "manifest.json").read_bytes() == before
    assert [p.name for p in run.out_dir.parent.iterdir()] == [run.out_dir.name]  # no temp folder left


def test_run_id_content_hash():
    spec = spec_from_dict(TIF6)
    norm = spec.normalised()
    v = {"dsplit": "0.1.0", "pyscf": "2.14.0"}
    rid = run_id_for(norm, "compute", {}, v)
    assert rid == run_id_for(json.loads(json.dumps(norm)), "compute", {}, dict(v))
    assert rid != run_id_for(norm, "compute", {}, {**v, "pyscf": "2.15.0"})
    assert rid != run_id_for(norm, "spin-states", {}, v)
    other = spec_from_dict({**TIF6, "method": {**TIF6["method"], "basis": "3-21g"}})
    assert rid != run_id_for(other.normalised(), "compute", {}, v)


@pytest.mark.parametrize("bad", ["../escape", "..", "/etc/passwd", "a/b", "x/../../y"])
def test_names_that_leave_the_archive_are_refused(tmp_path, bad, monkeypatch):
    monkeypatch.setattr("dsplit.qc.engine.run_calculation", _no_scf)
    with pytest.raises(InputError):
        spec_from_dict({**TIF6, "name": bad})
    spec = dataclasses.replace(spec_from_dict(TIF6), name=bad)
    root = tmp_path / "arch"
    with pytest.raises(InputError, match="name"):
        compute_archived(spec, root, threads=1)
    assert list(tmp_path.iterdir()) == []  # nothing written anywhere


def test_archive_path_that_is_a_file(tmp_path):
    f = tmp_path / "plain.txt"
    f.write_text("x")
    with pytest.raises(InputError, match="--archive"):
        compute_archived(spec_from_dict(TIF6), f, threads=1)


def test_default_archive_root(monkeypatch, tmp_path):
    monkeypatch.setenv("DSPLIT_ARCHIVE", str(tmp_path / "env-arch"))
    assert default_archive_root() == tmp_path / "env-arch"
    monkeypatch.delenv("DSPLIT_ARCHIVE")
    monkeypatch.chdir(tmp_path)
    assert default_archive_root() == tmp_path / "dsplit-archive"


def test_commit_refreshes_the_archive_page(first_run):
    """The commit rewrote <archive>/index.html with this run's row: its Δ values as result.json holds them."""
    from dsplit.archive.page import PAGE_NAME
    from dsplit.archive.page_data import VERIFIED, collect

    root, spec, run, _ = first_run
    row = next(r for r in collect(root).runs if r.run_id == run.run_id)
    assert row.state == VERIFIED and row.has_report and row.formula == run.result["complex"]["formula"]
    want = {est: block["delta_cm1"] for est, block in (run.result.get("splitting") or {}).items()
            if isinstance(block, dict) and block.get("delta_cm1") is not None}
    assert row.deltas_cm1 == want
    page = (root / PAGE_NAME).read_text(encoding="utf-8")
    assert f'href="{spec.name}/{run.run_id}/report.html"' in page
    assert all(f"{v:,.0f} cm⁻¹" in page for v in want.values())
