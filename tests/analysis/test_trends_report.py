"""The report of a large network: figures of single sites for the first sites only, a
sentence saying so and where the rest is; tables and cautions keep every site."""
from workbench.report import CAUTION, render_report


def test_site_figures_are_limited_with_a_sentence(analysis_run):
    _, result, study = analysis_run
    sites = [str(s) for s in result.years["site"].values]
    assert len(sites) >= 2
    full = render_report(result, study)
    assert "Figures limited" not in full
    one = render_report(result, study, max_site_figures=1)
    assert f"Budget figures are drawn for the first 1 of {len(sites)} sites" in one
    assert "Trend figures are drawn for the first 1 of" in one
    assert "trends.csv" in one and "budget.csv" in one
    assert one.count("plotly-graph-div") < full.count("plotly-graph-div")
    assert one.count("<script") < full.count("<script")
    assert all(f"<td>{s}</td>" in one for s in sites)   # the tables keep every site
    assert one.count("Caution.") == 1 and one.count(CAUTION[:60]) == 2   # both cautions
