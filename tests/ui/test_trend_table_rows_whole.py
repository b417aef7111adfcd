"""The network overview's trend table shows its rows whole; a longer table shows its
first rows whole and a toggle for the rest, never a box of fixed height.

Seen in JupyterLab + headless chromium on the four-site demo network: the trend table
stood in a 320 px box that no scrollbar marked; its last visible row was cut in the
middle of a sentence and the last site only reachable by a scroll nothing announced.
A later table of 35 rows stood in a 320 px scroll box whose foot cut a row in two
(tests/test_browser_table_rows.py sees it in chromium).  No browser here: the HTML the
widget holds is read for the height rule (no ``max-height`` at any number of rows),
the rows hidden until asked for, and the toggle's words.
"""
import re
import warnings

import pandas as pd
import pytest

from ui.demo_subset import write_demo_subset


@pytest.fixture(scope="module")
def app(tmp_path_factory):
    from workbench.ui.apps_more import NetworkOverview
    from workbench.ui.session import Session
    scenario = write_demo_subset(tmp_path_factory.mktemp("trend_rows"), ("ridge", "mere"),
                                 2019, 2021)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return NetworkOverview(Session.open(scenario))


def _box_style(value):
    """The style of the box around the table, as a dict."""
    m = re.search(r"<div[^>]* style='([^']*overflow:auto[^']*)'>\s*<style>", value)
    assert m, value[:400]
    return dict(kv.split(":", 1) for kv in m.group(1).strip(";").split(";"))


def _body_rows(value):
    return len(re.findall(r"<tr>", value.split("<tbody>", 1)[1]))


def test_the_trend_table_of_a_few_sites_is_whole(app):
    value = app.analysis_w.value
    n = len(app.analysis)
    assert n >= 2 and _body_rows(value) == n
    style = _box_style(value)
    # as tall as its rows: no height past which a row is cut, nothing said of a scroll
    assert "max-height" not in style, style
    assert "scroll for more" not in value
    # still scrolls sideways inside its column (the column-width rule is kept)
    assert style.get("width") == "0" and style.get("overflow") == "auto"


#: Rows of a table: the demo's four sites (two receptors each), and a network of 35.
@pytest.mark.parametrize("n, whole", [(1, True), (8, True), (35, False)])
def test_the_height_rule_and_the_toggle_follow_the_rows(n, whole):
    from workbench.ui.controls import TABLE_ROWS_WHOLE, table_html
    frame = pd.DataFrame({"site": [f"site {i}" for i in range(n)],
                          "S trend": ["+0.1 kg/ha/yr per yr (p 0.3; indicative only) " * 3] * n})
    out = table_html(frame, wide=("S trend",), fill=True)
    assert _body_rows(out) == n                   # every row in the table
    style = _box_style(out)
    # no height past which a row is cut, at any number of rows
    assert "max-height" not in out and "scroll for more" not in out, style
    if whole:
        assert "wb-rows-toggle" not in out and "display: none" not in out
    else:
        # the rows past the first hidden while the box's toggle is closed
        rule = re.search(r"\.wb-rows-box:not\(:has\(> details\[open\]\)\) > div > table > "
                         r"tbody > tr:nth-child\(n\+(\d+)\) \{display: none;\}", out)
        assert rule and int(rule.group(1)) == TABLE_ROWS_WHOLE + 1, out[:600]
        # the toggle under the table says how many rows there are and how many show
        toggle = re.search(r"<details class='wb-rows-toggle'.*?</details>", out)
        assert toggle and out.index("<table") < toggle.start()
        words = re.sub(r"<[^>]+>", " ", toggle.group(0))
        assert f"first {TABLE_ROWS_WHOLE} of {n} rows shown" in words
        assert f"open for the other {n - TABLE_ROWS_WHOLE}" in words
        assert f"all {n} rows shown" in words


def test_rows_shown_whole_up_to_the_limit_then_a_toggle_for_the_rest():
    from workbench.ui.controls_table import TABLE_ROWS_WHOLE, table_html
    at = pd.DataFrame({"a": range(TABLE_ROWS_WHOLE)})
    past = pd.DataFrame({"a": range(TABLE_ROWS_WHOLE + 1)})
    assert "wb-rows-toggle" not in table_html(at) and "max-height" not in table_html(at)
    assert f"first {TABLE_ROWS_WHOLE} of {TABLE_ROWS_WHOLE + 1} rows shown" in table_html(past)
    assert "max-height" not in table_html(past)
