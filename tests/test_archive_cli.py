"""``dsplit archive`` commands on fabricated runs (no SCF): list, show, compare, verify, rebuild-index."""

from __future__ import annotations

import csv
import html.parser
import io
import json
from types import SimpleNamespace

import click
import pytest
from click.testing import CliRunner

from dsplit.archive.store import run_archived
from dsplit.cli.archive import archive_group, study_cmd
from test_archive_index import fake_result, fake_run, fake_spec


@click.group()
def cli() -> None:
    """Test shell holding the commands of this module."""


cli.add_command(archive_group)
cli.add_command(study_cmd)


def invoke(*args):
    return CliRunner().invoke(cli, [str(a) for a in args], catch_exceptions=False)


@pytest.fixture
def arch(tmp_path):
    runs = [fake_run(tmp_path, i) for i in range(4)]
    return tmp_path, runs


def test_list_formats_and_filter(arch):
    root, runs = arch
    r = invoke("archive", "list", "--archive", root)
    assert r.exit_code == 0
    assert all(f"{x.out_dir.parent.name}/{x.out_dir.name}" in r.output for x in runs)
    r = invoke("archive", "list", "--archive", root, "--format", "csv", "--sort", "-delta_orbital_eV",
               "--columns", "name,delta_orbital_eV")
    table = list(csv.DictReader(io.StringIO(r.output)))
    assert [float(t["delta_orbital_eV"]) for t in table] == pytest.approx([1.03, 1.02, 1.01, 1.0])
    r = invoke("archive", "list", "--archive", root, "ligands=cyanido:6", "--format", "json")
    assert [d["ligands"] for d in json.loads(r.output)] == ["cyanido:6"]


def test_list_bad_selection_and_file_archive(arch, tmp_path):
    root, _ = arch
    r = invoke("archive", "list", "--archive", root, "metal==Fe=")
    assert r.exit_code == 2
    f = tmp_path / "afile"
    f.write_text("")
    r = invoke("archive", "list", "--archive", f)
    assert r.exit_code == 2 and "is a file" in r.output


def test_show_resolves_runs(arch):
    root, runs = arch
    run = runs[1]
    for ref in (run.out_dir.name, run.out_dir.name[:6], f"{run.out_dir.parent.name}/{run.out_dir.name}",
                run.out_dir.parent.name):
        r = invoke("archive", "show", "--archive", root, ref)
        assert r.exit_code == 0, r.output
        assert "integrity  intact" in r.output and run.out_dir.name in r.output
    r = invoke("archive", "show", "--archive", root, "--json", run.out_dir.name)
    assert json.loads(r.output)["archive"]["run_id"] == run.out_dir.name
    for bad in ("../../etc/passwd", "/etc/passwd", "nothing-here"):
        assert invoke("archive", "show", "--archive", root, bad).exit_code == 2


class _Collect(html.parser.HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags, self.text = [], []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)

    def handle_data(self, data):
        self.text.append(data)


def test_compare_escapes_html(tmp_path):
    evil = "<script>alert(1)</script>"
    spec = fake_spec(0, name="evil-one")
    doc = fake_result(spec, 2.5)
    doc["method"]["theory"] = evil

    def produce(out):
        out.mkdir(parents=True)
        (out / "result.json").write_text(json.dumps(doc))
        return SimpleNamespace(result=doc, exit_code=0)

    run_archived(spec, tmp_path, produce)
    fake_run(tmp_path, 1)
    r = invoke("archive", "compare", "--archive", tmp_path, "--format", "html")
    assert r.exit_code == 0
    p = _Collect()
    p.feed(r.output)
    assert "script" not in p.tags  # HTML5 parsing (Python's html.parser): no element was injected
    assert evil in "".join(p.text)  # … the text is shown literally
    r = invoke("archive", "compare", "--archive", tmp_path, "--format", "markdown")
    assert "<script>" not in r.output and "&lt;script&gt;" in r.output
    lines = [ln for ln in r.output.splitlines() if ln.startswith("|")]
    assert len({ln.count("|") - ln.count("\\|") for ln in lines}) == 1  # every row has the same cells


def test_compare_table_and_figure(arch, tmp_path):
    root, runs = arch
    fig = tmp_path / "out" / "delta.png"
    out = tmp_path / "out" / "table.csv"
    r = invoke("archive", "compare", "--archive", root, runs[2].out_dir.name, runs[0].out_dir.name,
               "--format", "csv", "-o", out, "--figure", fig)
    assert r.exit_code == 0, r.output
    rows = list(csv.DictReader(out.open()))
    assert [row["run_id"] for row in rows] == [runs[2].out_dir.name, runs[0].out_dir.name]
    from dsplit.units import ev_to_cm1

    assert float(rows[0]["delta_orbital_cm1"]) == pytest.approx(ev_to_cm1(1.02))
    assert fig.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (PNG spec, §5.2)
    r = invoke("archive", "compare", "--archive", root, "--where", "ligands=aqua:6", "--format", "text")
    assert r.exit_code == 0 and "aqua:6" in r.output and "cyanido:6" not in r.output


def test_verify_and_rebuild(arch):
    root, runs = arch
    assert invoke("archive", "verify", "--archive", root).exit_code == 0
    (runs[0].out_dir / "result.json").write_text("{broken")
    r = invoke("archive", "verify", "--archive", root)
    assert r.exit_code == 1 and "result.json" in r.output
    assert invoke("archive", "list", "--archive", root).exit_code == 0  # never crashes list
    r = invoke("archive", "rebuild-index", "--archive", root)
    assert r.exit_code == 0 and "3 run(s)" in r.output
    r = invoke("archive", "list", "--archive", root, "--format", "json")
    assert len(json.loads(r.output)) == 3
