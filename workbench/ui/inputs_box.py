"""What became of the input rows, in the apps: one line with a table to open.

``workbench check`` prints the ledger of every input row (read, accepted, flagged,
rejected, with reasons); the apps showed none of it, so a duplicated upload whose
repeats were dropped, or a -999 code masked in the air file, left the budget looking
as if nothing had happened.  This box states the counts and the reasons under the
caution of each app.  Reasons that name a line (``overlaps lines 12-14``) are counted
together (``lines n``); ``input_rows.csv`` of a run folder lists the lines of each reason.
"""
from __future__ import annotations

import html
import re
from pathlib import Path

import ipywidgets as widgets

from .controls import table_html

#: A line number inside a reason ("line 10", "lines 10-12"), counted together.
LINE_NUMBER = re.compile(r"\b(lines?) \d+(?:\s*[-–,]\s*\d+)*")


def input_rows_text(ledger) -> tuple[str, "pandas.DataFrame"]:
    """The one-line account of the input rows and the table of reasons.

    Parameters
    ----------
    ledger : workbench.io.Ledger
        The ledger of the study's inputs.

    Returns
    -------
    (str, pandas.DataFrame)
        ``"Input rows: 3,520 read, 1,760 accepted, 0 flagged, 1,760 rejected"`` [rows]
        and ``file, status, reason, rows, first lines`` with the line numbers of the
        reasons counted together (file by its name) and the first lines of each reason
        as the ledger gives them (``lines 442-881``).
    """
    summ = ledger.summary()
    n = {c: int(summ[c].sum()) if c in summ else 0
         for c in ("read", "accepted", "flagged", "rejected")}
    line = ("Input rows: " + ", ".join(f"{n[c]:,} {c}" for c in n))
    reasons = ledger.reasons()
    if len(reasons):
        reasons = reasons.assign(file=reasons["file"].map(lambda f: Path(str(f)).name),
                                 reason=reasons["reason"].map(
                                     lambda r: LINE_NUMBER.sub(r"\1 n", str(r))))
        agg = {"rows": ("rows", "sum")}
        if "lines" in reasons:      # the first lines of the reason (Ledger.reasons)
            agg["first lines"] = ("lines", lambda s: next((str(v) for v in s
                                                           if isinstance(v, str) and v), ""))
        reasons = (reasons.groupby(["file", "status", "reason"], sort=False).agg(**agg)
                   .reset_index().sort_values(["status", "rows"], ascending=[False, False]))
    return line, reasons


def input_rows_box(ledger) -> widgets.HTML:
    """The account of :func:`input_rows_text` as a line that opens on its reasons."""
    line, reasons = input_rows_text(ledger)
    tail = " (every row accounted for; the reasons below)" if len(reasons) else ""
    w = widgets.HTML(
        f"<details style='font-size:90%;margin:.2em 0'><summary>{html.escape(line)}{tail}"
        f"</summary>{table_html(reasons, 'no row flagged or rejected')}"
        "<p><i>input_rows.csv of an exported run folder lists every row.</i></p></details>")
    w.add_class("wb-input-rows")
    return w
