"""The critical-loads explorer on a partial S total beside a complete N total.

Nutrient-N exceedance rests on the N total alone (ExnutN = max(N - CLnutN, 0), ICP
Modelling and Mapping Manual); the acidity exceedance on S and N.  With SO2 not measured
the S total is partial (a lower bound), so the acidity exceedance is "at least" or not
determined, while the nutrient-N exceedance is a plain figure: it read "at least ..."
(and its probability "at least") whenever either total was partial (2026-12 audit;
analysis.exceedance.exceedance_from_totals follows the same rule).
"""
import warnings

import pytest

from ui.demo_subset import write_demo_subset


@pytest.fixture(scope="module")
def no_so2(tmp_path_factory):
    path = write_demo_subset(tmp_path_factory.mktemp("no_so2"), ("ridge",), 2021, 2021)
    air = path.parent / "air.csv"
    lines = air.read_text(encoding="utf-8").splitlines()
    out, col = [], None
    for ln in lines:
        if ln.startswith("#") or not ln.strip():
            out.append(ln)
            continue
        cells = ln.split(",")
        if col is None:
            col = cells.index("SO2 [ug/m3]")
        out.append(",".join(cells[:col] + cells[col + 1:]))
    air.write_text("\n".join(out) + "\n", encoding="utf-8")
    return path


def test_partial_s_bounds_acidity_only(no_so2):
    from workbench.ui.apps_analysis import CriticalLoadsExplorer, lower_bound
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = CriticalLoadsExplorer(Session.open(no_so2), site="ridge")
    acid, nut = app.exceedance_words.split("; ")
    assert "at least" in acid or "not determined" in acid, acid
    assert nut.startswith("nutrient-N exceedance ") and "at least" not in nut, nut
    assert "not determined" not in nut, nut
    assert "cuts needed may be larger" in app.statement            # acidity rests on S
    sel = (app.site_w.value, app.receptor_w.value, app.year_w.value)
    assert lower_bound(app.result.years, *sel)                          # S partial
    assert not lower_bound(app.result.years, *sel, elements=("N",))     # N complete
