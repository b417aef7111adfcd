"""The network overview's trend table shows its rows whole, or says that it scrolls.

Seen in JupyterLab + headless chromium on the four-site demo network: the trend table
stood in a 320 px box that no scrollbar marked; its last visible row was cut in the
middle of a sentence and the last site only reachable by a scroll nothing announced.
No browser here: the HTML the widget holds is read for the height rule (a box with a
``max-height`` only when the table has more rows than are shown whole) and the note.
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
def test_the_height_rule_and_the_note_follow_the_rows(n, whole):
    from workbench.ui.controls import TABLE_HEIGHT, table_html
    frame = pd.DataFrame({"site": [f"site {i}" for i in range(n)],
                          "S trend": ["+0.1 kg/ha/yr per yr (p 0.3; indicative only) " * 3] * n})
    out = table_html(frame, wide=("S trend",), fill=True)
    assert _body_rows(out) == n                   # every row in the table
    style = _box_style(out)
    if whole:
        assert "max-height" not in style and "scroll for more" not in out
    else:
        assert style["max-height"] == TABLE_HEIGHT
        # the note above the box, with the count of rows
        note = re.search(r"<i>(\d+) rows; scroll for more</i>", out)
        assert note and int(note.group(1)) == n
        assert out.index("scroll for more") < out.index("<table")
        # a scroll comes to rest on a row's top
        assert "scroll-snap-type: y mandatory" in out and "scroll-snap-align: start" in out


def test_rows_shown_whole_up_to_the_limit_then_said_to_scroll():
    from workbench.ui.controls_table import TABLE_ROWS_WHOLE, table_html
    at = pd.DataFrame({"a": range(TABLE_ROWS_WHOLE)})
    past = pd.DataFrame({"a": range(TABLE_ROWS_WHOLE + 1)})
    assert "max-height" not in table_html(at) and "scroll for more" not in table_html(at)
    assert f"{TABLE_ROWS_WHOLE + 1} rows; scroll for more" in table_html(past)
