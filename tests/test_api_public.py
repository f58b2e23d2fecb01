"""The Python API (dsplit.api.public): its doctests, and the README's notebook example.

The doctests run a [TiF4] HF/STO-3G computation (Ti(IV), d0: the cheapest complete run).
"""

from __future__ import annotations

import doctest
import re
from pathlib import Path

import pytest

import dsplit
from dsplit.api import public
from dsplit.errors import InputError

README = Path(__file__).resolve().parent.parent / "README.md"


def test_docstring_examples(tmp_path):
    finder = doctest.DocTestFinder()
    runner = doctest.DocTestRunner(optionflags=doctest.ELLIPSIS)
    globs = {"getfixture": lambda name: {"tmp_path": tmp_path}[name]}
    tests = finder.find(public, globs=globs)
    assert sum(len(t.examples) for t in tests) >= 6
    for t in tests:
        runner.run(t)
    assert runner.failures == 0


def test_readme_python_example_runs(tmp_path, monkeypatch):
    text = README.read_text(encoding="utf-8")
    blocks = re.findall(r"```python\n(.*?)```", text, flags=re.S)
    assert blocks, "the README has a Python example"
    monkeypatch.chdir(README.parent)  # the example names inputs/ relative to the checkout
    monkeypatch.setenv("DSPLIT_ARCHIVE", str(tmp_path / "archive"))
    namespace: dict = {"__name__": "readme_example"}
    exec(compile(blocks[0], "README.md", "exec"), namespace)  # noqa: S102 - our own README
    assert namespace["run"].ok


def test_spec_overrides_and_bad_keywords():
    s = public.as_spec({"complex": {"metal": "Ti", "oxidation_state": 3, "geometry": "octahedral",
                                    "ligands": {"fluorido": 6}}}, basis="3-21G", bond_length=1.95)
    assert s.method.basis == "3-21G" and s.complex.bond_length == 1.95
    again = public.as_spec(s, theory="HF")
    assert again.method.theory == "HF" and again.method.basis == "3-21G"
    with pytest.raises(InputError):
        public.as_spec(s, basiss="x")
    with pytest.raises(InputError):
        dsplit.build(s, threads=2)


def test_open_archive_refuses_a_folder_without_one(tmp_path):
    with pytest.raises(InputError):
        dsplit.open_archive(tmp_path)
