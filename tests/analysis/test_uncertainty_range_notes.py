"""What a 5-95 % range covers, said where a user reads it (budget.csv, summary.csv,
report.html, the site explorer's bars: the last in test_uncertainty.py).

A total lacking components (status partial) is drawn from its measured components
only.  The missing ones add a deposition >= 0, so the total T >= the measured part M
in every draw and each quantile of T is at least that of M (Q_T(q) >= Q_M(q) for
T >= M: common practice, order of quantiles): the range's low end stays a lower
bound, its 95 % is no upper bound.  The outputs gave such a total a 5-95 % range like
any other, with nothing beside the numbers to say so.  The tiny invented site
(tiny_site.py) measures no pNO3, pNH4, NH3 or NO2: its N dry and N total are partial,
its S totals complete.
"""
import numpy as np
import pandas as pd
import pytest


@pytest.fixture(scope="module")
def run(tiny, tmp_path_factory):
    from workbench.cli import run_scenario
    sc = tiny[0]
    assert sc.options["uncertainty"].draws > 0
    written, _, _ = run_scenario(sc.path, tmp_path_factory.mktemp("notes") / "run", quiet=True)
    return written


def test_budget_csv_says_a_partial_total_has_the_range_of_its_measured_part(run):
    b = pd.read_csv(run["budget.csv"])
    assert "range_note" in b
    tot = b[b["species"] == "all"].set_index(["element", "pathway"])
    for path in ("dry", "total"):
        note = tot.loc[("N", path), "range_note"]
        assert tot.loc[("N", path), "status"] == "partial"
        assert "measured components only" in note and "no upper bound" in note
        for sp in ("pNO3", "pNH4", "NH3", "NO2"):
            assert sp in note
    for path in ("wet", "dry", "total"):                    # complete: nothing to say
        assert tot.loc[("S", path), "status"] == "complete"
        assert pd.isna(tot.loc[("S", path), "range_note"])
    assert pd.isna(tot.loc[("N", "wet"), "range_note"])
    # a component without data has no range, and so no note
    none = b[(b["species"] == "NO2") & (b["pathway"] == "dry")]
    assert none["flux_kg_ha_p95"].isna().all() and none["range_note"].isna().all()


def test_summary_csv_names_the_sums_whose_range_is_partial(run):
    s = pd.read_csv(run["summary.csv"])
    note = s.loc[0, "range_note"]
    assert s.loc[0, "N_total_status"] == "partial" and s.loc[0, "S_total_status"] == "complete"
    for name in ("N_dry", "N_total", "oxidized_N", "reduced_N", "potential_acidity"):
        assert name in note
    assert "S_total" not in note and "S_dry" not in note and "N_wet" not in note
    assert "no upper bound" in note


def test_report_says_what_the_ranges_leave_out(run):
    text = run["report.html"].read_text(encoding="utf-8")
    for words in ("difference between the gas schemes", "coverage is short",
                  "flagged samples kept", "gauge depths filled", "no upper bound",
                  "the range covers",
                  # the systematic factors repeat every year; a lab bias is not drawn
                  "does not narrow with its years", "calibration bias",
                  "the same in every year"):
        assert words in text, words


def test_range_note_of_arrays_and_of_nothing_missing():
    from workbench.analysis.quantile_tables import range_note
    notes = range_note(np.array(["NO2", "", np.nan, None, " NH3 pNH4 "], dtype=object))
    assert "not measured: NO2)" in notes[0] and "not measured: NH3 pNH4)" in notes[4]
    assert list(notes[1:4]) == ["", "", ""]
    assert range_note("") == "" and range_note(np.nan) == ""


def test_units_of_the_quantile_columns_by_hand(run):
    """budget.csv's quantile columns in the units their names say, by hand from the
    mmol/m2 column: 1 mmol m-2 of an element of molar mass M g/mol = M mg m-2 =
    M / 100 kg/ha (S 32.06, N 14.007, IUPAC atomic weights from memory); eq/ha =
    mmol m-2 x 10 x eq per mol (S 2, N 1: common practice); a yearly rate = the
    period's value x the period's annual factor (summary.csv's, 8760 h over the hours
    of February 2021 here, computed by hand); summary.csv's totals [kg/ha per period]
    are budget.csv's."""
    b = pd.read_csv(run["budget.csv"])
    s = pd.read_csv(run["summary.csv"])
    rows = b[b["period"] != "span"].dropna(subset=["flux_mmol_m2_p50"])
    molar = rows["element"].map({"S": 32.06, "N": 14.007})
    eq = rows["element"].map({"S": 2.0, "N": 1.0})
    factor = 8760.0 / (28 * 24)
    assert s.loc[0, "annual_factor"] == pytest.approx(factor, rel=1e-8)   # CSV digits
    for q in ("_p05", "_p50", "_p95"):
        mmol = rows["flux_mmol_m2" + q]
        np.testing.assert_allclose(rows["flux_kg_ha" + q], mmol * molar / 100, rtol=1e-8)
        np.testing.assert_allclose(rows["flux_eq_ha" + q], mmol * 10 * eq, rtol=1e-8)
        np.testing.assert_allclose(rows["flux_kg_ha_yr" + q], rows["flux_kg_ha" + q] * factor,
                                   rtol=1e-8)
        for e in ("S", "N"):
            tot = rows[(rows["element"] == e) & (rows["pathway"] == "total")]
            assert s.loc[0, f"{e}_total_kg_ha{q}"] == pytest.approx(
                tot["flux_kg_ha" + q].iloc[0], rel=1e-8)


def test_summary_csv_has_the_range_of_the_yearly_rates(run):
    """summary.csv's rate columns S_total_kg_ha_yr and N_total_kg_ha_yr have their 5-95 %
    range too: the amount's quantiles times the period's annual factor (8760 h over the
    672 h of February 2021, by hand), as the rate is the amount times it (a quantile
    of c X is c times that of X for c > 0: common practice), and budget.csv's
    flux_kg_ha_yr quantiles of the same total; each beside its value.  Before, summary.csv
    carried the quantiles of the amounts only: at a monthly resolution the rate column
    stood without its range, 13 times the amount's."""
    b = pd.read_csv(run["budget.csv"])
    s = pd.read_csv(run["summary.csv"])
    factor = 8760.0 / (28 * 24)
    cols = list(s.columns)
    for e in ("S", "N"):
        rate = f"{e}_total_kg_ha_yr"
        assert cols[cols.index(rate) + 1:cols.index(rate) + 4] == [
            rate + q for q in ("_p05", "_p50", "_p95")]
        tot = b[(b["period"] != "span") & (b["element"] == e) & (b["pathway"] == "total")
                & (b["species"] == "all")]
        for q in ("_p05", "_p50", "_p95"):
            assert s.loc[0, rate + q] == pytest.approx(s.loc[0, f"{e}_total_kg_ha{q}"] * factor,
                                                       rel=1e-8)
            assert s.loc[0, rate + q] == pytest.approx(tot["flux_kg_ha_yr" + q].iloc[0],
                                                       rel=1e-8)
        assert s.loc[0, rate + "_p05"] <= s.loc[0, rate + "_p50"] <= s.loc[0, rate + "_p95"]


def test_report_names_how_the_systematic_factors_were_drawn(run, tiny):
    """The report says under the ranges how the systematic factors were drawn, beside
    the words on what they cover: systematic_errors and the options of the laboratory
    biases and of the land-use class part of the Vd (the report gave the first only in
    its words on spans, the others did not exist)."""
    import html
    text = run["report.html"].read_text(encoding="utf-8")
    opt = tiny[0].options["uncertainty"]
    for words in (f'systematic_errors = "{opt.systematic_errors}"',
                  f"lab_bias_precip_rel_sd = {opt.lab_bias_precip_rel_sd:g}",
                  f"lab_bias_air_rel_sd = {opt.lab_bias_air_rel_sd:g}",
                  f"vd_class_fraction = {opt.vd_class_fraction:g}", "per gauge period",
                  "one per gauge of a site", "laboratories apart"):
        assert html.escape(words) in text, words
