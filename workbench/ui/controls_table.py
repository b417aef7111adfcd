"""Tables shown by the apps (HTML that scrolls past a height) and the caution box.

Moved from :mod:`workbench.ui.controls` (which re-exports every name here).
"""
from __future__ import annotations

import html

import ipywidgets as widgets
import numpy as np
import pandas as pd

from ..budget import OMISSIONS
from ..report import CAUTION


#: Most rows a table shows before a reader asks for the rest: a longer table shows its
#: first rows whole and a toggle under them (``<details>``) that shows every row, also
#: whole.  Tables of more rows stood in a 320 px scroll box; a scroll came to rest with
#: a row's top at the box's top, but the box's foot cut the row there in two (35 rows,
#: headless chromium), as it cut the trend table of the four-site demo network (rows of
#: up to ~180 characters wrapped in a 16em column) mid-sentence before that table was
#: shown whole.  A box of whole rows cannot be had from a fixed height: rows wrap to
#: heights the HTML does not know.
TABLE_ROWS_WHOLE = 12


#: Headings of a table over their cells (left, like the cells) with room between columns.
#: (a heading's lines at the text's own spacing, at the foot of the heading row: in the
#: HTML widget's line height of 28 px a heading wrapped in a narrow column, "share / of /
#: the / cuts / [%]", read as five rows of a table, seen in chromium at 1,000 px)
TABLE_CSS = ("<style>.wb-table th {text-align: left !important; padding-right: 1em; "
             "line-height: 1.3; vertical-align: bottom;} "
             ".wb-table td {padding-right: 1em;}</style>")


def table_number(v: float) -> str:
    """A number of a table as a reader takes it in: three significant digits, and whole
    numbers with thousands separators from 1,000 up (``1,441``, never ``1.44e+03``)."""
    if not np.isfinite(v):
        return "–"
    return f"{v:,.0f}" if abs(v) >= 1000 else f"{v:.3g}"


#: Least width of a column of long sentences in a table [CSS] (:func:`table_html`'s
#: ``wide``): about 30 characters a line at the tables' 85 % font.
WIDE_COLUMN = "16em"


def table_html(frame: pd.DataFrame, empty="none", wide=(), fill=False) -> str:
    """An HTML table of a DataFrame (text escaped; headings over their columns,
    left-aligned like the cells; numbers by :func:`table_number`): every row whole, the
    rows past :data:`TABLE_ROWS_WHOLE` shown when the reader opens the toggle under
    the first ones.

    Parameters
    ----------
    frame : DataFrame
        The rows shown (all columns, without the index).
    empty : str
        Said in place of a table when there is no row.
    wide : sequence of str
        Columns of long sentences that get at least :data:`WIDE_COLUMN` of width: the
        table then scrolls sideways in its box instead of squeezing them into a column
        of a few words a line (a network trend of 180 characters in a 60 px column made
        one row taller than the box, which showed a slice of it).
    fill : bool
        The box takes the width of the column it is in and nothing from the table: a
        table wider than the column scrolls inside it.  Without it the table's least
        width widens the HTML widget holding it past an app's column (beside an open
        file browser the trend table of the network overview cut its own heading at the
        right).  Only for a widget whose width the column sets (a VBox child).
    """
    if frame is None or frame.empty:
        return f"<p><i>{html.escape(empty)}</i></p>"
    classes = "wb-table"
    css = TABLE_CSS
    cols = [str(c) for c in frame.columns]
    wide_at = [cols.index(str(c)) + 1 for c in wide if str(c) in cols]
    if wide_at:
        # a class of this table's own: the style element applies to the whole page
        own = "wb-table-" + "-".join(map(str, wide_at))
        classes += f" {own}"
        css += ("<style>" + ", ".join(f".{own} td:nth-child({i})" for i in wide_at)
                + f" {{min-width: {WIDE_COLUMN};}}</style>")
    body = frame.to_html(index=False, border=0, escape=True, na_rep="–", justify="left",
                         float_format=table_number, classes=classes)
    # JupyterLab's stylesheet right-aligns a th: the headings stood off their cells
    body = css + body
    # width 0 with a least width of 100 %: no width of the table's own reaches the
    # column (a percentage least width counts for nothing while the column is sized)
    size = "width:0;min-width:100%;" if fill else ""
    n = len(frame)
    if n <= TABLE_ROWS_WHOLE:
        # as tall as its rows: every row whole, nothing behind a scroll (sideways only)
        return (f"<div style='max-width:100%;{size}overflow:auto;"
                f"font-size:85%'>{body}</div>")
    # more rows: the first TABLE_ROWS_WHOLE, and a toggle under them showing every row;
    # whole rows in both states (no height limit anywhere, nothing cut).  The rows past
    # the first are hidden by a rule of this box while its toggle is closed (CSS
    # Selectors 4 :has; a browser without it shows every row, whole).
    more = n - TABLE_ROWS_WHOLE
    rule = ("<style>.wb-rows-box:not(:has(> details[open])) > div > table > tbody > "
            f"tr:nth-child(n+{TABLE_ROWS_WHOLE + 1}) {{display: none;}} "
            ".wb-rows-box > details[open] .wb-rows-closed, "
            ".wb-rows-box > details:not([open]) .wb-rows-open {display: none;}</style>")
    toggle = ("<details class='wb-rows-toggle' style='font-size:85%;margin:.2em 0'>"
              f"<summary><i><span class='wb-rows-closed'>first {TABLE_ROWS_WHOLE} of {n} "
              f"rows shown; open for the other {more}</span><span class='wb-rows-open'>"
              f"all {n} rows shown; close for the first {TABLE_ROWS_WHOLE}</span></i>"
              "</summary></details>")
    return (f"<div class='wb-rows-box'>{rule}<div style='max-width:100%;{size}"
            f"overflow:auto;font-size:85%'>{body}</div>{toggle}</div>")


def caution_box() -> widgets.HTML:
    """The cautions of the README and the report, and what the budget leaves out; it
    also carries the style of a figure being updated (every app with figures shows
    this box: :data:`workbench.ui.figure_open.UPDATING_CSS`)."""
    from .figure_open import UPDATING_CSS
    left_out = "".join(f"<li><b>{html.escape(a)}</b>: {html.escape(b)}</li>" for a, b in OMISSIONS)
    return widgets.HTML(
        UPDATING_CSS
        + "<div style='background:#fff6e0;border-left:4px solid #E69F00;padding:.4em .8em;"
        f"font-size:90%'><b>Caution.</b> {html.escape(CAUTION)}"
        f"<details><summary>What the budget leaves out</summary><ul>{left_out}</ul></details>"
        "</div>")
