"""The uncertainty and sensitivity outputs read as an analyst new to them would
(docs/methods_uncertainty.md, "What a range covers"; docs/scenario.md, [sensitivity]).

Each test fails on the code before the review (git b2c1625):

1. report.html's text under the 5-95 % table listed as *not* in the range "a
   calibration bias shared by the air and the precipitation laboratory, or by two
   species analysed as one ion", right above its own line ``lab_bias_filter_pack =
   true`` (SO2 and pSO4 one draw) and while a laboratory the catalogue names for both
   is one draw; it named neither the site's own Vd factor, the bulk-collector factor
   nor the values below detection, all drawn; and it said "the same in every year"
   under ``systematic_errors = "each_year"``.
2. summary.csv carried S_wet_kg_ha_p05 ... N_dry_kg_ha_p95 without S_wet_kg_ha ...
   N_dry_kg_ha: a range without its value.
3. sensitivity.html drew one (site, receptor, period) of the network under a text
   naming none of it, and negative first-order indices without a word.
"""
import sys
from pathlib import Path

import pandas as pd
import pytest

sys.path.insert(0, str(Path(__file__).parent))

from tiny_site import make_tiny  # noqa: E402

from workbench.analysis import uncertainty as U  # noqa: E402
from workbench.analysis.quantile_tables import report_section  # noqa: E402

TABLE = pd.DataFrame({"site": ["quill"], "receptor": ["grass"], "period": ["2021-02"],
                      "element": ["S"], "pathway": ["total"], "species": ["all"],
                      "flux_kg_ha_yr": [1.0], "flux_kg_ha_yr_p05": [0.9],
                      "flux_kg_ha_yr_p50": [1.0], "flux_kg_ha_yr_p95": [1.1],
                      "status": ["complete"]})


def _text(**opt):
    import html
    parts = report_section(TABLE, lambda f: f.to_html(), U.UncertaintyOptions(**opt))
    return html.unescape(parts[1] + parts[2])


def test_the_report_names_what_the_options_draw():
    t = _text()                                        # the defaults
    assert "lab_bias_filter_pack = true" in t
    assert "two species analysed as one ion" not in t
    assert "a filter pack's gas filter shares its particle filter's draw" in t
    assert "shared by the air and the precipitation laboratory" not in t
    assert "vd_site_gsd" in t and 'bulk_correction = "scale_wet"' in t
    assert "values below detection" in t
    off = _text(lab_bias_filter_pack=False, vd_site_gsd=1.0, bulk_factor_rel_sd=0.0)
    assert "filters of a pack (lab_bias_filter_pack = false)" in off
    assert "particle filter's draw" not in off
    assert "one of each site's own" not in off and "scale_wet" not in off.split("Drawn")[0]


def test_each_year_is_not_called_the_same_in_every_year():
    t = _text(systematic_errors="each_year")
    assert "the same at every site and in every year" not in t
    assert "drawn anew for every site and calendar year" in t
    assert "narrows as 1/sqrt(years)" in t
    assert "the same at every site and in every year" in _text()


@pytest.fixture(scope="module")
def tiny(tmp_path_factory):
    return make_tiny(tmp_path_factory.mktemp("review"))


def test_summary_has_the_value_beside_each_range(tiny):
    from workbench.tables import summary_table
    sc, study, res, _ = tiny
    new = U.with_uncertainty(res, study, sc)
    frame = summary_table(new)
    cols = list(frame.columns)
    fams = [c[:-4] for c in cols if c.endswith("_p05")]
    assert {"S_wet_kg_ha", "S_dry_kg_ha", "N_wet_kg_ha", "N_dry_kg_ha", "S_total_kg_ha",
            "potential_acidity_eq_ha"} <= set(fams)
    for f in fams:
        assert f in cols, f
        k = cols.index(f)
        assert cols[k + 1: k + 4] == [f + "_p05", f + "_p50", f + "_p95"], f
    # the value is the budget's (not a quantile): budget.csv's S wet total row
    t = res.table
    s_wet = t[(t["element"] == "S") & (t["pathway"] == "wet")
              & (t["species"] == "all")]["flux_kg_ha"].iloc[0]
    assert frame["S_wet_kg_ha"].iloc[0] == pytest.approx(s_wet, rel=1e-9)
    s_tot = frame["S_total_kg_ha"].iloc[0]
    assert s_tot == pytest.approx(frame["S_wet_kg_ha"].iloc[0] + frame["S_dry_kg_ha"].iloc[0],
                                  rel=1e-9)
    # without draws summary.csv keeps its columns
    plain = summary_table(res)
    assert "S_wet_kg_ha" not in plain and not any(c.endswith("_p05") for c in plain)


def test_the_sensitivity_page_names_the_cell_it_shows():
    from workbench.analysis.sensitivity import shown_text
    frame = pd.DataFrame({"site": ["a", "a", "b"], "receptor": ["grass"] * 3,
                          "period": ["2020", "2021", "2021"], "S1": [0.5, -0.04, 0.2]})
    t = shown_text(frame, "a", "grass", "2021")
    assert "site a, receptor grass, period 2021" in t
    assert "one of the 3 (site, receptor, period) cells" in t
    assert "below 0 (here down to -0.04)" in t
    assert "below 0" not in shown_text(frame.assign(S1=0.1), "a", "grass", "2021")


def test_the_sensitivity_page_carries_it(tiny, tmp_path):
    pytest.importorskip("SALib")
    from workbench.analysis.sensitivity import write_sensitivity
    sc, *_ = tiny
    out = write_sensitivity(sc, tmp_path / "sens", quiet=True)
    html = out["sensitivity.html"].read_text()
    assert "The figures show site quill, receptor grass, period 2021-02" in html


def test_the_line_of_options_names_the_vd_gsds_and_the_random_spreads():
    """The report's "Drawn with" line left out the Vd model factors' GSDs, which make
    most of a dry range (the NH3 Vd's 2.0 above all), and the spreads of the random
    errors, while naming the laboratory biases and the class fraction: it read as the
    whole list of what was drawn.  Now each is named with its value, a changed one too."""
    from workbench.analysis.quantile_tables import draws_in_force
    line = draws_in_force(U.UncertaintyOptions(draws=10))
    assert "vd_gsd = SO2 1.5, pSO4 1.8, HNO3 1.4, pNO3 1.8, pNH4 1.8, NH3 2, NO2 2" in line
    assert "vd_shared_fraction = 0.5" in line
    for words in ("air_rel_sd = 0.05", "precip_conc_rel_sd = 0.05", "depth_rel_sd = 0.05",
                  "censored_rel_sd = 0.577", "vd_fill_rel_sd = 0.3", "pwm_fill_rel_sd = 0.3"):
        assert words in line
    changed = U.UncertaintyOptions.from_dict({"draws": 10, "vd_gsd": {"NH3": 1.5}})
    assert "NH3 1.5," in draws_in_force(changed) and "SO2 1.5," in draws_in_force(changed)
