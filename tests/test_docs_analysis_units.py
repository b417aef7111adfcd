"""Demo numbers of docs/methods_analysis.md, "Units end to end": the hand-worked
exceedance of the demo's ridge site, conifer forest, 2021 (budget.csv's N and S totals
in kg and eq, the region-3 factor k, the acidity exceedance, the N and S reductions and
ExnutN), recomputed on the smallest run the text names (the demo's ridge alone, 2021:
``write_demo_subset(folder, ("ridge",), 2021, 2021)`` of tests/ui/demo_subset.py, every
option at the demo scenario's value) with :func:`workbench.analysis.exceedance.
exceedance_table`, so that a change of the engine that moves one fails here until the
paragraph is re-measured. The reference is the engine itself (measured numbers; the
closed form is checked against shapely in tests/analysis/). The formula's numbers are
rebuilt from the engine's eq as the text writes them, rounding as written (Python's
format, common practice).
"""
from __future__ import annotations

import re
import warnings

import pytest

from doc_sections import DOCS

#: the ridge function (CLmaxS, CLminN, CLmaxN) and CLnutN of demo_data/sites.toml [eq/ha/yr]
CLF = (950.0, 357.0, 1420.0)
CLNUT = 714.0


@pytest.fixture(scope="module")
def ridge_2021(tmp_path_factory):
    from ui.demo_subset import study_and_args, write_demo_subset
    from workbench.analysis.exceedance import exceedance_table
    sc = write_demo_subset(tmp_path_factory.mktemp("ridge_2021"), ("ridge",), 2021, 2021)
    study, args = study_and_args(sc)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        res = study.run(*args)
    t = res.table
    kg = t[(t["site"] == "ridge") & (t["receptor"] == "conifer_forest")
           & (t["period"].astype(str) == "2021") & (t["pathway"] == "total")
           & (t["species"] == "all")].set_index("element")["flux_kg_ha_yr"]
    ex = exceedance_table(res, study.catalogue())
    row = ex[(ex["site"] == "ridge") & (ex["receptor"] == "conifer_forest")
             & (ex["period"].astype(str) == "2021")].iloc[0]
    return kg, row


def _paragraph() -> str:
    text = (DOCS / "methods_analysis.md").read_text(encoding="utf-8")
    a = text.index("**Units end to end.**")
    return re.sub(r"\s+", " ", text[a:text.index("**Columns of `exceedance.csv`.**", a)])


def test_the_hand_worked_ridge_2021(ridge_2021):
    kg, row = ridge_2021
    cs, c0, c1 = CLF
    n_eq, s_eq = float(row["n_dep_eq_ha_yr"]), float(row["s_dep_eq_ha_yr"])
    assert int(row["region"]) == 3
    # the engine's own exceedance is the closed form the text writes (as in
    # tests/analysis/test_exceedance_corners.py), so the text's k and Ex are the engine's
    k = (cs * n_eq + (c1 - c0) * s_eq - cs * c1) / (cs ** 2 + (c1 - c0) ** 2)
    assert float(row["ex_acidity_eq_ha_yr"]) == pytest.approx(k * (cs + c1 - c0), rel=1e-9)
    assert float(row["ex_nutrient_n_eq_ha_yr"]) == pytest.approx(n_eq - CLNUT, rel=1e-9)
    n, s = f"{n_eq:.2f}", f"{s_eq:.2f}"
    want = (f"N {kg['N']:.4f} kg = {n} eq, S {kg['S']:.5f} kg = {s} eq; the function "
            f"({cs:.0f}, {c0:.0f}, {c1:.0f}) is exceeded on its sloping part (region 3): "
            f"k = ({cs:.0f} × {n} + {c1 - c0:.0f} × {s} − {cs:.0f} × {c1:.0f}) / "
            f"({cs:.0f}² + {c1 - c0:.0f}²) = {k:.4f}, Ex = k ({cs:.0f} + {c1 - c0:.0f}) = "
            f"{float(row['ex_acidity_eq_ha_yr']):.1f} eq/ha/yr (N reduction k × {cs:.0f} = "
            f"{float(row['n_reduction_eq_ha_yr']):.1f}, S reduction k × {c1 - c0:.0f} = "
            f"{float(row['s_reduction_eq_ha_yr']):.1f}); ExnutN = {n} − {CLNUT:.0f} = "
            f"{float(row['ex_nutrient_n_eq_ha_yr']):.1f} eq/ha/yr.")
    assert want in _paragraph(), f"re-measure docs/methods_analysis.md:\n{want}"
