"""report.html in a real browser, offline: the figures render with every network
request refused (plotly is inlined), the cautions are on the page, and it prints to a
PDF. Runs where Debian's chromium and the `browser` extra (playwright) are installed."""
import re
import shutil
import sys
from pathlib import Path

import pytest

from workbench.cli import main

sys.path.insert(0, str(Path(__file__).parent))
from ui.demo_subset import write_demo_subset        # noqa: E402

CHROMIUM = shutil.which("chromium") or "/usr/bin/chromium"
ARGS = ["--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
        "--disable-background-networking", "--disable-component-update", "--disable-sync"]


def test_report_renders_offline_and_prints(tmp_path):
    sync = pytest.importorskip("playwright.sync_api")
    if not Path(CHROMIUM).exists():
        pytest.skip("no chromium")
    scen = write_demo_subset(tmp_path / "in", ("fell",), 2021, 2021)
    out = tmp_path / "run"
    assert main(["run", str(scen), "--out", str(out), "--quiet"]) == 0
    with sync.sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, headless=True, args=ARGS)
        try:
            page = browser.new_page(viewport={"width": 1200, "height": 900})
            outside = []

            def route(r):
                if r.request.url.startswith(("file:", "data:", "blob:")):
                    return r.continue_()
                outside.append(r.request.url)
                return r.abort()
            page.route("**/*", route)
            errors = []
            page.on("pageerror", lambda e: errors.append(str(e)))
            page.goto((out / "report.html").as_uri(), wait_until="load")
            page.wait_for_selector(".js-plotly-plot .main-svg", timeout=30000)
            assert not outside and not errors, (outside, errors)
            text = page.inner_text("body")
            assert "model-based and uncertain" in text
            assert "follow the methods your authority requires" in text
            assert "local rules or accredited laboratory and network practice" in text
            assert "Gas scheme:" in text and "partial" in text
            page.emulate_media(media="print")
            pdf = page.pdf(format="A4", print_background=True)
            pages = len(re.findall(rb"/Type\s*/Page[^s]", pdf))
            assert pdf.startswith(b"%PDF") and pages >= 2, pages
        finally:
            browser.close()
