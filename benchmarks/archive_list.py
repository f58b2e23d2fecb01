"""`dsplit archive list` over 1,000 synthetic index rows (target ≤ 1 s).

Rows are written straight into a fresh index.db (one transaction) from fabricated
results (real built complexes, made-up Δ); then the list is timed in process
(select + render) and as a command in a fresh process.
Run: python benchmarks/archive_list.py
"""

from __future__ import annotations

import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
N = 1000
LIST = ("import sys; from dsplit.cli.archive import archive_group; "
        "archive_group.main(['list', '--archive', sys.argv[1]] + sys.argv[2:], prog_name='archive')")


def fill(root: Path, n: int) -> None:
    sys.path.insert(0, str(ROOT / "tests"))
    from test_archive_index import fake_result, fake_spec

    from dsplit.archive import index
    from dsplit.archive.paths import run_id_for

    db = index.connect(index.index_path(root))
    templates = []
    for k in range(5):
        spec = fake_spec(k)
        templates.append((spec, fake_result(spec, 1.0 + k)))
    with db:
        for i in range(n):
            spec, doc = templates[i % 5]
            rid = run_id_for({**spec.normalised(), "i": i})
            doc["splitting"]["orbital"]["delta_eV"] = 1.0 + i * 1e-3
            man = {"run_id": rid, "name": f"synthetic-{i}", "kind": "compute", "status": "verified",
                   "exit_code": 0, "key_versions": {"dsplit": "0", "pyscf": "0"}}
            db.write(index.run_atoms(root, doc), key_value_pairs=index.key_values(doc, man))


def main() -> None:
    from dsplit.archive.query import LIST_COLUMNS, select_rows
    from dsplit.archive.tables import render

    with tempfile.TemporaryDirectory() as tmp:
        root = Path(tmp)
        t0 = time.perf_counter()
        fill(root, N)
        t_fill = time.perf_counter() - t0
        t0 = time.perf_counter()
        text = render(select_rows(root, None, sort="-delta_orbital_eV"), LIST_COLUMNS)
        t_api = time.perf_counter() - t0
        t0 = time.perf_counter()
        filt = select_rows(root, "metal=Fe,delta_orbital_eV>1.5")
        t_filter = time.perf_counter() - t0
        times = []
        for _ in range(3):
            t0 = time.perf_counter()
            subprocess.run([sys.executable, "-c", LIST, str(root), "--sort", "-delta_orbital_eV"], check=True,
                           capture_output=True)
            times.append(time.perf_counter() - t0)
        t0 = time.perf_counter()
        subprocess.run([sys.executable, "-c", "pass"], check=True)
        t_python = time.perf_counter() - t0
        t0 = time.perf_counter()
        by_element = select_rows(root, "Fe,multiplicity=1")  # element symbol: answered by ase.db itself
        t_ase = time.perf_counter() - t0
    assert text.count("\n") == N and len(filt) == 499
    print(f"write {N} synthetic rows                       {t_fill:7.3f} s")
    print(f"list {N} rows, sorted (select + render)       {t_api:7.3f} s   (target ≤ 1 s)")
    print(f"filtered list (metal=Fe,delta_orbital_eV>1.5)  {t_filter:7.3f} s")
    print(f"same through ase.db (selection 'Fe,…')       {t_ase:7.3f} s   ({len(by_element)} rows)")
    print(f"`archive list` command, fresh process (median) {sorted(times)[1]:7.3f} s   "
          f"ratio to `python -c pass` {sorted(times)[1] / t_python:5.2f}")

if __name__ == "__main__":
    main()
