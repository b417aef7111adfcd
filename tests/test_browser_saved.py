"""Real-browser checks of the network overview (the JupyterLab and chromium of
tests/test_browser.py): a notebook run, saved, closed and opened again shows the app's
one-line hint, not the widget manager's error line; the serial-correction checkbox
changes the trend table in the page."""
import json
import re

import pytest

from test_browser import (_close_sessions, _get, _run_all, _screenshot,  # noqa: F401
                          lab, page, token)

pytestmark = pytest.mark.browser
IDLE = "() => /\\\\| Idle/.test(document.querySelector('#jp-main-statusbar')?.innerText || '')"
#: JavaScript: the text of the trend table's first S trend cell.
TREND = """() => { const t = [...document.querySelectorAll('.wb-network table')].find(
  t => /S trend/.test(t.innerText)); return t ? t.querySelector('tbody tr td:nth-child(3)').innerText : null; }"""


def test_the_serial_correction_checkbox_changes_the_trend_table(lab, token, page, tmp_path):
    _run_all(page, lab, token, "network_overview_years")
    page.wait_for_function(TREND)
    plain = page.evaluate(TREND)
    assert "per yr (p " in plain and "Hamed-Rao" not in plain, plain
    box = page.locator(".wb-network .widget-checkbox input[type=checkbox]")
    box.scroll_into_view_if_needed()        # JupyterLab leaves cells out of view undrawn
    assert box.is_visible()
    assert "correlated years" in page.locator(".wb-network .widget-checkbox").inner_text()
    box.click()
    page.wait_for_function(f"() => ({TREND})() !== {json.dumps(plain)}")
    text = page.evaluate(TREND)
    assert re.search(r"; p \S+ if the years are correlated \(Hamed-Rao(; the smallest p of any "
                     r"order of \d values, the correction gave less)?\), weak: \d years, needs ~25",
                     text), text
    assert "Second p:" in page.locator(".wb-network").inner_text()
    _screenshot(page, tmp_path, "network_serial")
    box.click()
    page.wait_for_function(f"() => ({TREND})() === {json.dumps(plain)}")
    _close_sessions(lab, token)


def test_a_saved_network_opened_again_shows_the_hint_not_an_error(lab, token, page, tmp_path):
    """Open, run, save, close the kernel, open again (defect: "Error displaying widget:
    model not found" in the app's place)."""
    _run_all(page, lab, token, "network_overview")
    # while the app is drawn the hint is hidden
    hint = page.locator(".wb-saved-hint")
    assert hint.count() == 1
    assert page.evaluate("() => getComputedStyle(document.querySelector('.wb-saved-hint'))"
                         ".display") == "none"
    page.evaluate("window.jupyterapp.commands.execute('docmanager:save')")
    page.wait_for_function("() => !document.querySelector('.jp-mod-dirty')")
    _close_sessions(lab, token)
    page.reload()
    page.wait_for_selector(".jp-Notebook .jp-Cell")
    page.wait_for_function("() => [...document.querySelectorAll('.jp-OutputArea-output')]"
                           ".some(e => /model not found/.test(e.textContent))")
    page.wait_for_timeout(500)
    page.locator(".wb-saved-hint").scroll_into_view_if_needed()
    assert page.locator(".wb-saved-hint").is_visible()
    text = page.locator(".wb-saved-hint").inner_text()
    assert text.startswith("[Network overview") and "Run All Cells" in text, text
    seen = page.evaluate("() => [...document.querySelectorAll('.jp-OutputArea-output')]"
                         ".filter(e => e.offsetParent !== null).map(e => e.innerText).join('\\n')")
    assert "Error displaying widget" not in seen and "model not found" not in seen, seen
    _screenshot_page = tmp_path / "network_reopened.png"
    page.screenshot(path=str(_screenshot_page), full_page=True)
    _close_sessions(lab, token)
