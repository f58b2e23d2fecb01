"""The one dependency order of the package, read from the source (DEVELOPERS.md, "Layers").

A module may import from its own layer or any layer below, never from one above; analysis/ and
models/ stay pure (no PySCF solver, no qc runner).  Imports inside functions count too: they are
how the code would loop at run time.  The order is the project's design rule (../DESIGN.md).
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

SRC = Path(__file__).resolve().parent.parent / "src" / "dsplit"

#: bottom (0) to top; a module's layer is its first path part under dsplit/
LAYERS: list[set[str]] = [
    {"errors", "units", "console", "runfolder", "__init__", "__main__"},
    {"symmetry"},
    {"models"},
    {"chem"},
    {"geometry", "complex"},
    {"spec"},
    {"qc"},
    {"analysis"},
    {"report"},
    {"archive", "study"},
    {"api"},
    {"cli"},
]
RANK = {name: i for i, layer in enumerate(LAYERS) for name in layer}
PURE = ("analysis", "models")
SOLVERS = ("pyscf.scf", "pyscf.dft", "pyscf.tdscf", "pyscf.mcscf", "pyscf.mrpt", "pyscf.solvent", "pyscf.cc",
           "pyscf.mp", "pyscf.hessian", "pyscf.geomopt")
#: the qc modules a pure layer may read: plain records and constants, no calculation
QC_RECORDS = {"dsplit.qc.records"}
#: the package's top-level __init__ re-exports the API lazily (PEP 562 __getattr__): not a dependency
EXEMPT = {"dsplit/__init__.py", "dsplit/__main__.py"}


def _modules():
    for path in sorted(SRC.rglob("*.py")):
        rel = path.relative_to(SRC.parent).as_posix()
        if rel not in EXEMPT:
            yield rel, path


def _imports(path: Path) -> list[tuple[int, str]]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    package = ".".join(path.relative_to(SRC.parent).with_suffix("").parts[:-1])
    out = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            out += [(node.lineno, a.name) for a in node.names]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")[: len(package.split(".")) - node.level + 1]
                mod = ".".join(base + ([node.module] if node.module else []))
            else:
                mod = node.module or ""
            out.append((node.lineno, mod))
            out += [(node.lineno, f"{mod}.{a.name}") for a in node.names if mod in ("pyscf", "dsplit", "dsplit.qc")]
    return out


def _layer(module: str) -> str:
    return module.split(".")[1] if module.count(".") else "__init__"


def test_every_module_has_a_layer():
    missing = sorted({rel.split("/")[1].removesuffix(".py") for rel, _ in _modules()} - set(RANK))
    assert not missing, f"add these to LAYERS (and DEVELOPERS.md): {missing}"


@pytest.mark.parametrize("rel, path", list(_modules()), ids=lambda x: x if isinstance(x, str) else "")
def test_imports_only_go_down(rel, path):
    here = rel.split("/")[1].removesuffix(".py")
    upward = []
    for line, mod in _imports(path):
        if not mod.startswith("dsplit.") or mod == "dsplit":
            continue
        there = _layer(mod)
        if there in RANK and RANK[there] > RANK[here]:
            upward.append(f"{rel}:{line} imports {mod} ({there} is above {here})")
    assert not upward, "\n".join(upward)


@pytest.mark.parametrize("rel, path", [m for m in _modules() if m[0].split("/")[1] in PURE],
                         ids=lambda x: x if isinstance(x, str) else "")
def test_pure_layers_run_no_calculation(rel, path):
    bad = [f"{rel}:{line} imports {mod}" for line, mod in _imports(path)
           if mod.startswith(SOLVERS) or (mod.startswith("dsplit.qc") and mod not in QC_RECORDS | {"dsplit.qc"})]
    assert not bad, "\n".join(bad)
