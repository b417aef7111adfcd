"""The network ranking when nothing (or little) can be ranked: a message in the plot,
one short reason per site (seen in the browser on the demo network: an empty pair of
axes for N, and a note of eight "partial (no NO2)" years running off the figure)."""
import pandas as pd

from workbench.ui import figures, summaries


def _table(statuses, missing):
    years = [str(y) for y in range(2016, 2024)]
    rows = []
    for site, st, m in zip(("fell", "mere"), statuses, missing):
        rows += [{"site": site, "receptor": "grass", "period": y, "element": "N", "value": 10.0,
                  "status": st[i] if isinstance(st, list) else st, "missing": m} for i, y in enumerate(years)]
    t = pd.DataFrame(rows)
    t["rankable"] = t["status"].isin(summaries.RANKABLE)
    return t


def test_why_text_joins_years_of_one_reason():
    assert summaries.why_text([("2016", "partial (no NO2)"), ("2017", "partial (no NO2)"),
                               ("2018", "partial (no NO2)"), ("2020", "flagged"),
                               ("2021", "partial (no NO2)")]) == \
        "2016-2018, 2021: partial (no NO2); 2020: flagged"
    assert summaries.why_text([("2019-07", "flagged")]) == "2019-07: flagged"
    assert summaries.why_text([]) == ""


def test_nothing_ranked_says_so_in_the_plot():
    t = _table(["partial", "partial"], ["NO2", "NO2"])
    ranked, apart = summaries.network_ranking(t, "N")
    assert ranked.empty and list(apart["why"]) == ["2016-2023: partial (no NO2)"] * 2
    fig = figures.network_ranking_bars(ranked, apart, "N")
    texts = [a.text for a in fig.layout.annotations]
    assert any("nothing to rank" in x for x in texts)
    assert fig.layout.xaxis.visible is False and fig.layout.yaxis.visible is False
    note = [x for x in texts if x.startswith("Partial")][0]
    assert max(len(line) for line in note.split("<br>")) < 60


def test_ranked_plot_keeps_its_axes():
    st = ["complete"] * 8
    t = _table([st, ["flagged"] + st[1:]], ["", ""])
    ranked, apart = summaries.network_ranking(t, "N")
    assert list(ranked["site"]) == ["fell"] and list(apart["why"]) == ["2016: flagged"]
    fig = figures.network_ranking_bars(ranked, apart, "N")
    assert fig.layout.xaxis.visible is not False
    assert not any("nothing to rank" in a.text for a in fig.layout.annotations)
