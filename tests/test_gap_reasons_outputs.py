"""Each output a user reads says which part of a number is missing and why, per period
(docs/budget.md, "Gaps in what a user reads"): the span rows of budget.csv say why a
year is left out, exceedance.csv names the filled or flagged components of a total,
trends.csv names the years it leaves out, and the met note of a site dates a stretch
of a week or more without a variable's value.

Each was found on a copy of the demo with planted gaps (a whole year of one site
missing, six weeks without wind speed at another): before, the span row listed the
year in ``years_excluded`` with no word of why, exceedance.csv said "S total filled",
trends.csv "years left out: 1 flagged", and the met note "wind speed has a value in
69120" with no date.
"""
import types

import numpy as np
import pandas as pd

from workbench.analysis.exceedance import exceedance_from_totals
from workbench.analysis.trends_notes import _left_out_notes
from workbench.io.metgaps import value_counts
from workbench.tables import span_table

GAUGE_WORDS = "gauge record below minimum (1.8 % of the period; minimum 90 %)"
GAUGE = "SO4: " + GAUGE_WORDS


def _years(failure, status, extra=()):
    """Yearly S rows of one site (wet SO4 and the S total) for 2019-2021; 2020 (`status`
    of its total) fails completeness with `failure` (the total's words; the component's
    are without the species, as in budget.csv).  `extra`: (pathway, species,
    completeness_failure, note) of further components failing in 2020."""
    rows = []
    for year in (2019, 2020, 2021):
        bad = year == 2020
        common = dict(site="fell", receptor="grass", element="S",
                      period_start=pd.Timestamp(f"{year}-01-01"),
                      period_end=pd.Timestamp(f"{year + 1}-01-01"), completeness=1.0,
                      flagged_components="", missing_components="", note="")
        for pathway, species in (("wet", "SO4"), ("total", "all")):
            rows.append({**common, "pathway": pathway, "species": species,
                         "flux_kg_ha_yr": 0.3 if bad else 8.0, "flux_eq_ha_yr": 500.0,
                         "status": status if bad else "complete", "passes": not bad,
                         "completeness_failure": (failure if pathway == "total" else
                                                  failure.split(": ", 1)[-1]) if bad else ""})
        for pathway, species, why, note in (extra if bad else ()):
            rows.append({**common, "pathway": pathway, "species": species, "note": note,
                         "flux_kg_ha_yr": 0.1, "flux_eq_ha_yr": 9.0, "status": "flagged",
                         "passes": False, "completeness_failure": why})
    return pd.DataFrame(rows)


def test_span_row_says_why_a_year_is_left_out():
    span = span_table(_years(GAUGE, "flagged")).set_index("species")
    assert span.loc["all", "years_excluded"] == "2020"
    assert span.loc["all", "note"] == f"2020 left out: fails completeness ({GAUGE})"
    assert span.loc["SO4", "note"].startswith("2020 left out: ")
    # a year whose total is missing: said so
    span = span_table(_years("", "missing")).set_index("species")
    assert span.loc["all", "note"] == "2020 left out: missing"


def test_span_row_names_every_criterion_the_year_fails():
    """The year 2021 of a site removed from every file (docs/budget.md): one weekly
    sample reaches into it, so its wet SO4 fails the gauge record and the sample
    coverage, and its dry SO2 and pSO4 the air coverage in a season without
    concentrations.  Before, the span row named the total's first criterion alone
    ("SO4: gauge record below minimum (...)"), not the 1.8 % of air coverage."""
    cover = "sample coverage below minimum (1.8 % of the period; minimum 90 %)"
    air = "air coverage below minimum (1.8 % of the period; minimum 75 %)"
    dry_note = ("a season without concentrations; met gaps in the period (of its 8760 h): "
                "relative humidity without a value in 744 h; 51.2 weeks without a usable "
                "air sample (air coverage 1.8 % of the period)")
    extra = [("dry", "SO2", air, dry_note), ("dry", "pSO4", air, dry_note)]
    rows = _years(GAUGE, "flagged", extra)
    wet = (rows["pathway"] == "wet") & (rows["completeness_failure"] != "")
    rows.loc[wet, "note"] = (GAUGE_WORDS + "; " + cover
                             + ", not covered: 8603 h (98.2 %) without any sample")
    span = span_table(rows).set_index("species")
    assert span.loc["all", "years_excluded"] == "2020"
    assert span.loc["all", "note"] == (
        f"2020 left out: fails completeness (SO4: {GAUGE_WORDS}, {cover}; SO2 pSO4: "
        f"{air}, a season without concentrations)")
    # a dry component failing its flux hours and its air coverage (two shares, each
    # with its minimum), and the wet ion's share of the rain: all named
    flux = "hours with a known flux below minimum (40.0 % of the period; minimum 75 %)"
    ion = "SO4 valid for 61.0 % of the precipitation only (minimum 75 %)"
    rows = _years("SO4: " + ion, "flagged", [("dry", "SO2", flux, "")])
    span = span_table(rows).set_index("species")
    assert span.loc["all", "note"] == (
        f"2020 left out: fails completeness (SO4: {ion}; SO2: {flux})")


def _catalogue(loads=dict(cl_max_s=950.0, cl_min_n=357.0, cl_max_n=1420.0, cl_nut_n=714.0)):
    site = types.SimpleNamespace(
        id="alpha", land_use="grass", surfaces=("grass",), receptor_critical_loads={},
        critical_loads=loads, critical_loads_for=lambda r: dict(loads))
    return [site]


def test_exceedance_names_the_components_of_a_filled_or_flagged_total():
    """The budget rows of a year whose dry Vd was filled (six weeks without wind speed)
    and whose wet SO4 kept a flagged sample: the exceedance note names them."""
    from workbench.analysis.exceedance import _component_statuses
    keys = ["site", "receptor", "period"]
    rows = pd.DataFrame([
        dict(site="alpha", receptor="grass", period="2019", element=el, pathway=pw,
             species=sp, status=st)
        for el, pw, sp, st in (("S", "wet", "SO4", "flagged"), ("S", "dry", "SO2", "filled"),
                               ("S", "dry", "pSO4", "filled"), ("S", "dry", "all", "filled"),
                               ("N", "wet", "NO3", "complete"), ("N", "dry", "HNO3", "filled"))])
    words = _component_statuses(rows, keys)
    assert words["S"].loc[("alpha", "grass", "2019")] == "flagged: SO4; filled: SO2 pSO4"
    assert words["N"].loc[("alpha", "grass", "2019")] == "filled: HNO3"
    t = pd.DataFrame([{"site": "alpha", "receptor": "grass", "period": "2019",
                       "s_dep_eq_ha_yr": 600.0, "n_dep_eq_ha_yr": 900.0,
                       "s_status": "flagged", "n_status": "filled", "s_missing": "",
                       "n_missing": "", "s_components": words["S"].iloc[0],
                       "n_components": words["N"].iloc[0]}])
    note = exceedance_from_totals(t, _catalogue())["note"].iloc[0]
    assert note.startswith("S total flagged (flagged: SO4; filled: SO2 pSO4); "
                           "N total filled (filled: HNO3)"), note


def test_trend_note_names_the_years_left_out():
    code = np.array([0, 0, 0, 1])
    status = np.array(["flagged", "partial", "flagged", "missing"], object)
    year = np.array([2021, 2016, 2019, 2018])
    notes = _left_out_notes(code, status, 2, year)
    assert notes == ["years left out: 2 flagged (2019 2021), 1 partial (2016)",
                     "years left out: 1 missing (2018)"]


def test_met_note_dates_a_week_without_a_value():
    times = (np.datetime64("2019-01-01T01:00") + np.arange(2000).astype("timedelta64[h]"))
    wind = np.ones((1, 2000))
    wind[0, 1000:2000 - 500] = np.nan            # 500 h from 2019-02-11T17:00
    wind[0, 10:20] = np.nan                      # 10 h: counted, not dated
    words = value_counts({"wind_speed": wind}, np.ones(2000, bool), 0, times)
    assert words == ("of its 2000 hours with a row, wind speed has a value in 1490 (none "
                     "for 500 h from 2019-02-11T17:00 UTC)")
    # without the time axis: the count alone, as before
    assert value_counts({"wind_speed": wind}, np.ones(2000, bool), 0).endswith("in 1490")


def test_coverage_table_names_the_lowest_species_and_the_met_gaps():
    """report.html's "Sampling coverage" listed "92%" for the air of a site-year whose
    NH3 was blank for a month (the lowest species unnamed) and "89%" for the Vd of a
    year with six weeks without wind speed (no word of why)."""
    from workbench.report_coverage import coverage_gaps, coverage_section
    gaps = "met gaps in the period (of its 8760 h): wind speed without a value in 1008 h"
    t = pd.DataFrame({
        "site": ["ridge"] * 4 + ["fell"] * 2,
        "period": ["2019", "2019", "2020", "2020", "2019", "2019"],
        "pathway": ["dry"] * 6,
        "species": ["SO2", "NH3", "SO2", "NH3", "SO2", "NH3"],
        "air_coverage": [1.0, 1.0, 1.0, 0.923, 1.0, 1.0],
        "vd_coverage": [0.89, 0.89, 1.0, 1.0, 1.0, 1.0],
        "note": [gaps, gaps, "", "4 weeks without a usable air sample", "", ""]})
    assert coverage_gaps(t)["site"].tolist() == ["ridge", "ridge"]
    html = " ".join(coverage_section(t, lambda f: f.to_html(index=False)))
    assert "<td>89% (wind speed without a value in 1008 h)</td>" in html
    assert "<td>92% (NH3)</td>" in html
    assert "<td>100%</td>" in html              # a full coverage is not explained


def test_coverage_table_names_no_species_when_every_species_is_as_low():
    """A filter pack out of service lowers every species alike: no species is named
    (the lowest by order, "HNO3", was named at first)."""
    from workbench.report_coverage import coverage_gaps, coverage_why
    t = pd.DataFrame({"site": ["a"] * 3, "period": ["2017"] * 3, "pathway": ["dry"] * 3,
                      "species": ["SO2", "HNO3", "NH3"], "air_coverage": [0.81] * 3,
                      "vd_coverage": [1.0] * 3, "note": [""] * 3})
    assert coverage_why(t, coverage_gaps(t))["air_species"].tolist() == [""]
