"""Handover tables (precipitation per year, quality), figure export, monthly runs."""
import math

import numpy as np
import pandas as pd
import pytest

from workbench.analysis.handover import element_totals, precipitation_table, quality_table
from workbench.report import plain


def test_precipitation_table_units(analysis_run):
    """PWM in ueq/L: mol m-3 = 1000 umol/L (SI arithmetic), times 2 eq/mol for SO4."""
    out, result, _ = analysis_run
    p = precipitation_table(result.wet)
    w = result.wet.sel(site="ridge", period="2021")
    row = p[(p["site"] == "ridge") & (p["period"] == "2021")].iloc[0]
    assert row["pwm_SO4_ueq_l"] == pytest.approx(float(w["pwm_SO4"]) * 1000 * 2, rel=1e-12)
    assert row["pwm_NH4_ueq_l"] == pytest.approx(float(w["pwm_NH4"]) * 1000, rel=1e-12)
    assert row["precipitation_mm"] == pytest.approx(float(w["precipitation"]))
    # pH of the PWM H+ from its ueq/L: pH = -log10(H [mol/L])
    assert row["ph_of_pwm_h"] == pytest.approx(-math.log10(row["pwm_H_ueq_l"] * 1e-6), abs=1e-9)
    f = pd.read_csv(out / "precipitation_annual.csv")
    assert len(f) == len(p)


def test_quality_table_counts_every_sample(analysis_run):
    out, result, _ = analysis_run
    q = pd.read_csv(out / "quality.csv", keep_default_na=False, na_values=[""])
    assert set(q["period"].astype(str)) == {"2020", "2021"}
    s = result.screened
    status = s["status"].values.astype(str)
    text = " ".join(q["excluded_by_reason"].fillna(""))
    n_listed = sum(int(c) for c in pd.Series(text).str.findall(r"\((\d+)\)").iloc[0])
    # every excluded sample is counted once per reason in each of the two years it overlaps
    first = pd.DatetimeIndex(s["start"].values).year
    last = pd.DatetimeIndex(s["end"].values - np.timedelta64(1, "s")).year
    n_years = np.minimum(last, 2021) - np.maximum(first, 2020) + 1
    ex = (status == "excluded") & (n_years > 0)
    n_reasons = sum(len(r.split("; ")) * n for r, n in
                    zip(s["reasons"].values.astype(str)[ex], n_years[ex]))
    assert n_listed == n_reasons
    have = q[q["site"].isin(["ridge", "mere"])]
    assert ((have["air_coverage_SO2"] >= 0) & (have["air_coverage_SO2"] <= 1)).all()
    assert q.loc[~q["site"].isin(["ridge", "mere"]), "air_coverage_SO2"].isna().all()
    assert {"wet_gauge_fraction", "wet_n_excluded", "vd_coverage_min"} <= set(q.columns)


def test_element_totals_match_budget(analysis_run):
    _, result, _ = analysis_run
    e = element_totals(result.table)
    t = result.table
    n = t[(t["pathway"] == "total") & (t["species"] == "all") & (t["element"] == "N")]
    merged = e.merge(n, on=["site", "receptor", "period"])
    np.testing.assert_allclose(merged["N_total_kg_ha_yr"], merged["flux_kg_ha_yr"])


def test_plain_notation():
    assert plain(1712.59) == "1,713" and plain(-0.0004567) == "-0.000457"
    assert "e+" not in plain(1.5e7) and plain(1.5e7) == "15,000,000"


def test_report_has_exceedance_and_folded_options(analysis_run):
    out, _, _ = analysis_run
    html = (out / "report.html").read_text()
    assert "Critical-load exceedance" in html
    assert "<details><summary>Show the options of this run" in html
    body = html.split("<h2>Whole span")[1].split("<h2>Figures</h2>")[0]
    assert not any(f"e+0{d}" in body for d in range(10))


def test_export_html_always_and_png_svg_with_kaleido(tmp_path):
    from workbench.ui.export import ExportError, export_figure
    from workbench.ui.figures_analysis import clf_spec
    spec = clf_spec({"cl_max_s": 950.0, "cl_min_n": 357.0, "cl_max_n": 1420.0}, 700.0, 1700.0)
    h = export_figure(spec, tmp_path / "clf.html")
    assert "plotly" in h.read_text()[:200000].lower() and '<script src="http' not in h.read_text()
    with pytest.raises(ExportError, match="expected a file name ending in .png, .svg, .html"):
        export_figure(spec, tmp_path / "clf.jpg")
    pytest.importorskip("kaleido")
    try:
        svg = export_figure(spec, tmp_path / "clf.svg")
    except ExportError as exc:                   # no Chrome/Chromium on this machine
        pytest.skip(str(exc))
    assert svg.read_text().lstrip().startswith("<svg")
    png = export_figure(spec, tmp_path / "clf.png")
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_run_resolution_month(analysis_scenario, tmp_path):
    from workbench.cli import main
    out = tmp_path / "month"
    assert main(["run", str(analysis_scenario), "--out", str(out), "--quiet",
                 "--resolution", "month"]) == 0
    b = pd.read_csv(out / "budget.csv")
    per = set(b["period"].astype(str)) - {"span"}
    assert len(per) == 24 and "2021-07" in per
    e = pd.read_csv(out / "exceedance.csv")
    assert set(e["period"].astype(str)) == {"2020", "2021", "span"}    # loads are annual
    with pytest.raises(SystemExit):
        main(["run", str(analysis_scenario), "--out", str(out), "--resolution", "week"])


def test_report_has_trend_figures(analysis_run):
    out, _, _ = analysis_run
    html = (out / "report.html").read_text()
    # plotly writes the figure's JSON with "·" as it is (with orjson) or as \u00b7 (without)
    html = html.replace("\\u00b7", "·")
    assert "Trends of the annual totals" in html and "S total · ridge · conifer_forest" in html
    assert html.count("plotly.js v") <= 2        # plotly.js written once (its header)


def test_quality_reasons_count_a_sample_in_every_year_it_covers():
    """A sample across 31 December is listed in both years, one ending after the last
    year of the run in the years it covers: the reason counts agree with the wet
    chain's per-year sample counts (which split a sample at the period bounds)."""
    import xarray as xr

    from workbench.analysis.handover import _reasons_by_year

    t = lambda s: np.datetime64(s, "ns")  # noqa: E731
    screened = xr.Dataset(
        {"site": ("sample", ["a", "a", "a", "a"]),
         "start": ("sample", [t("2022-12-27"), t("2022-06-01"), t("2023-12-26"), t("2023-01-01")]),
         "end": ("sample", [t("2023-01-03"), t("2022-06-08"), t("2024-01-02"), t("2023-01-08")]),
         "status": ("sample", ["flagged", "flagged", "excluded", "used"]),
         "reasons": ("sample", ["leak", "leak; late", "broken funnel", ""])})
    r = _reasons_by_year(screened).set_index("period")
    assert r.loc["2022", "flagged_by_reason"] == "late (1); leak (2)"
    assert r.loc["2023", "flagged_by_reason"] == "leak (1)"
    assert r.loc["2023", "excluded_by_reason"] == "broken funnel (1)"
    assert r.loc["2024", "excluded_by_reason"] == "broken funnel (1)"
    assert r.loc["2024", "flagged_by_reason"] == ""


def test_quality_reason_counts_match_wet_counts(analysis_run):
    """Per site and year, the flagged and excluded samples the reasons list are the
    samples the wet chain counts (wet_n_flagged, wet_n_excluded)."""
    out, result, _ = analysis_run
    q = pd.read_csv(out / "quality.csv", keep_default_na=False, na_values=[""])
    s = result.screened
    first = pd.DatetimeIndex(s["start"].values).year
    last = pd.DatetimeIndex(s["end"].values - np.timedelta64(1, "s")).year
    site = s["site"].values.astype(str)
    status = s["status"].values.astype(str)
    checked = 0
    for _, row in q.dropna(subset=["wet_n_flagged"]).iterrows():
        y = int(row["period"])
        here = (site == row["site"]) & (first <= y) & (last >= y)
        for st in ("flagged", "excluded"):
            assert int(row[f"wet_n_{st}"]) == int((here & (status == st)).sum())
            checked += 1
    assert checked > 0
