"""Reliability figures: bad inputs, SIGKILLs during a study, concurrent writers into one archive.

1. Bad inputs: every field of a spec and every flag given impossible values (unknown names,
   wrong types, NaN/inf, out-of-range numbers, malformed TOML, paths that cannot be written):
   counts how many exit 2 with one line, how many show a traceback, and how many leave a file.
2. A 6-run study of [TiF6]2− (HF/STO-3G, gas phase, Ti–F distances) killed with SIGKILL at 5
   random moments, resumed after each kill, then finished: finished runs lost, runs redone,
   index rows against run folders, ``archive verify``.
3. Four ``dsplit compute`` processes on four different specs into one archive at once: rows,
   folders, ``archive verify``.

Run: python benchmarks/reliability.py [--seed 7] [--skip-study]
Measured (session 9, 2 shared cores, other jobs running): see the issue note.
"""

from __future__ import annotations

import argparse
import json
import os
import random
import shutil
import signal
import subprocess
import sys
import tempfile
import time
from pathlib import Path

GOOD = {"metal": '"Ti"', "oxidation_state": "4", "geometry": '"octahedral"', "ligands": "{ fluorido = 6 }"}
METHOD = {"theory": '"HF"', "basis": '"sto-3g"', "solvent": '"none"'}
BAD_COMPLEX = {
    "metal": ['"Xq"', '"Na"', '"fe2"', "26", '""', '"H"', '"U"', "true", "[1]", '"Zn "'],
    "oxidation_state": ["9", "-3", '"two"', "2.5", "true", "99", "-1"],
    "charge": ['"x"', "1.5", "true"],
    "geometry": ['"hexagonal"', '"oct"', "6", '""', '"octahedral-ish"', "[]"],
    "ligands": ["{ unobtainium = 6 }", "{ fluorido = 4 }", "{ fluorido = 0 }", "{ fluorido = -6 }",
                "{ fluorido = 6.0 }", "{ fluorido = true }", '"fluorido"', "{}", "{ fluorido = 7 }",
                "{ aqua = 3, fluorido = 2 }", "{ fluorido = 3, nope = 3 }"],
    "bond_length": ["0.0", "-1.9", "nan", "inf", "0.5", "12.0", '"far"', "{ fluorido = 0.1 }",
                    "{ nope = 1.9 }", "{ fluorido = nan }", "true"],
    "multiplicity": ["2", "0", "-1", "7", '"singlet"', "1.0", "true"],
    "configuration": ['"t2g^3 eg^2"', '"t2g^7"', '"xyz^1"', '"t2g^a"', "3"],
    "isomer": ['"fac"', '"cis"', "1", '"trans"'],
    "apical_angle": ["100", '"wide"', "nan"],
    "colour": ['"blue"'],
}
BAD_METHOD = {
    "theory": ['"B3LYQ"', '"DFT"', "1", '""', '"HF2"'],
    "basis": ['"STO-3X"', '"def2-XYZ"', "3", '""', '"aug-cc-pV9Z"'],
    "solvent": ["nan", "inf", "-inf", "0.5", "-80", '"mud"', "true"],
    "density_fitting": ['"yes"', "1"],
    "open_shell": ['"maybe"', "true", '"ROHF"'],
    "grid_level": ["10", "-1", '"fine"', "3.5"],
    "max_cycles": ["0", "-5", '"many"'],
    "speed": ['"max"'],
}
BAD_EXPERIMENT = ['measured_bands_cm1 = [nan]', 'measured_bands_cm1 = [inf]', 'measured_bands_cm1 = [-100]',
                  'measured_bands_cm1 = ["blue"]', 'measured_bands_nm = [0]', 'measured_bands_cm1 = 17400',
                  'measured_bands_cm1 = [1]\nmeasured_bands_nm = [500]', 'source = 3']
BAD_TEXT = ['name = "x"\n[complex\nmetal = "Ti"\n', 'name = "x"\n[complex]\nmetal = \n', "\x00\x01binary",
            'name = "../escape"\n', 'name = "a/b"\n', 'name = ".."\n', 'name = "<b>x</b>"\n', "[solver]\nfast = true\n",
            'name = 5\n']
BAD_FLAGS = [["--threads", "0"], ["--threads", "-1"], ["--memory", "-5"], ["--memory", "10"],
             ["--ligands", "fluorido"], ["--ligands", "fluorido=x"], ["--bond-length", "nan"],
             ["--solvent", "inf"], ["--basis", "nope"], ["--theory", "nope"], ["--multiplicity", "4"],
             ["--metal", "Xx"], ["--oxidation-state", "12"], ["--geometry", "cube"]]
#: other commands' bad flags ({spec} is a good spec file, {file} an ordinary file, {work} the case folder)
BAD_COMMANDS = [["spin-states", "{spec}", "--multiplicities", "4", "--out", "{work}/o"],
                ["spin-states", "{spec}", "--multiplicities", "x", "--out", "{work}/o"],
                ["spin-states", "{spec}", "--functionals", "NOPE", "--out", "{work}/o"],
                ["spin-states", "{spec}", "--functionals", ",", "--out", "{work}/o"],
                ["spin-states", "{spec}", "--out", "{file}/o"],
                ["optimize", "{spec}", "--gradient-threshold", "0", "--out", "{work}/o"],
                ["optimize", "{spec}", "--max-steps", "0", "--out", "{work}/o"],
                ["optimize", "{spec}", "--out", "{file}"],
                ["compute", "{spec}", "--out", "{file}"],
                ["compute", "{spec}", "--archive", "{file}"],
                ["compute", "{spec}", "--out", "{work}/o", "--archive", "{work}/a"],
                ["compute", "{work}/missing.toml", "--out", "{work}/o"],
                ["build", "{spec}", "-o", "{work}"],
                ["terms", "--d", "11", "--geometry", "octahedral", "--delta", "1000", "--B", "700"],
                ["terms", "--d", "3", "--geometry", "cube", "--delta", "1000", "--B", "700"],
                ["terms", "--d", "3", "--geometry", "octahedral", "--delta", "-5", "--B", "700"],
                ["terms", "--d", "3", "--geometry", "octahedral", "--bands", "abc"],
                ["archive", "list", "--archive", "{work}"],
                ["archive", "verify", "--archive", "{work}"],
                ["archive", "show", "nope", "--archive", "{work}"],
                ["study", "{work}/missing.toml"],
                ["study", "{file}"],
                ["study", "{spec}", "--workers", "0"]]


def spec_text(cx: dict[str, str], md: dict[str, str], extra: str = "") -> str:
    lines = ['name = "rel"', "[complex]"] + [f"{k} = {v}" for k, v in cx.items()]
    lines += ["[method]"] + [f"{k} = {v}" for k, v in md.items()]
    return "\n".join(lines) + "\n" + extra


def bad_cases() -> list[tuple[str, str, list[str]]]:
    """(label, spec text, extra flags)."""
    cases = []
    for key, values in BAD_COMPLEX.items():
        for v in values:
            cases.append((f"complex.{key}={v}", spec_text({**GOOD, key: v}, METHOD), []))
    for key, values in BAD_METHOD.items():
        for v in values:
            cases.append((f"method.{key}={v}", spec_text(GOOD, {**METHOD, key: v}), []))
    for e in BAD_EXPERIMENT:
        cases.append((f"experiment {e!r}", spec_text(GOOD, METHOD, "[experiment]\n" + e + "\n"), []))
    for t in BAD_TEXT:
        cases.append((f"text {t[:20]!r}", t, []))
    for f in BAD_FLAGS:
        cases.append((f"flags {' '.join(f)}", spec_text(GOOD, METHOD), f))
    for c in BAD_COMMANDS:
        cases.append((" ".join(c), spec_text(GOOD, METHOD), ["COMMAND", *c]))
    return cases


def run_bad_inputs(work: Path) -> dict[str, int]:
    from click.testing import CliRunner

    from dsplit.cli import main

    work.mkdir(parents=True, exist_ok=True)
    counts = {"tried": 0, "exit_2": 0, "one_line": 0, "tracebacks": 0, "files_written": 0}
    odd = []
    for k, (label, text, flags) in enumerate(bad_cases()):
        case = work / f"case{k}"
        case.mkdir()
        spec = case / "spec.toml"
        spec.write_bytes(text.encode("utf-8", "surrogateescape"))
        (case / "plain.txt").write_text("not a folder")
        before = set(os.listdir(case))
        if flags[:1] == ["COMMAND"]:
            args = [a.format(spec=spec, file=case / "plain.txt", work=case) for a in flags[1:]]
        else:
            args = ["compute", str(spec), "--out", str(case / "out"), "--quiet", *flags]
        res = CliRunner().invoke(main, args, catch_exceptions=True)
        counts["tried"] += 1
        lines = [ln for ln in res.output.strip().splitlines() if ln.strip()]
        counts["exit_2"] += res.exit_code == 2
        counts["one_line"] += len(lines) == 1
        counts["tracebacks"] += "Traceback" in res.output or res.exception is not None and res.exit_code != 2
        written = set(os.listdir(case)) - before
        counts["files_written"] += bool(written)
        if res.exit_code != 2 or len(lines) != 1 or written:
            odd.append(f"  {label}: exit {res.exit_code}, {len(lines)} line(s), wrote {sorted(written)}: "
                       f"{lines[:1]}")
    for line in odd:
        print(line)
    return counts


STUDY = """name = "rel"
[base]
name = "tif6"
[base.complex]
metal = "Ti"
oxidation_state = 4
geometry = "octahedral"
ligands = {{ fluorido = 6 }}
[base.method]
theory = "HF"
basis = "sto-3g"
solvent = "none"
[vary]
bond_lengths = {lengths}
"""


def _dsplit(*args: str) -> list[str]:
    return [sys.executable, "-m", "dsplit", *args]


def run_kills(work: Path, rng: random.Random) -> dict[str, object]:
    from dsplit.archive import index
    from dsplit.archive.paths import run_folders
    from dsplit.archive.verify import verify_archive

    work.mkdir(parents=True, exist_ok=True)
    root = work / "archive"
    study = work / "study.toml"
    study.write_text(STUDY.format(lengths=json.dumps([1.80, 1.83, 1.86, 1.89, 1.92, 1.95])))
    env = {**os.environ, "OMP_NUM_THREADS": "1"}
    t0 = time.perf_counter()
    proc = subprocess.run(_dsplit("study", str(study), "--archive", str(work / "timing"), "--workers", "1",
                                  "--quiet"), env=env, capture_output=True, text=True)
    full = time.perf_counter() - t0
    assert proc.returncode == 0, proc.stderr
    seen: dict[str, bytes] = {}
    lost = changed = 0
    for k in range(5):
        args = ["study", str(study), "--archive", str(root), "--workers", "1", "--quiet"]
        if root.is_dir():
            args.append("--resume")
        p = subprocess.Popen(_dsplit(*args), env=env, start_new_session=True, stdout=subprocess.DEVNULL,
                             stderr=subprocess.DEVNULL)
        time.sleep(rng.uniform(0.5, max(1.0, full * 0.6)))
        if p.poll() is None:
            os.killpg(p.pid, signal.SIGKILL)
        p.wait()
        now = {f.name: (f / "manifest.json").read_bytes() for _, _, f in run_folders(root)
               if (f / "manifest.json").is_file()}
        lost += len(set(seen) - set(now))
        changed += sum(now[r] != seen[r] for r in seen if r in now)
        seen.update(now)
        print(f"  kill {k + 1}: {len(now)} run(s) finished so far", flush=True)
    proc = subprocess.run(_dsplit("study", str(study), "--archive", str(root), "--resume", "--workers", "1",
                                  "--json"), env=env, capture_output=True, text=True)
    runs = json.loads(proc.stdout)["runs"]
    redone = sum(1 for r in runs if r["run_id"] in seen and r["state"] != "cached")
    folders = [f for _, _, f in run_folders(root)]
    rows = index.iter_rows_kv(index.select(root))
    return {"full_study_seconds": round(full, 1), "finished_before_last_resume": len(seen), "lost": lost,
            "rewritten": changed, "redone": redone, "runs": len(runs), "folders": len(folders),
            "index_rows": len(rows), "verify_ok": verify_archive(root).ok, "exit_code": proc.returncode}


def run_concurrent(work: Path) -> dict[str, object]:
    from dsplit.archive import index
    from dsplit.archive.paths import run_folders
    from dsplit.archive.verify import verify_archive

    work.mkdir(parents=True, exist_ok=True)
    root = work / "shared-archive"
    env = {**os.environ, "OMP_NUM_THREADS": "1"}
    procs = []
    for k, r in enumerate((1.82, 1.85, 1.88, 1.91)):
        spec = work / f"c{k}.toml"
        spec.write_text(spec_text({**GOOD, "bond_length": str(r)}, METHOD).replace('name = "rel"', f'name = "c{k}"'))
        procs.append(subprocess.Popen(_dsplit("compute", str(spec), "--archive", str(root), "--quiet",
                                              "--threads", "1"), env=env, stdout=subprocess.DEVNULL,
                                      stderr=subprocess.PIPE, text=True))
    codes = [p.wait() for p in procs]
    return {"exit_codes": codes, "folders": len(list(run_folders(root))),
            "index_rows": len(index.select(root)), "verify_ok": verify_archive(root).ok}


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--seed", type=int, default=7)
    ap.add_argument("--skip-study", action="store_true")
    a = ap.parse_args()
    work = Path(tempfile.mkdtemp(prefix="dsplit-reliability-"))
    try:
        t0 = time.perf_counter()
        bad = run_bad_inputs(work / "bad")
        print(f"bad inputs: {bad} ({time.perf_counter() - t0:.0f} s)", flush=True)
        if not a.skip_study:
            print(f"SIGKILL study: {run_kills(work / 'kills', random.Random(a.seed))}", flush=True)
        print(f"4 concurrent computes: {run_concurrent(work / 'conc')}", flush=True)
    finally:
        shutil.rmtree(work, ignore_errors=True)


if __name__ == "__main__":
    main()
