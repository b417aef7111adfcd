"""Demo numbers of docs/methods_analysis.md: the span row against the years (the demo's
farm, grass: the acidity exceedance of the mean deposition of 2016-2023, the largest
year's and the mean of the years' exceedances), recomputed with
:func:`workbench.analysis.exceedance.exceedance_table` on the demo's farm
(docs/make_uncertainty_figures.py's ``farm_run``), so that a change of the engine that
moves one fails here until the sentence is re-measured. The reference is the engine
itself (measured numbers; the exceedance function's checks are in tests/analysis/).
Rounding as written (Python's format, common practice).
"""
from __future__ import annotations

import re
from pathlib import Path

DOC = Path(__file__).resolve().parents[1] / "docs" / "methods_analysis.md"


def test_the_span_row_sentence(farm_span):
    from workbench.analysis.exceedance import exceedance_table
    study, res = farm_span
    ex = exceedance_table(res, study.catalogue())
    g = ex[(ex["site"] == "farm") & (ex["receptor"] == "grass")].set_index("period")
    years = g.drop(index="span")["ex_acidity_eq_ha_yr"].astype(float)
    worst = years.idxmax()
    text = re.sub(r"\s+", " ", DOC.read_text(encoding="utf-8"))
    want = (f"(the demo's farm, grass: {float(g.loc['span', 'ex_acidity_eq_ha_yr']):.0f} for "
            f"the mean deposition of {years.index[0]}-{years.index[-1]}, "
            f"{years.max():.0f} eq/ha/yr in {worst}; the mean of its years' exceedances is "
            f"{years.mean():.1f};")
    assert want in text, f"re-measure docs/methods_analysis.md:\n{want}"
