"""The archive page in a real browser: Debian's headless Chromium driven by Playwright.

Playwright only drives the system browser (``executable_path``); it never downloads
one (no ``playwright install``).  A missing browser FAILS this test; set
DSPLIT_NO_BROWSER=1 to skip it on a machine without one (.ci/run never sets it and
installs Debian's chromium instead).
"""

from __future__ import annotations

import os
import shutil
import struct
from pathlib import Path

import pytest

from dsplit.archive.page import PAGE_NAME
from test_archive_page import EVIL, small_archive

CHROMIUM = os.environ.get("DSPLIT_CHROMIUM", "/usr/bin/chromium")
# every switch that would make the browser reach out (the test machine has no network)
ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
        "--disable-background-networking", "--disable-component-update", "--disable-sync"]

if os.environ.get("DSPLIT_NO_BROWSER") == "1":
    pytest.skip("DSPLIT_NO_BROWSER=1: browser tests switched off by hand", allow_module_level=True)


@pytest.fixture(scope="module")
def archive(tmp_path_factory):
    root = tmp_path_factory.mktemp("page-archive")
    runs = small_archive(root)
    return root, runs


@pytest.fixture(scope="module")
def browser(tmp_path_factory):
    if not (shutil.which(CHROMIUM) or Path(CHROMIUM).is_file()):
        pytest.fail(f"no browser at {CHROMIUM}: install Debian's chromium (apt-get install chromium) "
                    "or set DSPLIT_NO_BROWSER=1 to skip the browser tests")
    from playwright.sync_api import sync_playwright

    with sync_playwright() as pw:
        ctx = pw.chromium.launch_persistent_context(
            str(tmp_path_factory.mktemp("chromium-profile")), executable_path=CHROMIUM, headless=True, args=ARGS,
            viewport={"width": 1360, "height": 900}, offline=True)
        yield ctx
        ctx.close()


@pytest.fixture
def page(browser, archive):
    """The archive page loaded from file://, with console errors, page errors and requests recorded."""
    root, _ = archive
    tab = browser.new_page()
    tab.errors, tab.requests = [], []
    tab.on("console", lambda m: tab.errors.append(f"console {m.type}: {m.text}") if m.type in ("error", "warning")
           else None)
    tab.on("pageerror", lambda e: tab.errors.append(f"page error: {e}"))
    tab.on("request", lambda r: tab.requests.append(r.url))
    tab.goto((root / PAGE_NAME).as_uri())
    yield tab
    tab.close()


def visible_names(tab) -> list[str]:
    return tab.eval_on_selector_all("#runs-table tbody tr:not([hidden])",
                                    "rows => rows.map(r => r.cells[0].getAttribute('data-v'))")


def column_values(tab, header: str) -> list[str]:
    col = tab.eval_on_selector_all("#runs-table thead th", "hs => hs.map(h => h.textContent.trim())").index(header)
    return tab.eval_on_selector_all("#runs-table tbody tr:not([hidden])",
                                    f"rows => rows.map(r => r.cells[{col}].getAttribute('data-v'))")


def test_loads_clean_from_file_url(page, archive):
    _, runs = archive
    assert page.errors == []  # no console error or warning, no uncaught exception, no CSP violation
    assert all(u.startswith(("file://", "data:")) for u in page.requests), page.requests  # nothing external
    assert page.locator("#runs-table tbody tr").count() == len(runs)
    assert page.locator("#shown").inner_text() == f"{len(runs)} of {len(runs)} runs shown"
    assert page.locator("figure img").count() == 2  # series + distance (no spin-state ladder here)


def test_header_click_sorts(page):
    page.locator("#runs-table th", has_text="Δ state").locator("button").click()
    values = column_values(page, "Δ state")
    numbers = [float(v) for v in values if v]
    # numbers sort as numbers (9400 before 17000; as text "9400.0" would come last); no value goes last
    assert numbers == [9400.0, 17000.0, 19000.0, 20500.0, 33000.0]
    assert values[-1] == ""  # the unverified run: value withheld
    assert page.locator("#runs-table th", has_text="Δ state").get_attribute("aria-sort") == "ascending"
    page.locator("#runs-table th", has_text="Δ state").locator("button").click()
    assert [float(v) for v in column_values(page, "Δ state") if v] == sorted(numbers, reverse=True)
    page.locator("#runs-table th", has_text="complex").locator("button").click()
    assert visible_names(page) == ["fe-aq", "fe-cn", "ti-aq", "ti-cl", "ti-f", "v-nh3"]


def test_filters_hide_rows(page):
    page.select_option("#f-metal", "Ti")
    assert sorted(visible_names(page)) == ["ti-aq", "ti-cl", "ti-f"]
    page.select_option("#f-ligand", "aqua")
    assert visible_names(page) == ["ti-aq"]
    page.select_option("#f-metal", "")
    assert sorted(visible_names(page)) == ["fe-aq", "ti-aq"]
    page.select_option("#f-ligand", "")
    page.fill("#f-text", "CYANIDO")  # free text, any case: the ligand name in the row
    assert visible_names(page) == ["fe-cn"]
    assert page.locator("#shown").inner_text() == "1 of 6 runs shown"
    page.fill("#f-text", "")
    page.select_option("#f-method", "HF/sto-3g/none")
    assert "v-nh3" not in visible_names(page) and len(visible_names(page)) == 5
    page.select_option("#f-method", "")
    page.select_option("#f-state", "not verified")
    assert visible_names(page) == ["v-nh3"]


def test_user_text_shows_as_text(page):
    assert page.evaluate("typeof window.__pwned") == "undefined"  # the injected <script> never ran
    row = page.locator("#runs-table tbody tr", has_text="fe-cn")
    assert EVIL in row.inner_text()
    assert EVIL in page.locator("#f-method").inner_text()  # the method filter's option text


def test_report_links_open_reports(page, archive):
    root, runs = archive
    hrefs = page.eval_on_selector_all("#runs-table tbody a", "as => as.map(a => a.href)")
    assert len(hrefs) == len(runs)
    for href in hrefs:
        page.goto(href)
        name = Path(href).parent.parent.name
        assert name in page.title()  # the report's title names the complex (formula — name)
        assert page.title().startswith("[")  # … and its formula, e.g. [TiF6]3-


def test_screenshot(page, tmp_path):
    shot = tmp_path / "archive-page.png"
    page.screenshot(path=str(shot), full_page=True)
    data = shot.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (PNG spec, §5.2)
    width, height = struct.unpack(">II", data[16:24])  # IHDR: width, height (PNG spec, §11.2.2)
    assert width == 1360 and height > 900  # the full page is taller than one screen
    assert len(data) > 50_000  # a page with a table and two figures, not a blank image
