"""The archive page (index.html): written on commit, escaped, honest about damage, series view.

Runs are fabricated (a real spec and built complex, made-up Δ) and committed through
``run_archived`` like real runs; their report.html is rendered by dsplit.report.
"""

from __future__ import annotations

import base64
import hashlib
import html.parser
import json
import logging
import re
import shutil
from pathlib import Path
from types import SimpleNamespace

import pytest

from dsplit.archive.page import PAGE_NAME, write_page
from dsplit.archive.page_data import DAMAGED, MISSING, NOT_VERIFIED, VERIFIED, collect
from dsplit.archive.page_figures import compare_with_series, series_views
from dsplit.archive.store import run_archived
from dsplit.units import cm1_to_ev, cm1_to_nm
from dsplit.spec import spec_from_dict
from test_archive_index import fake_result

EVIL = "<script>window.__pwned = 1</script> \"double\" & 'single'"


def page_run(root: Path, name: str, ligand: str, deltas: dict[str, float], *, metal: str = "Ti", ox: int = 3,
             recommended: tuple[str, float] | None = None, note: str = "", theory: str = "HF",
             verified: bool = True, extra: dict | None = None):
    """Commit one fabricated run (Δ in cm⁻¹ per estimator) with a rendered report.html."""
    from dsplit.report.render import write_reports

    spec = spec_from_dict({"name": name, "complex": {"metal": metal, "oxidation_state": ox, "geometry": "octahedral",
                                                      "ligands": {ligand: 6}},
                           "method": {"theory": "HF", "basis": "sto-3g", "solvent": "none"},
                           "experiment": {"source": note}})
    doc = fake_result(spec, 1.0)
    doc["method"]["theory"] = theory
    doc["splitting"] = {est: {"delta_eV": cm1_to_ev(v), "delta_cm1": v} for est, v in deltas.items()}
    if recommended:
        doc["recommended"] = {"estimator": recommended[0], "delta_cm1": recommended[1]}
    if not verified:
        doc["configuration_verified"] = False
    doc.update(extra or {})

    def produce(out: Path):
        out.mkdir(parents=True)
        (out / "result.json").write_text(json.dumps(doc))
        write_reports(doc, out)
        return SimpleNamespace(result=doc, exit_code=0 if verified else 3)

    return run_archived(spec, root, produce)


def small_archive(root: Path) -> list:
    """Six runs: a Ti(III) series of three ligands, two Fe(II), one unverified V(III)."""
    return [
        page_run(root, "ti-f", "fluorido", {"state": 17000.0, "excitation": 18500.0}, recommended=("state", 17000.0)),
        page_run(root, "ti-cl", "chlorido", {"state": 19000.0, "excitation": 17500.0}),
        page_run(root, "ti-aq", "aqua", {"state": 20500.0, "excitation": 21000.0}),
        page_run(root, "fe-aq", "aqua", {"state": 9400.0, "multiplet": 9800.0}, metal="Fe", ox=2,
                 recommended=("multiplet", 9800.0)),
        page_run(root, "fe-cn", "cyanido", {"state": 33000.0}, metal="Fe", ox=2, note=EVIL),
        page_run(root, "v-nh3", "ammine", {"orbital": 40000.0}, metal="V", verified=False, theory=EVIL),
    ]


class _Parse(html.parser.HTMLParser):
    """Start tags, text and <tr> rows of the runs table (Python's HTML5-tolerant parser)."""

    def __init__(self):
        super().__init__()
        self.tags: list[tuple[str, dict]] = []
        self.text: list[str] = []
        self.scripts: list[str] = []
        self._in_script = False

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))
        self._in_script = tag == "script"

    def handle_endtag(self, tag):
        self._in_script = False if tag == "script" else self._in_script

    def handle_data(self, data):
        (self.scripts if self._in_script else self.text).append(data)


def parse(path: Path) -> _Parse:
    p = _Parse()
    p.feed(path.read_text(encoding="utf-8"))
    return p


@pytest.fixture(scope="module")
def shared(tmp_path_factory):
    """small_archive for the tests that only read it."""
    root = tmp_path_factory.mktemp("page")
    return root, small_archive(root)


def test_commit_writes_page_with_every_run(shared):
    tmp_path, runs = shared
    page = tmp_path / PAGE_NAME
    assert page.is_file()  # written by the commit hook, no command run
    p = parse(page)
    rows = [a for t, a in p.tags if t == "tr" and "data-state" in a]
    assert len(rows) == len(runs)
    links = sorted(a["href"] for t, a in p.tags if t == "a")
    assert links == sorted(f"{r.out_dir.parent.name}/{r.out_dir.name}/report.html" for r in runs)
    assert all((tmp_path / href).is_file() for href in links)  # relative links resolve inside the archive
    text = " ".join(p.text)
    # Δ 17,000 cm⁻¹ ↔ λ = 1/ν̃ = 588 nm (units.cm1_to_nm; 10⁷/17000 = 588.2, arithmetic)
    assert "17,000 cm⁻¹" in text and f"{cm1_to_nm(17000.0):.0f} nm" in text and "588 nm" in text
    heads = [t for t in p.text if t.startswith("Δ ")]
    assert heads[:5] == ["Δ recommended", "Δ orbital", "Δ state", "Δ excitation", "Δ multiplet"]
    by_name = {r.name: r for r in collect(tmp_path).runs}
    assert by_name["fe-aq"].recommended_estimator == "multiplet" and by_name["ti-cl"].recommended_cm1 is None
    assert by_name["v-nh3"].state == NOT_VERIFIED and by_name["v-nh3"].deltas_cm1 == {}  # withheld
    assert {by_name[n].state for n in ("ti-f", "ti-cl", "ti-aq", "fe-aq", "fe-cn")} == {VERIFIED}


def test_page_is_self_contained_and_script_hash_matches(tmp_path):
    page_run(tmp_path, "ti-f", "fluorido", {"state": 17000.0})
    page_run(tmp_path, "ti-cl", "chlorido", {"state": 19000.0})
    raw = (tmp_path / PAGE_NAME).read_text(encoding="utf-8")
    p = parse(tmp_path / PAGE_NAME)
    for tag, attrs in p.tags:
        for key in ("src", "href"):
            if key in attrs and tag != "a":
                assert attrs[key].startswith("data:"), (tag, attrs[key])
    assert not re.search(r"https?://|url\(", raw)
    assert [t for t, _ in p.tags].count("script") == 1
    imgs = [a["src"] for t, a in p.tags if t == "img"]
    assert imgs and all(base64.b64decode(s.split(",", 1)[1])[:8] == b"\x89PNG\r\n\x1a\n" for s in imgs)  # PNG §5.2
    # CSP Level 2 §4.2.4: a hash source is base64(SHA-256(script text)); computed here with hashlib
    csp = next(a["content"] for t, a in p.tags if t == "meta" and a.get("http-equiv") == "Content-Security-Policy")
    want = base64.b64encode(hashlib.sha256("".join(p.scripts).encode()).digest()).decode()
    assert f"script-src 'sha256-{want}'" in csp and "'unsafe-inline'" not in csp


def test_user_text_is_escaped(tmp_path):
    page_run(tmp_path, "fe-cn", "cyanido", {"state": 33000.0}, metal="Fe", ox=2, note=EVIL, theory=EVIL)
    p = parse(tmp_path / PAGE_NAME)
    assert [t for t, _ in p.tags].count("script") == 1  # only the page's own script: nothing injected
    shown = "".join(p.text)
    assert EVIL in shown  # shown literally (as text) in the note and the method
    option_values = [a.get("value") for t, a in p.tags if t == "option"]
    assert f"{EVIL}/sto-3g/none" in option_values  # attribute values round-trip through escaping
    assert all("__pwned" not in s for s in p.scripts)


def test_damaged_missing_and_unindexed_runs(tmp_path):
    runs = small_archive(tmp_path)
    by_folder = {r.out_dir.parent.name: r.out_dir for r in runs}
    doc = json.loads((by_folder["ti-f"] / "result.json").read_text())
    doc["splitting"]["state"]["delta_cm1"] = 99999.0  # a hand-edited result: no longer the committed one
    (by_folder["ti-f"] / "result.json").write_text(json.dumps(doc))
    with open(by_folder["ti-cl"] / "report.md", "a") as fh:
        fh.write("tampered\n")  # another listed file changes size
    shutil.rmtree(by_folder["ti-aq"])  # the index keeps a row with no folder
    from dsplit.archive import index

    index.index_path(tmp_path).unlink()
    index.add_run(tmp_path, by_folder["fe-aq"], *index.load_run(by_folder["fe-aq"]))  # only fe-aq indexed now
    write_page(tmp_path)
    snap = collect(tmp_path)
    by_name = {r.name: r for r in snap.runs}
    assert by_name["ti-f"].state == DAMAGED and "result.json" in by_name["ti-f"].problems[0]
    assert by_name["ti-f"].deltas_cm1 == {}  # a damaged run's numbers are withheld
    assert by_name["ti-cl"].state == DAMAGED and "bytes" in by_name["ti-cl"].problems[0]
    assert "ti-aq" not in by_name  # its index row was dropped with the index
    assert not by_name["fe-cn"].indexed and by_name["fe-aq"].indexed
    text = " ".join(parse(tmp_path / PAGE_NAME).text)
    assert "99,999" not in text and text.count("damaged") >= 2 and "not in index.db" in text


def test_missing_folder_is_shown_missing(tmp_path):
    runs = small_archive(tmp_path)
    shutil.rmtree(runs[2].out_dir)
    write_page(tmp_path)
    by_name = {r.name: r for r in collect(tmp_path).runs}
    assert by_name["ti-aq"].state == MISSING and not by_name["ti-aq"].has_report
    p = parse(tmp_path / PAGE_NAME)
    assert not any(t == "a" and "ti-aq" in a.get("href", "") for t, a in p.tags)  # no dead link
    assert any(t == "tr" and a.get("data-state") == MISSING for t, a in p.tags)


def test_page_failure_never_fails_the_run(tmp_path, caplog):
    (tmp_path / PAGE_NAME).mkdir()  # os.replace cannot put a file over a directory
    with caplog.at_level(logging.WARNING, logger="dsplit.archive.page"):
        run = page_run(tmp_path, "ti-f", "fluorido", {"state": 17000.0})
    assert run.exit_code == 0 and (run.out_dir / "manifest.json").is_file()
    from dsplit.archive import index

    assert index.has_run(tmp_path, run.run_id)
    warnings = [r.getMessage() for r in caplog.records if r.levelno == logging.WARNING]
    assert len(warnings) == 1 and "\n" not in warnings[0] and "dsplit archive page" in warnings[0]
    assert not list(tmp_path.glob(f".{PAGE_NAME}.*"))  # no temporary file left behind


def test_series_order_against_the_textbook():
    # Spectrochemical series (Tsuchida; Shriver & Atkins, from memory): Cl⁻ < F⁻ < H2O < NH3 < CN⁻
    view = compare_with_series("g", "state", {"cyanido": 30000.0, "chlorido": 19000.0, "fluorido": 17000.0,
                                              "aqua": 20500.0})
    assert [k for k, _ in view.computed] == ["fluorido", "chlorido", "aqua", "cyanido"]
    assert view.textbook == ("chlorido", "fluorido", "aqua", "cyanido")
    assert view.swapped == (("chlorido", "fluorido"),) and view.out_of_place == {"chlorido", "fluorido"}
    same = compare_with_series("g", "state", {"aqua": 1.0, "ammine": 2.0, "point": 0.5})
    assert same.swapped == () and same.not_in_series == ("point",)


def test_series_groups_from_runs(shared):
    tmp_path, _ = shared
    groups = series_views(collect(tmp_path).runs)
    assert len(groups) == 2  # Ti(III) with three ligands, Fe(II) with two (V(III) is unverified)
    ti = {v.estimator: v for v in groups[0]}
    assert groups[0][0].group == "Ti(III) octahedral · HF/sto-3g/none"
    assert set(ti) == {"state", "excitation"}  # a single recommended value orders nothing
    assert ti["state"].swapped == (("chlorido", "fluorido"),)  # 19000 > 17000 reverses Cl⁻ < F⁻
    assert ti["excitation"].swapped == ()  # 17500 < 18500 < 21000: the textbook order
    fe = {v.estimator: v for v in groups[1]}
    assert fe["state"].computed == (("aqua", 9400.0), ("cyanido", 33000.0)) and fe["state"].swapped == ()


def test_spin_gaps_from_a_ladder(tmp_path):
    states = [{"theory": t, "multiplicity": m, "relative_kJmol": e, "verified": True}
              for t, m, e in (("HF", 1, 120.0), ("HF", 5, 0.0), ("B3LYP", 1, 0.0), ("B3LYP", 5, 35.5))]
    page_run(tmp_path, "fe-aq-ladder", "aqua", {}, metal="Fe", ox=2,
             extra={"spin_states": states, "ground_multiplicity": 5})
    partial = [{"theory": t, "multiplicity": m, "relative_kJmol": e, "verified": ok}
               for t, m, e, ok in (("HF", 1, 594.4, True), ("HF", 5, 0.0, True), ("B3LYP", 1, 0.0, True),
                                   ("B3LYP", 5, None, False))]
    page_run(tmp_path, "fe-aq-partial", "aqua", {}, metal="Fe", ox=2, verified=False,
             extra={"spin_states": partial, "ground_multiplicity": 5})
    runs = {r.name: r for r in collect(tmp_path).runs}
    run = runs["fe-aq-ladder"]
    # gap = E(2S+1 = 5) − E(2S+1 = 1) from the ladder's own relative energies (kJ/mol)
    assert [(g.theory, g.gap_kjmol) for g in run.spin_gaps] == [("HF", -120.0), ("B3LYP", 35.5)]
    assert run.ground_multiplicity == 5
    part = runs["fe-aq-partial"]  # the B3LYP quintet failed: that functional gives no gap, the run no ground
    assert part.state == NOT_VERIFIED and part.ground_multiplicity is None
    assert [(g.theory, g.gap_kjmol) for g in part.spin_gaps] == [("HF", -594.4)]
    p = parse(tmp_path / PAGE_NAME)
    assert [a["alt"] for t, a in p.tags if t == "img"] == ["spin-state gaps per functional"]  # no Δ: no other view


def test_refresh_leaves_the_page_to_a_queued_writer(tmp_path):
    from dsplit.archive.locks import file_lock, lock_path
    from dsplit.archive.page import refresh_page

    page_run(tmp_path, "ti-f", "fluorido", {"state": 17000.0})
    (tmp_path / PAGE_NAME).unlink()
    with file_lock(lock_path(tmp_path, "page-queue")):  # another committer is queued for the page lock
        assert refresh_page(tmp_path) is None and not (tmp_path / PAGE_NAME).exists()
    assert refresh_page(tmp_path) == tmp_path / PAGE_NAME  # nobody queued: this one writes


def test_page_command(tmp_path):
    from click.testing import CliRunner

    from dsplit.cli.archive import archive_group

    page_run(tmp_path, "ti-f", "fluorido", {"state": 17000.0})
    (tmp_path / PAGE_NAME).unlink()
    r = CliRunner().invoke(archive_group, ["page", "--archive", str(tmp_path)])
    assert r.exit_code == 0 and f"wrote {tmp_path / PAGE_NAME} (1 run(s))" in r.output
    r = CliRunner().invoke(archive_group, ["page", "--archive", str(tmp_path / "nowhere")])
    assert r.exit_code == 2 and "no archive" in r.output and not (tmp_path / "nowhere").exists()
