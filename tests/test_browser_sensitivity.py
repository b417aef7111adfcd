"""Real-browser check of every control of the sensitivity explorer (the JupyterLab and
chromium of tests/test_browser.py), on two sites of the demo network over 2020-2021:
each slider, drop-down and button is moved as a user does (keys on a slider's handle,
a choice in a drop-down, a click), and the page must show what the controls say: the
readouts, the stale-figure line, the swept values on the curves, the units, the title
and the export's message.  Defects seen this way: the z0 range read "0.00 - 2.00"
while its handles stood at 0.0001 and 2.0001 m; a yes-or-no assumption was drawn as
True/False (tests/ui/test_sensitivity_controls.py checks the same without a browser).
"""
import json
import re
import urllib.request

import nbformat
import pytest

from test_browser import (NOTEBOOKS, _close_sessions, _no_javascript_errors,  # noqa: F401
                          _run_all, _screenshot, lab, page, token)
from ui.demo_subset import write_demo_subset

pytestmark = pytest.mark.browser
#: JavaScript: the sensitivity figure's titles and traces (name, x, y).
CURVES = """() => {
  const el = document.querySelector('.jp-OutputArea .js-plotly-plot');
  if (!el || !el._fullLayout || !el.data) return null;
  const t = (a) => (a && a.title && a.title.text) || '';
  return {title: t(el._fullLayout), x: t(el._fullLayout.xaxis), y: t(el._fullLayout.yaxis),
          traces: el.data.map(d => ({name: d.name, x: Array.from(d.x || []),
                                     y: Array.from(d.y || [])}))};
}"""


#: JavaScript: the boxes of the two panels' x axis titles and of the figure [px].
AXIS_TITLES = """() => {
  const el = document.querySelector('.jp-OutputArea .js-plotly-plot');
  const box = e => { const b = e.getBoundingClientRect();
                     return {left: b.left, right: b.right, top: b.top, bottom: b.bottom,
                             text: e.textContent}; };
  return {titles: [...el.querySelectorAll('.g-xtitle text, .g-x2title text')].map(box),
          figure: box(el.querySelector('.main-svg'))};
}"""


def _axis_titles_apart(page):
    """The x axis titles of the two panels apart and inside the figure (a title of
    25 characters ran into the other panel's: "every season has air dataevery...")."""
    got = page.evaluate(AXIS_TITLES)
    a, b = got["titles"]
    assert b["left"] - a["right"] >= 4, got
    for t in (a, b):
        assert t["left"] >= got["figure"]["left"] and t["bottom"] <= got["figure"]["bottom"], got


def _put_notebook(lab, token, name, scenario):
    """The sensitivity notebook on `scenario`, written into the server's folder."""
    nb = nbformat.read(NOTEBOOKS / "sensitivity.ipynb", as_version=4)
    for c in nb.cells:
        if c.cell_type == "code":
            c.outputs, c.execution_count = [], None
    nb.metadata.pop("widgets", None)
    nb.cells.insert(1, nbformat.v4.new_code_cell(
        f'SCENARIO = r"{scenario}"\nSITE = "ridge"\nYEARS = (2021, 2021)'))
    body = json.dumps({"type": "notebook", "format": "json",
                       "content": json.loads(nbformat.writes(nb))}).encode()
    req = urllib.request.Request(f"{lab}/api/contents/{name}.ipynb", data=body, method="PUT")
    req.add_header("Authorization", f"token {token}")
    req.add_header("Content-Type", "application/json")
    with urllib.request.urlopen(req, timeout=10) as r:
        assert r.status in (200, 201)


def _curve(page, name="S total"):
    data = page.evaluate(CURVES)
    return next(t for t in data["traces"] if t["name"].startswith(name))


def test_every_control_of_the_sensitivity_explorer(lab, token, page, tmp_path):
    scenario = write_demo_subset(tmp_path / "two", ("ridge", "mere"), 2020, 2021)
    _put_notebook(lab, token, "sensitivity_two", scenario)
    _run_all(page, lab, token, "sensitivity_two")
    _no_javascript_errors(page)
    app = page.locator(".jp-OutputArea-output > .widget-vbox").filter(
        has=page.locator(".wb-sensitivity")).first
    selects = app.locator(".widget-dropdown select")       # site, receptor, unit, assumption
    site, receptor, unit, key = (selects.nth(i) for i in range(4))
    sliders = app.locator(".widget-hslider")                # years, range, values
    years, rng, values = (sliders.nth(i) for i in range(3))
    status = app.locator(".widget-hprogress + .widget-label, .widget-label").filter(
        has_text=re.compile("sweep done|ready|changed: press Run sweep")).first

    def readout(slider):
        return slider.locator(".widget-readout").inner_text().strip()

    def keys(slider, handle, *pressed):
        slider.locator(".noUi-handle").nth(handle).focus()
        for k in pressed:
            page.keyboard.press(k)
        page.wait_for_timeout(300)

    def run():
        old = json.dumps(page.evaluate(CURVES))
        app.locator(".widget-button", has_text="Run sweep").click()
        page.wait_for_function(f"(old) => {{ const c = ({CURVES})();"
                               " return c && JSON.stringify(c) !== old; }", arg=old)
        status.filter(has_text="sweep done").wait_for()
        page.wait_for_timeout(300)

    def stale():
        status.filter(has_text="changed: press Run sweep").wait_for()

    # the first sweep: fixed Vd of SO2, 0.05-2 cm/s, 6 values
    assert readout(rng) == "0.05 – 2.00" and readout(values) == "6"
    assert [round(x, 6) for x in _curve(page)["x"]] == [0.05, 0.44, 0.83, 1.22, 1.61, 2.0]
    first = _curve(page)
    # the range's upper handle to its end, three values fewer: the figure waits for Run
    keys(rng, 1, "End")
    assert readout(rng) == "0.05 – 10.00"
    stale()
    keys(values, 0, "ArrowLeft", "ArrowLeft", "ArrowLeft")
    assert readout(values) == "3"
    assert _curve(page) == first
    run()
    swept = _curve(page)
    assert [round(x, 6) for x in swept["x"]] == [0.05, 5.025, 10.0]
    assert swept["y"][2] > swept["y"][0]                    # more SO2 dry deposition
    assert "0.05" in app.locator("table").inner_text()
    # the unit: the sweep again, in eq/ha/yr
    unit.select_option(label="eq/ha/yr")
    page.wait_for_function(f"() => /eq/.test(({CURVES})().y)")
    assert _curve(page)["y"][0] > swept["y"][0] * 10        # 62.4 eq per kg of S
    app.locator("table", has_text="[eq/ha/yr]").wait_for()       # after the figure
    # z0: the range from the slider's least value; the readout writes what is swept
    key.select_option(label="surface: roughness length z0 of the site [m]")
    stale()
    keys(rng, 0, "Home")
    low, high = (float(v) for v in readout(rng).split(" – "))
    assert low > 0, readout(rng)                             # read "0.00" before
    run()
    xs = sorted(_curve(page)["x"])
    assert xs[0] == pytest.approx(low) and xs[-1] == pytest.approx(high), (readout(rng), xs)
    assert "in force" in app.inner_text() and "Drawn: the 3 values swept" in app.inner_text()
    _axis_titles_apart(page)
    _screenshot(page, tmp_path, "sensitivity_z0")
    # a yes-or-no assumption: no range, no values; drawn as its control names it
    key.select_option(label="completeness: every season has air data")
    rng.wait_for(state="hidden")
    assert values.is_hidden()
    run()
    assert _curve(page)["x"] == ["yes", "no"]
    assert "Baseline: yes (star)." in app.inner_text()
    # years, receptor and site: the figure keeps what it shows until Run
    keys(years, 0, "ArrowLeft")
    assert readout(years) == "2020 – 2021"
    stale()
    receptor.select_option(index=1)
    page.wait_for_timeout(300)
    assert "ridge · conifer_forest · 2021" in page.evaluate(CURVES)["title"]
    run()
    assert "ridge · moorland · 2020-2021" in page.evaluate(CURVES)["title"]
    site.select_option(value=site.locator("option").nth(1).get_attribute("value"))
    stale()
    assert receptor.locator("option").first.inner_text() == "wetland"
    run()
    assert "mere · wetland · 2020-2021" in page.evaluate(CURVES)["title"]
    _axis_titles_apart(page)          # the widest legend: "N total (partial, no NO2)"
    # the export: the figure shown, as SVG, named in the message
    app.locator(".widget-dropdown select").last.select_option("svg")
    app.locator(".widget-button", has_text="Export figures").click()
    app.get_by_text(re.compile(r"1 figure written to .*sensitivity-curves\.svg")).wait_for()
    # a second click, as PNG: drawn in the browser the first click started and kept
    app.locator(".widget-dropdown select").last.select_option("png")
    app.locator(".widget-button", has_text="Export figures").click()
    app.get_by_text(re.compile(r"1 figure written to .*sensitivity-curves\.png")).wait_for()
    _no_javascript_errors(page)
    _screenshot(page, tmp_path, "sensitivity_controls")
    _close_sessions(lab, token)
