"""One mark rule for report.html's totals per period and its derived sums
(workbench.report_tables.status_marks).  Before, the two tables wrote a total that is
partial (a part without data) and fails completeness differently: the totals ``x``,
the derived sums ``x p``.  docs/budget.md ("Status"): the missing part is named beside
every status, so both now read ``x p``."""
import numpy as np
import pandas as pd

from workbench.report import _pivot_html
from workbench.report_derived import SHOWN, derived_table_html, mark

# status, passes, missing_components -> mark (the rule of docs/budget.md, "Status")
CASES = [("complete", True, "", ""), ("filled", True, "", " ~"),
         ("flagged", True, "", " f"), ("flagged", True, "NO2", " f p"),
         ("flagged", False, "", " x"), ("flagged", False, "NO2", " x p"),
         ("partial", True, "NO2", " p"), ("partial", False, "NO2", " x p"),
         ("missing", False, "NO2 NO3", "")]


def test_every_status_and_completeness_has_its_mark():
    from workbench.report_tables import status_marks
    st, ok, miss, want = (list(c) for c in zip(*CASES))
    assert list(status_marks(st, ok, miss)) == want
    # budget.csv read back: passes as text, blanks for no missing part
    assert list(status_marks(st, [str(p) for p in ok], [m or np.nan for m in miss])) == want


def _totals(status, passes, missing):
    return pd.DataFrame({"site": "a", "receptor": "moorland", "element": "N",
                         "period": "2023", "flux_kg_ha_yr": [7.5], "status": status,
                         "passes": passes, "missing_components": missing})


def _derived(status, passes, missing):
    row = {"site": "a", "receptor": "moorland", "period": "2023"}
    for k in SHOWN:
        row.update({k: 7.5, f"{k}_status": status, f"{k}_passes": passes,
                    f"{k}_missing_components": missing,
                    f"{k}_completeness_failure": "" if passes else "NO3: gauge record"})
    return pd.DataFrame([row])


def test_partial_failing_total_reads_the_same_in_both_tables():
    """A partial N total (no NO2) that fails completeness: ``7.50 x p`` in the totals'
    table (before: ``7.50 x``, the missing part unsaid) as in the derived sums'."""
    assert "<td>7.50 x p</td>" in _pivot_html(_totals("partial", False, "NO2"))
    frame = _derived("partial", False, "NO2")
    assert mark(frame, "oxidized_N").tolist() == [" x p"]
    assert derived_table_html(frame).count(" x p</td>") == len(SHOWN)   # the share: 8 %


def test_both_tables_agree_on_every_case():
    for st, ok, miss, want in CASES:
        value = "–" if st == "missing" else "7.50" + want
        if st != "missing":
            assert f"<td>{value}</td>" in _pivot_html(_totals(st, ok, miss)), (st, ok, miss)
        assert mark(_derived(st, ok, miss), "reduced_N").tolist() == [want], (st, ok, miss)
