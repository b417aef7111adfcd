"""The network ranking of the notebook: the report's rule (workbench.ranking) on the
whole-span totals, drawn in its groups; a message in the plot when nothing can be ranked,
the sites without a total named in a note (seen in the browser on the demo network: an
empty pair of axes for N, and a note of eight "partial (no NO2)" years running off the
figure)."""
import pandas as pd
import pytest

from workbench.ui import figures, summaries


def _span(rows):
    """Span rows of N totals: (site, value [kg/ha/yr], status, missing, years used)."""
    return pd.DataFrame([{"site": s, "receptor": "grass", "element": "N", "period": "span",
                          "flux_kg_ha_yr": v, "status": st, "missing_components": m,
                          "years_used": y} for s, v, st, m, y in rows])


def test_nothing_ranked_says_so_in_the_plot():
    r = summaries.network_ranking(_span([]).reindex(columns=_span(
        [("x", 1.0, "complete", "", "2016")]).columns), "N", sites=["fell", "mere"])
    assert list(r["group"]) == ["no total"] * 2 and list(r["rank"]) == ["", ""]
    fig = figures.network_ranking_bars(r, "N")
    texts = [a.text for a in fig.layout.annotations]
    assert any("nothing to rank" in x for x in texts)
    assert fig.layout.xaxis.visible is False and fig.layout.yaxis.visible is False
    note = [x for x in texts if x.startswith("No total")][0]
    assert "fell, mere" in note and max(len(line) for line in note.split("<br>")) < 60


def test_a_flagged_year_keeps_the_site_in_the_full_ranking():
    """On a 10-year record one flagged year (kept flagged samples: it passes) makes the
    span row flagged, not partial: ranked with the full totals (docs/budget.md)."""
    years = " ".join(str(y) for y in range(2014, 2024))
    span = _span([("fell", 12.0, "flagged", "", years), ("tarn", 9.0, "complete", "", years),
                  ("mere", 30.0, "partial", "NO2", years),
                  ("holm", 20.0, "partial", "NO2 NH3", years),
                  ("beck", 25.0, "partial", "NO2", years)])
    r = summaries.network_ranking(span, "N", n_periods=10, sites=["fell", "tarn", "mere",
                                                                  "holm", "beck", "moss"])
    assert list(zip(r["group"], r["rank"], r["site"])) == [
        ("every component", "1", "fell"), ("every component", "2", "tarn"),
        ("partial: without NO2", "1", "mere"), ("partial: without NO2", "2", "beck"),
        ("partial: without NO2, NH3", "1", "holm"), ("no total", "", "moss")]
    assert r["years used"].iloc[0] == "2014-2023 (10 of 10)"
    fig = figures.network_ranking_bars(r, "N")
    assert [t.name for t in fig.data] == ["every component", "partial: without NO2",
                                          "partial: without NO2, NH3"]
    # the flagged total is ranked and marked (tests/ui/test_network_flagged_rule.py)
    assert list(fig.data[0].y) == ["1 · fell (flagged)", "2 · tarn"]
    assert list(fig.data[1].y) == ["1 · mere (without NO2)", "2 · beck (without NO2)"]
    assert fig.data[0].marker.color != fig.data[1].marker.color
    assert list(fig.layout.yaxis.categoryarray)[:3] == ["1 · fell (flagged)", "2 · tarn",
                                                        "1 · mere (without NO2)"]
    assert fig.layout.xaxis.visible is not False
    assert not any("nothing to rank" in a.text for a in fig.layout.annotations)
    assert any("moss" in a.text for a in fig.layout.annotations)


def test_the_unit_converts_the_values_not_the_order():
    """kg N/ha/yr -> mmol N/m2/yr: 1 kg/ha = 0.1 g/m2 = 100/14.0067 mmol/m2 (molar mass
    of N, IUPAC standard atomic weight 14.007)."""
    span = _span([("fell", 14.0067, "complete", "", "2020"), ("tarn", 7.0, "filled", "", "2020")])
    kg = summaries.network_ranking(span, "N")
    mmol = summaries.network_ranking(span, "N", "mmol/m2/yr")
    assert list(kg["site"]) == list(mmol["site"]) == ["fell", "tarn"]
    assert mmol["value"].iloc[0] == pytest.approx(100.0, rel=1e-3)
