"""Real-browser check (the JupyterLab and chromium of tests/test_browser.py): an app's
table of more rows than :data:`~workbench.ui.controls_table.TABLE_ROWS_WHOLE` shows no
row cut, before and after the reader asks for every row.

Seen in chromium: a table of 35 rows stood in a 320 px scroll box whose foot cut its
last visible row in two (a scroll came to rest with a row's top at the box's top, never
with a row's bottom at its foot).  Rows here wrap to one, two and three lines in a
narrow column, as the network's trend sentences do.
"""
import json

import nbformat
import pytest

from test_browser import _close_sessions, _get, lab, page, token  # noqa: F401

pytestmark = pytest.mark.browser
IDLE = "() => /\\| Idle/.test(document.querySelector('#jp-main-statusbar')?.innerText || '')"
N_ROWS = 35
CODE = f"""import ipywidgets as w
import pandas as pd
from workbench.ui.controls_table import table_html
frame = pd.DataFrame({{"site": [f"site_{{i}}" for i in range({N_ROWS})],
                      "S trend": ["+0.1 kg/ha/yr per yr (p 0.3; indicative only) "
                                  * (1 + i % 3) for i in range({N_ROWS})]}})
w.VBox([w.HTML(table_html(frame, wide=("S trend",), fill=True))],
       layout=w.Layout(width="520px"))"""
#: JavaScript: the table's rows as drawn (hidden ones left out), and for each whether it
#: lies whole inside every box around it that clips (overflow other than visible) up to
#: the output area; the toggle's words; whether any such box scrolls up or down.
ROWS = """() => {
  const t = document.querySelector('.jp-OutputArea .wb-table');
  if (!t) return null;
  const clips = [];
  for (let e = t.parentElement; e && !e.classList.contains('jp-OutputArea-output');
       e = e.parentElement) {
    const s = getComputedStyle(e);
    if (s.overflowY !== 'visible' || s.overflowX !== 'visible') clips.push(e);
  }
  const rows = [...t.querySelectorAll('tbody tr')].filter(r => r.getClientRects().length);
  const cut = rows.filter(r => { const a = r.getBoundingClientRect();
    return clips.some(c => { const b = c.getBoundingClientRect();
      return a.top < b.top - 0.5 || a.bottom > b.bottom + 0.5; }); })
    .map(r => r.cells[0].textContent);
  const heights = rows.map(r => Math.round(r.getBoundingClientRect().height));
  const summary = document.querySelector('.jp-OutputArea .wb-rows-toggle summary');
  return {shown: rows.length, sites: rows.map(r => r.cells[0].textContent), cut,
          heights: [Math.min(...heights), Math.max(...heights)],
          scrolls: clips.some(c => c.scrollHeight > c.clientHeight + 1),
          toggle: summary ? summary.innerText : null};
}"""


def _open_and_run(page, lab, token, name):
    page.goto(f"{lab}/lab/tree/{name}.ipynb?token={token}&reset")
    page.wait_for_selector(".jp-Notebook .jp-Cell")
    page.wait_for_function(IDLE)
    page.evaluate("window.jupyterapp.commands.execute('notebook:run-all-cells')")
    page.wait_for_selector(".jp-OutputArea .wb-table")
    page.wait_for_timeout(500)


def test_no_row_of_a_long_table_is_cut(lab, token, page, tmp_path):
    nb = nbformat.v4.new_notebook(cells=[nbformat.v4.new_code_cell(CODE)])
    nb.metadata["kernelspec"] = {"name": "python3", "display_name": "Python 3",
                                 "language": "python"}
    import urllib.request
    req = urllib.request.Request(
        f"{lab}/api/contents/long_table.ipynb", method="PUT",
        data=json.dumps({"type": "notebook", "content": nb}).encode(),
        headers={"Authorization": f"token {token}", "Content-Type": "application/json"})
    with urllib.request.urlopen(req, timeout=10) as r:
        assert r.status in (200, 201)
    _open_and_run(page, lab, token, "long_table")
    from workbench.ui.controls_table import TABLE_ROWS_WHOLE
    first = page.evaluate(ROWS)
    page.screenshot(path=str(tmp_path / "long_table_first.png"), full_page=True)
    # rows of one to three lines: the heights differ (what a fixed box height cuts)
    assert first["heights"][1] > first["heights"][0] + 10, first
    # the first rows, every one whole; nothing to scroll up or down; the toggle says so
    assert first["shown"] == TABLE_ROWS_WHOLE, first
    assert first["sites"] == [f"site_{i}" for i in range(TABLE_ROWS_WHOLE)], first
    assert first["cut"] == [] and not first["scrolls"], first
    assert first["toggle"] and f"{TABLE_ROWS_WHOLE} of {N_ROWS}" in first["toggle"], first
    page.locator(".jp-OutputArea .wb-rows-toggle summary").click()
    page.wait_for_function(f"() => ({ROWS})().shown === {N_ROWS}")
    every = page.evaluate(ROWS)
    page.screenshot(path=str(tmp_path / "long_table_all.png"), full_page=True)
    assert every["sites"] == [f"site_{i}" for i in range(N_ROWS)], every
    assert every["cut"] == [] and not every["scrolls"], every
    assert f"all {N_ROWS} rows" in every["toggle"], every
    # closed again: the first rows only
    page.locator(".jp-OutputArea .wb-rows-toggle summary").click()
    page.wait_for_function(f"() => ({ROWS})().shown === {TABLE_ROWS_WHOLE}")
    _close_sessions(lab, token)
