"""The span rows of budget.csv carry the notes of the years they average (they had none:
a reader of the span row alone saw a ``flagged`` status and no reason)."""
import pandas as pd
import pytest

from workbench.tables import span_table

GAP_1 = "1 week without a usable precipitation sample (sample coverage 98.1 % of the period)"
GAP_15 = "1.5 weeks without a usable precipitation sample (sample coverage 97.1 % of the period)"
KEPT = "1 flagged sample kept (0.7 % of precipitation)"
NOT_MEASURED = "not measured at the site (no valid concentration)"


def _year_rows(notes_wet, notes_no2, total_passes):
    """Yearly rows of one site and receptor (N): wet NO3, dry NO2, the N total."""
    rows = []
    for i, year in enumerate(sorted(notes_wet)):
        start = pd.Timestamp(f"{year}-01-01")
        common = dict(site="ridge", receptor="moorland", element="N", period_start=start,
                      period_end=pd.Timestamp(f"{year + 1}-01-01"), completeness=1.0,
                      flagged_components="", missing_components="")
        wet_status = "flagged" if KEPT in notes_wet[year] else "complete"
        rows.append({**common, "pathway": "wet", "species": "NO3", "flux_kg_ha_yr": 3.0 + i,
                     "flux_eq_ha_yr": 200.0, "status": wet_status, "note": notes_wet[year],
                     "passes": True})
        rows.append({**common, "pathway": "dry", "species": "NO2", "flux_kg_ha_yr": float("nan"),
                     "flux_eq_ha_yr": float("nan"), "status": "missing",
                     "note": notes_no2[year], "passes": False})
        rows.append({**common, "pathway": "total", "species": "all", "flux_kg_ha_yr": 3.0 + i,
                     "flux_eq_ha_yr": 200.0, "status": "flagged" if wet_status == "flagged"
                     else "partial", "note": "", "missing_components": "NO2",
                     "passes": total_passes[year]})
    return pd.DataFrame(rows)


def test_span_row_says_which_years_carry_which_note():
    wet = {2017: GAP_1, 2018: "", 2019: GAP_1, 2020: KEPT + "; " + GAP_15, 2021: "",
           2022: GAP_1}
    no2 = {y: NOT_MEASURED for y in wet}
    passes = {y: y != 2022 for y in wet}            # 2022 excluded: its note is not the span's
    span = span_table(_year_rows(wet, no2, passes)).set_index("species")
    assert span.loc["NO3", "status"] == "flagged"
    # the year left out says so first, then the notes of the years used (2022's own
    # note is not the span's)
    left = "2022 left out: fails completeness; "
    assert span.loc["NO3", "note"] == (f"{left}2017 2019: {GAP_1}; 2020: {KEPT}; "
                                       f"2020: {GAP_15}")
    assert span.loc["NO2", "note"] == f"{left}every year used: {NOT_MEASURED}"
    assert span.loc["all", "note"] == left[:-2]    # no note of a year used on the sums
    assert span.loc["NO3", "years_used"] == "2017 2018 2019 2020 2021"


def test_span_row_note_is_empty_when_no_year_has_one():
    wet = {2019: "", 2020: ""}
    span = span_table(_year_rows(wet, {y: "" for y in wet}, {y: True for y in wet}))
    assert (span["note"] == "").all()


@pytest.fixture(scope="module")
def ridge_run(tmp_path_factory):
    from ui.demo_subset import write_demo_subset

    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    path = write_demo_subset(tmp_path_factory.mktemp("span"), ("ridge",), 2019, 2020)
    return Study.from_scenario(load_scenario(path)).run()


def test_demo_span_rows_summarise_the_yearly_notes(ridge_run):
    """On the demo ridge (a week without a usable precipitation sample in 2019, one kept
    flagged sample in April 2020): each span row's note names exactly the yearly notes of
    its years used, each with its years."""
    t = ridge_run.table
    keys = ["site", "receptor", "element", "pathway", "species"]
    span = t[t["period"] == "span"].set_index(keys)
    years = t[t["period"] != "span"]
    assert span["note"].astype(str).str.contains("2019: 1 week without a usable precipitation sample").any()
    assert span["note"].astype(str).str.contains("2020: 1 flagged sample kept").any()
    for key, g in years.groupby(keys):
        if key not in span.index:             # no year passes: no span row
            continue
        used = set(str(span.loc[key, "years_used"]).split())
        parts = {p for n in g[g["period"].isin(used)]["note"].fillna("") for p in n.split("; ")
                 if p}
        said = str(span.loc[key, "note"]) if str(span.loc[key, "note"]) != "nan" else ""
        for p in parts:
            assert p in said, (key, p, said)
        if not parts:
            assert said == "", (key, said)


def test_span_row_of_wet_sulfate_says_its_basis():
    """A span mean of wet S over years of non-sea-salt SO4 and one year that fell back
    to total SO4 says ``total`` (sea salt included in part of it); over nss years only,
    ``non-sea-salt``; other rows stay empty (tables.SULFATE_BASIS_WORDS)."""
    rows = []
    for year, basis in ((2017, "non-sea-salt"), (2018, "total"), (2019, "non-sea-salt")):
        common = dict(site="ridge", receptor="moorland", element="S",
                      period_start=pd.Timestamp(f"{year}-01-01"),
                      period_end=pd.Timestamp(f"{year + 1}-01-01"), completeness=1.0,
                      flagged_components="", missing_components="", note="",
                      flux_kg_ha_yr=2.0, flux_eq_ha_yr=120.0, status="complete", passes=True)
        rows.append({**common, "pathway": "wet", "species": "SO4", "sulfate_basis": basis})
        rows.append({**common, "pathway": "total", "species": "all", "sulfate_basis": ""})
    t = pd.DataFrame(rows)
    span = span_table(t).set_index("pathway")
    assert span.loc["wet", "sulfate_basis"] == "total"
    assert span.loc["total", "sulfate_basis"] == ""
    t.loc[t["sulfate_basis"] == "total", "sulfate_basis"] = "non-sea-salt"
    assert span_table(t).set_index("pathway").loc["wet", "sulfate_basis"] == "non-sea-salt"
