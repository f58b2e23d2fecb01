"""Build the small demo archive behind docs/archive-page.png and screenshot its index.html.

The demo (inputs/): the colour-screen study's Ti(III)/V(III) fluorido and chlorido
centres, the two iron(II) sensor samples, the vanadium(III) glaze and the tetrahedral
nickel(II) pigment, all at HF/3-21G (one thread) instead of their B3LYP/def2-SVP
defaults, plus a two-functional (HF, B3LYP) spin-state ladder of each iron(II) sample at
HF/STO-3G.  Runs already in the archive are cache hits.  The screenshot is taken by
Debian's headless Chromium (/usr/bin/chromium) through Playwright; nothing is downloaded.

Run: python docs/make_archive_page_screenshot.py [ARCHIVE] [PNG]
(defaults: ./demo-archive, docs/archive-page.png).  Takes ~25 min on a busy 2-core machine.
"""

from __future__ import annotations

import os
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
INPUTS = HERE.parent / "inputs"
COMPUTE = ("fe-aqua-sensor", "fe-cyanido-sensor", "v-aqua-green", "ni-chlorido-tetrahedral")
LADDERS = ("fe-aqua-sensor", "fe-cyanido-sensor")
ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
        "--disable-background-networking", "--disable-component-update", "--disable-sync"]


def spec_at(name: str, theory: str, basis: str):
    """inputs/NAME.toml with the method swapped (as `dsplit compute NAME.toml --theory … --basis …`)."""
    from dsplit.spec import parse_toml_text, spec_from_dict

    path = INPUTS / f"{name}.toml"
    data = parse_toml_text(path.read_text(encoding="utf-8"), str(path))
    data.setdefault("method", {}).update(theory=theory, basis=basis)
    return spec_from_dict(data, default_name=name)


def build(root: Path) -> None:
    from dsplit.archive.store import compute_archived, run_archived
    from dsplit.spin_api import spin_states
    from dsplit.study.api import plan_study, run_study

    study = tempfile.NamedTemporaryFile("w", suffix=".toml", dir=INPUTS, delete=False)
    try:
        text = (INPUTS / "study-ti-colour-screen.toml").read_text(encoding="utf-8")
        study.write(text.replace('methods = ["HF/3-21G", "B3LYP/3-21G"]', 'methods = ["HF/3-21G"]'))
        study.close()
        run_study(plan_study(study.name, root), root, workers=1, threads=1, executor="local", quiet=True)
    finally:
        os.unlink(study.name)
    for name in COMPUTE:
        compute_archived(spec_at(name, "HF", "3-21G"), root, threads=1)
    for name in LADDERS:
        spec = spec_at(name, "HF", "sto-3g")
        run_archived(spec, root, lambda out, spec=spec: spin_states(spec, out, multiplicities=[1, 5],
                                                                     functionals=["HF", "B3LYP"], threads=1),
                     kind="spin-states", options={"multiplicities": [1, 5], "functionals": ["HF", "B3LYP"]})


def screenshot(page: Path, png: Path) -> None:
    from playwright.sync_api import sync_playwright

    with sync_playwright() as pw, tempfile.TemporaryDirectory() as profile:
        ctx = pw.chromium.launch_persistent_context(profile, executable_path="/usr/bin/chromium", headless=True,
                                                    args=ARGS, viewport={"width": 1600, "height": 1000},
                                                    offline=True)
        tab = ctx.new_page()
        tab.goto(page.as_uri())
        tab.screenshot(path=str(png), full_page=True)
        ctx.close()


def main() -> None:
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    root = Path(sys.argv[1] if len(sys.argv) > 1 else "demo-archive").absolute()
    png = Path(sys.argv[2] if len(sys.argv) > 2 else HERE / "archive-page.png")
    build(root)
    from dsplit.archive.page import write_page

    page, n = write_page(root)
    screenshot(page, png)
    print(f"{page}: {n} run(s); screenshot {png} ({png.stat().st_size / 1e3:.0f} kB)")


if __name__ == "__main__":
    main()
