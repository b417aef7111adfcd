"""A total both flagged and lacking a component (flagged wins over partial in the status
of a sum, docs/budget.md "Status") names the missing component wherever its status is
written in words: the network report's table of sites, the site budget's change line,
the sensitivity sweep's headings and legend.  Before, these read "flagged" alone, while
report.html's totals table ("f p") and the ranking (apart) already said it."""
from types import SimpleNamespace

import numpy as np
import pandas as pd

from workbench.report_network import site_summary
from workbench.ui.figures import sensitivity_curves, status_note
from workbench.ui.summaries import change_line, mean_totals


def _span():
    return pd.DataFrame({"site": ["a", "b", "c"], "receptor": "moorland", "element": "N",
                         "flux_kg_ha_yr": [10.0, 12.0, 9.0],
                         "status": ["complete", "flagged", "partial"],
                         "missing_components": ["", "NO2", "NH3 NO2"],
                         "years_used": "2021 2022"})


def test_network_report_table_names_the_missing_component_of_a_flagged_total():
    cat = [SimpleNamespace(id=s, name="", land_use="moorland") for s in "abc"]
    t = site_summary(_span(), cat, 2).set_index("site")
    assert t.loc["a", "N status"] == "complete"
    assert t.loc["b", "N status"] == "flagged (no NO2)"        # read "flagged" before
    assert t.loc["c", "N status"] == "partial (no NH3, NO2)"


def test_change_line_names_the_missing_component_of_a_flagged_total():
    after = pd.DataFrame({"value": [9.0, 7.5], "status": ["flagged", "complete"],
                          "missing": ["NO2", ""]}, index=["N_total", "S_total"])
    line = change_line(None, after)
    assert line == "S total 7.5 kg/ha/yr; N total 9.0 kg/ha/yr (flagged, no NO2)"


def test_sweep_headings_and_legend_name_the_missing_component():
    assert status_note(["flagged", "flagged"], ["NO2", "NO2"]) == " (flagged, no NO2)"
    assert status_note(["complete"], [""]) == ""
    assert status_note(["missing"], ["SO2 pSO4"]) == " (missing)"
    rows = []
    for el in ("S", "N"):
        for pw in ("wet", "dry", "total"):
            rows += [{"value": v, "total": f"{el}_{pw}", "rate": 1.0 + v,
                      "status": "flagged" if el == "N" and pw != "wet" else "complete",
                      "missing": "NO2" if el == "N" and pw != "wet" else ""} for v in (1, 2)]
    fig = sensitivity_curves(pd.DataFrame(rows), "x", 1)
    names = {tr.name for tr in fig.data}
    assert "N total (flagged, no NO2)" in names and "S total" in names


def test_mean_totals_carries_the_missing_components(two_sites_2021):
    """On the demo mere (no NO2 measured) the N totals lack NO2."""
    import warnings

    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        s = Session.open(two_sites_2021)
        res = s.run(s.baseline, "mere", 2021, 2021, "year")
    m = mean_totals(res.years, "mere", "wetland")
    assert m.loc["N_total", "missing"] == "NO2" and m.loc["S_total", "missing"] == ""
    assert np.isfinite(m.loc["N_total", "value"])
