"""The trend figure's legend and title show whole (report.html's trend figures).

Seen in the browser on the demo's report: the Sen slope's legend entry of ridge, "...
crosses a change of method: 2020-01-02 precipitation sampler RDG-P1 -> RDG-P2", ran on
one line past the figure's right edge and was cut at "RDG-P1 -> R".  The reasons now go
on lines of their own; a long site name wraps in the title.
"""
import re
import shutil
from pathlib import Path

import numpy as np
import pytest

from workbench.ui.figures_analysis import LEGEND_CHARS, trend_figure, trend_spec

CHROMIUM = shutil.which("chromium") or "/usr/bin/chromium"
ARGS = ["--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
        "--disable-background-networking", "--disable-component-update", "--disable-sync"]
#: The demo's note of ridge (trends.csv) and an analyst's long site name.
NOTE = ("values: all; fewer than 10 complete years; years left out: 1 flagged; crosses a "
        "change of method: 2020-01-02 precipitation sampler RDG-P1 -> RDG-P2")
LONG_SITE = "Upper Fennick Valley long-term intensive monitoring plot no. 3 (north slope)"
ROW = {"sen_slope_per_yr": -0.0202, "slope_low_per_yr": -0.3, "slope_high_per_yr": 0.3,
       "intercept": 60.0, "p_value": 0.77, "valid": False, "note": NOTE}
YEARS = np.arange(2016, 2024)
VALUES = np.array([19.4, 20.3, 20.1, 18.9, 17.7, 18.2, 19.3, 20.2])


def _plain(text):
    return re.sub(r"\s+", " ", text.replace("<br>", " ")).strip()


def test_the_legend_keeps_every_word_on_short_lines():
    spec = trend_spec(YEARS, VALUES, ROW, None, f"N total · {LONG_SITE} · conifer_forest")
    slope = next(t for t in spec["data"] if t["name"].startswith("Sen slope"))
    assert _plain(slope["name"]).endswith("not valid: " + NOTE)        # every word
    assert max(len(ln) for ln in slope["name"].split("<br>")) <= LEGEND_CHARS
    title = spec["layout"]["title"]["text"]
    assert LONG_SITE.split()[-1] in title and "<br>" in title
    # the figure grows by the legend's extra lines (the plot keeps its height)
    plain = trend_spec(YEARS, VALUES, {**ROW, "valid": True}, None, "N total · ridge")
    assert spec["layout"]["height"] > plain["layout"]["height"]


@pytest.mark.parametrize("width", [560, 700, 1000])
def test_in_a_browser_no_legend_line_or_title_passes_the_figure(tmp_path, width):
    sync = pytest.importorskip("playwright.sync_api")
    if not Path(CHROMIUM).exists():
        pytest.skip("no chromium")
    import plotly.io as pio
    for name, title in (("demo", "N total · ridge · conifer_forest"),
                        ("long", f"N total · {LONG_SITE} · conifer_forest")):
        fig = trend_figure(YEARS, VALUES, ROW, None, title)
        (tmp_path / f"{name}.html").write_text(pio.to_html(fig, include_plotlyjs="inline"),
                                               encoding="utf-8")
    with sync.sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, headless=True, args=ARGS)
        try:
            page = browser.new_page(viewport={"width": width, "height": 900})
            for name in ("demo", "long"):
                page.goto((tmp_path / f"{name}.html").as_uri(), wait_until="load")
                page.wait_for_selector(".js-plotly-plot .legend")
                box = page.evaluate(
                    "() => { const el = document.querySelector('.js-plotly-plot');"
                    " const r = el.getBoundingClientRect();"
                    " const parts = [...el.querySelectorAll('.legendtext, .gtitle')];"
                    " return {right: r.right, bottom: r.bottom, parts: parts.map(t => {"
                    " const b = t.getBoundingClientRect();"
                    " return [t.textContent.slice(0, 40), b.right, b.bottom]; })}; }")
                out = [p for p in box["parts"] if p[1] > box["right"] + 1
                       or p[2] > box["bottom"] + 1]
                assert out == [], (name, width, box)
                shown = " ".join(page.evaluate(
                    "() => [...document.querySelectorAll('.legendtext')].map(t => {"
                    " const lines = [...t.querySelectorAll('tspan.line')];"
                    " return lines.length ? lines.map(l => l.textContent).join(' ')"
                    " : t.textContent; })"))
                assert "RDG-P1 -> RDG-P2" in shown, shown
                page.screenshot(path=str(tmp_path / f"{name}-{width}.png"))
        finally:
            browser.close()
