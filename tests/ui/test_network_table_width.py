"""The network overview's trend and exceedance table beside an open file browser.

Seen in JupyterLab + chromium (1,000 px window, file browser open, the app's column
564 px): the table's least width (588 px) widened the HTML widget holding it past the
column, so the heading over the table and the Hamed-Rao note were cut at the right;
and the trend sentences (up to ~180 characters with the corrected p) stood in columns
of about 60 px, one row ~500 px tall in a box of 320 px that showed a slice of one row
with the export buttons right under it.  No browser here: the HTML the widget holds
is read for the two rules that keep the table in its column (CSS box sizing as in the
CSS 2.1 and CSS Sizing 3 specifications: a percentage least width counts for nothing
while a box's intrinsic width is computed; an nth-child td min-width sets a column's
least width in an automatic table layout).
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
    scenario = write_demo_subset(tmp_path_factory.mktemp("net_width"), ("ridge", "mere"),
                                 2019, 2021)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return NetworkOverview(Session.open(scenario))


def _box_style(value):
    """The style of the scrolling box around the table."""
    m = re.search(r"<div style='([^']*overflow:auto[^']*)'>\s*<style>", value)
    assert m, value[:400]
    return dict(kv.split(":", 1) for kv in m.group(1).strip(";").split(";"))


def _wide_columns(value, frame):
    """Headings of the columns that get a least width in the table's own style."""
    table_class = re.search(r'<table[^>]*class="([^"]*)"', value).group(1).split()
    own = [c for c in table_class if c.startswith("wb-table-")]
    assert len(own) == 1, table_class
    idx = [int(i) for i in re.findall(rf"\.{own[0]} td:nth-child\((\d+)\)", value)]
    assert re.search(rf"\.{own[0]} td:nth-child\(\d+\)[^{{]*\{{min-width: \d+em;\}}", value)
    return [list(frame.columns)[i - 1] for i in idx]


@pytest.mark.parametrize("serial", [False, True])
def test_the_table_box_takes_the_column_width_not_the_tables(app, serial):
    from workbench.ui.apps_more import ANALYSIS_HEADINGS
    app.serial_w.value = serial
    try:
        value = app.analysis_w.value
        style = _box_style(value)
        # no width of the table's own reaches the column: it scrolls in its box
        assert style.get("width") == "0" and style.get("min-width") == "100%", style
        assert style.get("max-width") == "100%"
        shown = app.analysis.rename(columns=ANALYSIS_HEADINGS)
        wide = _wide_columns(value, shown)
        assert set(wide) == {"S trend", "N trend", "exceedance note"}
        # the heading is outside the box, in the widget whose width the column sets
        assert value.index("Trends of the annual totals") < value.index("<table")
        # the unit control still redraws the same rules
        app.unit_w.value = "eq/ha/yr"
        assert _box_style(app.analysis_w.value) == style
        assert "eq/ha/yr per yr" in app.analysis_w.value
    finally:
        app.unit_w.value = "kg/ha/yr"
        app.serial_w.value = False


def test_a_table_without_wide_columns_is_as_before():
    """Other tables keep their box: a table in a box sized by its content (an HBox)
    must still give it its width."""
    from workbench.ui.controls import table_html
    frame = pd.DataFrame({"a": [1.0], "b": ["x"]})
    out = table_html(frame)
    assert "min-width" not in out and "width:0" not in out
    assert 'class="dataframe wb-table"' in out
    wide = table_html(frame, wide=("b", "not a column"))
    assert ".wb-table-2 td:nth-child(2) {min-width: 16em;}" in wide
    assert "width:0" not in wide
