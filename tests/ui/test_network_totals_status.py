"""The network overview's "status of the totals" is the budget's own status of the S
and N totals (docs/budget.md, "Status"): it showed exceedance.csv's status, whose rule
counts a partial total (a component without data) as flagged, so a partial N total read
"flagged (N without NO2)".  exceedance.csv keeps its rule (tests/analysis)."""
import pandas as pd

from workbench.ui.apps_analysis import network_analysis_table, totals_status
from workbench.ui.apps_more import ANALYSIS_HEADINGS


def _span(statuses, missing):
    return pd.DataFrame({"site": "mere", "period": "span", "receptor": "lake",
                         "pathway": "total", "species": "all", "element": ["S", "N"],
                         "status": statuses, "missing_components": missing})


def test_budget_words_not_the_exceedance_rule():
    assert totals_status(_span(["complete", "partial"], ["", "NO2"]), "lake") == \
        "S complete, N partial (no NO2)"
    # a total both flagged and lacking a component stays flagged, its lack named
    assert totals_status(_span(["flagged", "flagged"], ["", "NO2 HNO3"]), "lake") == \
        "S flagged, N flagged (no NO2, HNO3)"
    assert totals_status(_span(["complete", "complete"], ["", ""]), "lake") == "complete"
    assert totals_status(_span(["missing", "filled"], ["SO2 pSO4", ""]), "lake") == \
        "S missing, N filled"
    assert totals_status(_span(["complete", "partial"], ["", "NO2"]), "grass") == ""
    # S first whatever the table's order of the elements
    assert totals_status(_span(["complete", "partial"], ["", "NO2"]).iloc[::-1], "lake") == \
        "S complete, N partial (no NO2)"


def test_the_column_under_status_of_the_totals_is_the_budgets():
    parts = pd.DataFrame([{
        "site": "mere", "receptor": "lake", "S_n_years": float("nan"),
        "N_n_years": float("nan"), "ex_acidity_eq_ha_yr": 0.0,
        "ex_nutrient_n_eq_ha_yr": float("nan"), "exceedance_status": "flagged",
        "exceedance_note": "N total partial (without NO2)",
        "totals_status": "S complete, N partial (no NO2)"}])
    table = network_analysis_table({}, None, parts=parts)
    shown = table.rename(columns=ANALYSIS_HEADINGS)
    assert shown["status of the totals"].iloc[0] == "S complete, N partial (no NO2)"
    assert "flagged" not in " ".join(shown.columns)
    assert "flagged" not in shown.astype(str).to_numpy().ravel().tolist()
