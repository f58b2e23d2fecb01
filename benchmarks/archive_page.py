"""Cost of writing the archive page (index.html) for ~200 runs, against one `archive list`.

One real run ([TiF6]3−, HF/STO-3G, gas phase, one thread) is computed into a fresh
archive; its folder is cloned 199 times with other names, metals, ligands, methods and
scaled Δ values (each clone with its own manifest and index row), and 20 clones carry a
two-functional spin-state ladder — so every view of the page has data.  The page
reads every folder (manifest, result.json's SHA-256, file sizes) and draws three
figures; `archive list` reads index.db only.

Printed: page time in process (wall and CPU) and as a fresh `dsplit archive page`
process, each against one `archive list` (in process: select + render; command:
fresh process); the split of the page time into reading and figures.
Run: python benchmarks/archive_page.py [N]

Measured (2 cores shared with other jobs, load ≈ 1.5, N = 200): page 0.88 s in process
(reading the folders 0.30 s, three figures 0.62 s; CPU 0.87 s) against 0.004 s for the
in-process list (≈ 250×); `dsplit archive page` 1.59 s against `dsplit archive list`
0.069 s as fresh processes (23×); index.html 0.79 MB; the commit hook's refresh 0.87 s.
Under load ≈ 8 the same page took 1.85 s.  The one real run here took 5.6 s, so the
hook adds ~15 % to a tiny STO-3G run and well under 1 % to a def2-SVP one.
"""

from __future__ import annotations

import json
import os
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

N = int(sys.argv[1]) if len(sys.argv) > 1 else 200
METALS = (("Ti", 3), ("V", 3), ("Cr", 3), ("Fe", 2), ("Co", 3))
LIGANDS = ("fluorido", "chlorido", "aqua", "ammine", "cyanido")
METHODS = (("HF", "sto-3g"), ("B3LYP", "3-21G"))
KEEP = ("result.json", "report.html", "spec.json", "geometry.xyz")
CMD = ("import sys; from dsplit.cli.archive import archive_group; "
       "archive_group.main([sys.argv[1], '--archive', sys.argv[2]], prog_name='archive')")


def real_run(root: Path):
    from dsplit.archive.store import compute_archived
    from dsplit.spec import spec_from_dict

    spec = spec_from_dict({"name": "bench-tif6", "complex": {"metal": "Ti", "oxidation_state": 3,
                                                             "geometry": "octahedral", "ligands": {"fluorido": 6}},
                           "method": {"theory": "HF", "basis": "sto-3g", "solvent": "none"}})
    return compute_archived(spec, root, threads=1)


def clone(root: Path, template: Path, n: int) -> None:
    """n − 1 more run folders from the template's files, committed with manifests and index rows."""
    from dsplit.archive import index
    from dsplit.archive.manifest import build_manifest
    from dsplit.archive.paths import key_versions, run_id_for
    from dsplit.runfolder import write_json as write_json_atomic

    base = json.loads((template / "result.json").read_text())
    versions = key_versions()
    db = index.connect(index.index_path(root))
    with db:
        for i in range(1, n):
            metal, ox = METALS[i % len(METALS)]
            lig = LIGANDS[(i // len(METALS)) % len(LIGANDS)]
            theory, basis = METHODS[(i // 25) % len(METHODS)]
            name = f"bench-{metal.lower()}-{lig}-{i}"
            doc = json.loads(json.dumps(base))
            doc["name"] = name
            doc["spec"]["complex"].update(metal=metal, oxidation_state=ox, ligands={lig: 6})
            doc["complex"].update(metal=metal, oxidation_state=ox, metal_ligand_distances={lig: 1.9 + 0.003 * i})
            doc["method"].update(theory=theory, basis=basis)
            scale = 0.6 + 0.004 * i
            for block in doc["splitting"].values():
                block["delta_cm1"] *= scale
                block["delta_eV"] *= scale
            if i % 10 == 0:
                doc["spin_states"] = [{"theory": t, "multiplicity": m, "relative_kJmol": e, "verified": True}
                                      for t, m, e in (("HF", 1, 80.0 + i), ("HF", 5, 0.0), ("B3LYP", 1, 0.0),
                                                      ("B3LYP", 5, 10.0 + i))]
            rid = run_id_for({"bench": i}, "compute", None, versions)
            folder = root / name / rid
            folder.mkdir(parents=True)
            for f in KEEP:
                if f != "result.json" and (template / f).is_file():
                    shutil.copyfile(template / f, folder / f)
            doc["archive"] = {"run_id": rid, "folder": f"{name}/{rid}", "kind": "compute", "key_versions": versions}
            write_json_atomic(folder / "result.json", doc)
            man = build_manifest(folder, run_id=rid, name=name, kind="compute", result=doc, exit_code=0,
                                 key_versions=versions, options={}, wall_seconds=1.0)
            write_json_atomic(folder / "manifest.json", man)
            db.write(index.run_atoms(folder, doc), key_value_pairs=index.key_values(doc, man))


def median_of(fn, k: int = 3, clock=time.perf_counter) -> float:
    times = []
    for _ in range(k):
        t0 = clock()
        fn()
        times.append(clock() - t0)
    return statistics.median(times)


def main() -> None:
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    from dsplit.archive import page, page_figures
    from dsplit.archive.page_data import collect
    from dsplit.archive.query import LIST_COLUMNS, select_rows
    from dsplit.archive.tables import render

    with tempfile.TemporaryDirectory() as tmp:
        root = Path(tmp)
        t0 = time.perf_counter()
        run = real_run(root)
        t_real = time.perf_counter() - t0
        clone(root, run.out_dir, N)
        snap = collect(root)
        assert len(snap.runs) == N, len(snap.runs)
        t_list = median_of(lambda: render(select_rows(root, None), LIST_COLUMNS))
        t_page = median_of(lambda: page.write_page(root))
        t_read = median_of(lambda: collect(root))
        problems: list[str] = []
        t_figs = median_of(lambda: [page._draw(lambda: f(snap.runs), problems, "x") for f in
                                    (page_figures.distance_figure, page_figures.spin_gap_figure)]
                           + [page._draw(lambda: page_figures.series_figure(page_figures.series_views(snap.runs)),
                                         problems, "x")])
        t_refresh = median_of(lambda: page.refresh_page(root))
        cpu_page = median_of(lambda: page.write_page(root), clock=time.process_time)
        cpu_list = median_of(lambda: render(select_rows(root, None), LIST_COLUMNS), clock=time.process_time)
        cli = {}
        for cmd in ("list", "page"):
            cli[cmd] = median_of(lambda: subprocess.run([sys.executable, "-c", CMD, cmd, str(root)], check=True,
                                                        capture_output=True))
        size = (root / page.PAGE_NAME).stat().st_size
    assert not problems, problems
    print(f"one real HF/STO-3G run (compute, reports, commit, page)  {t_real:7.2f} s")
    print(f"archive of {N} runs; index.html {size / 1e6:.2f} MB")
    print(f"`archive list` in process (select + render)        {t_list:7.3f} s")
    print(f"page in process (read + figures + HTML + write)    {t_page:7.3f} s   ratio to list {t_page / t_list:6.1f}")
    print(f"  reading {N} folders (manifest, SHA-256, sizes)   {t_read:7.3f} s")
    print(f"  three figures (matplotlib, PNG)                 {t_figs:7.3f} s")
    print(f"  CPU time: page {cpu_page:.3f} s, list {cpu_list:.3f} s   ratio {cpu_page / cpu_list:6.1f}")
    print(f"refresh after one commit (hook, in process)        {t_refresh:7.3f} s")
    print(f"`dsplit archive list` command, fresh process       {cli['list']:7.3f} s")
    print(f"`dsplit archive page` command, fresh process       {cli['page']:7.3f} s   "
          f"ratio to list {cli['page'] / cli['list']:6.2f}")


if __name__ == "__main__":
    main()
