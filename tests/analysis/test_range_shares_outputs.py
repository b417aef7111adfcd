"""``[uncertainty] explain_ranges``: range_shares.csv and the report's table of the
largest factors (workbench.analysis.range_shares), on the tiny invented site with few
draws.

The sums checked are those the function defines (docs/methods_uncertainty.md, "Where a
range's width comes from"): the factors' shares (the Vd species' parts, ``part_of =
"vd_gsd"``, not counted) plus ``together`` make 1, the share of ``all``, in both the
variance and the log-variance; the ``all`` rows hold budget.csv's quantiles (the same
draws and seed).  An identity of the definitions, not a reference value.
"""
import numpy as np
import pandas as pd
import pytest

from workbench.analysis.variance_shares import COLUMNS

SECTION = "[uncertainty]\ndraws = 200\nseed = 7"


def _scenario(tiny, tmp_path, extra):
    sc = tiny[0]
    text = sc.path.read_text()
    assert SECTION in text
    p = sc.path.parent / f"explain_{tmp_path.name}.toml"
    p.write_text(text.replace(SECTION, "[uncertainty]\ndraws = 40\nseed = 7" + extra))
    return p


@pytest.fixture(scope="module")
def explained(tiny, tmp_path_factory):
    from workbench.cli import run_scenario
    out = tmp_path_factory.mktemp("explained")
    path = _scenario(tiny, out, "\nexplain_ranges = true")
    written, _, _ = run_scenario(path, out / "run", quiet=True)
    return written


def test_the_shares_rows_add_up_to_the_all_rows(explained):
    shares = pd.read_csv(explained["range_shares.csv"])
    assert list(shares.columns) == list(COLUMNS)
    assert set(shares["total"]) == {"S_dry", "N_dry", "S_total", "N_total"}
    budget = pd.read_csv(explained["budget.csv"])
    # the periods of budget.csv and its span rows (the tiny site has one month, no span)
    assert set(shares["period"].astype(str)) == set(budget["period"].astype(str))
    keys = ["site", "receptor", "period", "total"]
    for key, g in shares.groupby(keys):
        assert g["factor"].iloc[0] == "all" and g["factor"].iloc[-1] == "together", key
        own = g[~g["factor"].isin(["all", "together"]) & g["part_of"].isna()]
        assert len(own) >= 1, key
        allrow = g[g["factor"] == "all"].iloc[0]
        rest = g[g["factor"] == "together"].iloc[0]
        for col in ("variance_share", "log_variance_share"):
            if np.isnan(allrow[col]):
                continue
            assert own[col].sum() + rest[col] == pytest.approx(allrow[col], abs=1e-9), (key, col)
    # every part of the Vd factor names its factor, which is listed itself
    parts = shares[shares["part_of"].notna()]
    assert set(parts["part_of"]) <= {"vd_gsd"}
    assert (parts["factor"].str.startswith("vd_gsd.")).all()
    # a part is listed under its own element's totals only (no SO2 part of dry N)
    from workbench.species import SPECIES
    assert all(SPECIES[f.split(".")[1]].element == t[0]
               for f, t in zip(parts["factor"], parts["total"]))


def test_the_all_rows_are_the_runs_own_ranges(explained):
    shares = pd.read_csv(explained["range_shares.csv"])
    budget = pd.read_csv(explained["budget.csv"])
    tot = budget[(budget["species"] == "all") & (budget["pathway"].isin(["dry", "total"]))]
    allrows = shares[(shares["factor"] == "all")]
    checked = 0
    for _, r in allrows.iterrows():
        el, pw = r["total"].split("_")
        b = tot[(tot["site"] == r["site"]) & (tot["receptor"] == r["receptor"])
                & (tot["period"].astype(str) == str(r["period"])) & (tot["element"] == el)
                & (tot["pathway"] == pw)]
        col = "flux_kg_ha_yr" if str(r["period"]) == "span" else "flux_kg_ha"
        assert len(b) == 1
        for q in ("p05", "p50", "p95"):
            assert r[f"alone_{q}"] == pytest.approx(b[f"{col}_{q}"].iloc[0], rel=1e-6), (r, q)
        checked += 1
    assert checked > 0


def test_the_file_is_listed_and_the_report_has_the_table(explained):
    import json
    prov = json.loads(explained["provenance.json"].read_text())
    assert "range_shares.csv" in prov["outputs"]
    assert "range_shares.csv" in prov["output_sha256"]
    import html
    page = html.unescape(explained["report.html"].read_text())
    assert "Where the ranges' width comes from" in page
    assert "dry N" in page and "log-variance share" in page
    assert "Read it as where a range's width comes from" in page
    # the cautions stay
    assert "5-95 % range of every total" in page


def test_off_writes_nothing_new(tiny, tmp_path):
    """Without the option (the default) the run folder has no range_shares.csv, the
    report no table of factors, and budget.nc's options attribute is as before."""
    import xarray as xr
    from workbench.cli import run_scenario
    path = _scenario(tiny, tmp_path, "")
    written, _, _ = run_scenario(path, tmp_path / "run", quiet=True)
    assert "range_shares.csv" not in written
    assert not (tmp_path / "run" / "range_shares.csv").exists()
    assert "Where the ranges' width comes from" not in written["report.html"].read_text()
    with xr.open_dataset(written["budget.nc"], engine="scipy") as nc:
        assert "explain_ranges" not in nc.attrs["uncertainty"]


@pytest.mark.parametrize("draws", [0, 1])
def test_the_option_without_draws_writes_nothing_and_says_why(tiny, tmp_path, draws):
    """``explain_ranges = true`` with ``draws`` 0 or 1: no range to explain (no
    variance), no file; a run note says so (a setting alone loads, as every setting the
    docs name must)."""
    import json
    from workbench.analysis.uncertainty import NO_DRAWS_TO_EXPLAIN
    from workbench.cli import run_scenario
    sc = tiny[0]
    p = sc.path.parent / f"no_draws_{draws}.toml"
    p.write_text(sc.path.read_text().replace(
        SECTION, f"[uncertainty]\ndraws = {draws}\nexplain_ranges = true"))
    written, _, _ = run_scenario(p, tmp_path / "run", quiet=True)
    assert "range_shares.csv" not in written
    prov = json.loads(written["provenance.json"].read_text())
    assert NO_DRAWS_TO_EXPLAIN in prov["run_notes"]


def test_a_value_not_true_or_false_is_one_located_message(tiny, tmp_path):
    from workbench.errors import ScenarioError
    from workbench.scenario import load_scenario
    p = tmp_path / "bad.toml"
    p.write_text(tiny[0].path.read_text().replace(SECTION, "[uncertainty]\ndraws = 5\n"
                                                  "explain_ranges = 1"))
    with pytest.raises(ScenarioError, match=r"uncertainty\.explain_ranges"):
        load_scenario(p)


def test_report_section_only_when_computed():
    from workbench.analysis.range_shares import largest_factors, report_section
    assert report_section(None, lambda f: f.to_html()) == []
    rows = pd.DataFrame({
        "site": "s1", "receptor": "grass", "period": "span", "total": "N_dry",
        "factor": ["all", "vd_gsd", "vd_gsd.NH3", "vd_site_gsd", "air_rel_sd", "together"],
        "part_of": ["", "", "vd_gsd", "", "", ""],
        "variance_share": [1, 0.9, 0.7, 0.08, 0.001, 0.019],
        "log_variance_share": [1, 0.9, 0.7, 0.08, 0.001, 0.019],
        "alone_p05": 1.0, "alone_p50": 2.0, "alone_p95": 3.0, "unit": "kg ha-1 yr-1"})
    top = largest_factors(rows)
    assert list(top["factor"]) == ["vd_gsd", "of which NH3", "vd_site_gsd"]
    assert set(top["period"]) == {"span"}
    page = "".join(report_section(rows, lambda f: f.to_html()))
    assert "<h3>s1</h3>" in page and "air_rel_sd" not in page


def test_a_factor_that_moves_nothing_is_exactly_0_in_the_file_and_tables(explained):
    """The tiny site has no bulk collector and no NH3: the bulk factor and the NH3
    Gamma_s factor move nothing there, and the wet factors move no dry total.  Their
    shares read exactly 0.0 in range_shares.csv (before, about 8e-32 in N_dry: the
    variance of equal numbers, rounding), the report's table leaves them out, and the
    explorer's table shows 0.0, never -0.0."""
    from workbench.analysis.range_shares import largest_factors
    from workbench.ui.range_shares_panel import shares_display
    shares = pd.read_csv(explained["range_shares.csv"])
    idle = shares[shares["factor"].isin(["bulk_factor_rel_sd", "nh3_gamma_gsd"])
                  | (shares["total"].str.endswith("_dry")
                     & shares["factor"].isin(["depth_rel_sd", "gauge_catch_rel_sd",
                                              "precip_conc_rel_sd"]))]
    assert len(idle) >= 8
    for col in ("variance_share", "log_variance_share"):
        assert (idle[col] == 0.0).all(), idle[["total", "factor", col]]
    report = largest_factors(shares.fillna({"part_of": ""}))
    assert not report["factor"].isin(["bulk_factor_rel_sd", "nh3_gamma_gsd"]).any()
    r = shares.iloc[0]
    for total in ("N_dry", "S_dry"):
        shown = shares_display(shares, r["receptor"], str(r["period"]), total)
        row = shown.set_index("option").loc["bulk_factor_rel_sd"]
        assert row["share of the variance"] == 0.0 and row["share of the log-variance"] == 0.0
        vals = shown[["share of the variance", "share of the log-variance"]].to_numpy(float)
        assert not (np.signbit(vals) & (vals == 0)).any()


def test_largest_factors_of_the_file_read_back_equal_those_of_the_run(explained):
    """Defect: range_shares.csv read back gives NaN for an empty `part_of`, which
    `largest_factors` took for a part ("of which ...") and failed on with an IndexError
    on a factor without a species ("vd_site_gsd")."""
    from workbench.analysis.range_shares import largest_factors
    back = pd.read_csv(explained["range_shares.csv"])
    assert back["part_of"].isna().any()                 # what pandas makes of ""
    got = largest_factors(back)
    want = largest_factors(back.fillna({"part_of": ""}))
    pd.testing.assert_frame_equal(got, want)
    assert not got.empty and not got["factor"].str.startswith("of which").all()
