"""The network figures with as many sites as an analyst's network (30): in the browser
the annual totals had 60 legend entries behind a scroll bar and the colours repeated
every 8 sites; the ranking named only every third bar (plotly skips category labels
that do not fit)."""
import numpy as np
import pandas as pd

from workbench.ui import figures


def _table(n_sites, years=(2024, 2025)):
    rows = []
    for i in range(n_sites):
        for el in ("S", "N"):
            for k, y in enumerate(years):
                rows.append({"site": f"s{i:02d}", "element": el, "period": str(y),
                             "value": 5.0 + i + k, "rankable": (i + k) % 3 != 0,
                             "status": "complete" if (i + k) % 3 else "partial",
                             "missing": "" if (i + k) % 3 else "NO2"})
    return pd.DataFrame(rows)


def test_thirty_sites_each_look_different_and_the_legend_lists_sites_once():
    fig = figures.network_totals(_table(30))
    lines = [t for t in fig.data if t.xaxis == "x" and t.mode == "lines+markers"]
    looks = {(t.line.color, t.line.dash) for t in lines}
    assert len(lines) == 30 and len(looks) == 30
    shown = [t.name for t in fig.data if t.showlegend is not False]
    assert shown == [f"s{i:02d}" for i in range(30)]
    # the markers' note states the ranking's rule (tests/ui/test_network_flagged_rule.py)
    assert any(a.text == figures.MARKER_NOTE for a in fig.layout.annotations)
    # the legend of 30 names fits the figure
    assert fig.layout.height >= figures.legend_height(31)
    assert fig.layout.legend.tracegroupgap == 0       # each site is a legend group


def test_few_sites_keep_their_open_marker_entries():
    fig = figures.network_totals(_table(3))
    # s01 has no partial total in _table(3): no open-marker entry of its own
    assert [t.name for t in fig.data if t.showlegend is not False] == [
        "s00", "s00 " + figures.OPEN_NAME, "s01", "s02", "s02 " + figures.OPEN_NAME]
    assert fig.layout.height == figures.TOTALS_HEIGHT


def test_thirty_ranked_sites_are_all_named():
    span = pd.DataFrame({"site": [f"s{i:02d}" for i in range(30)], "element": "N",
                         "flux_kg_ha_yr": np.linspace(30, 5, 30), "status": "complete",
                         "missing_components": "", "years_used": "2024 2025"})
    from workbench.ui.summaries import network_ranking
    r = network_ranking(span, "N")
    fig = figures.network_ranking_bars(r, "N")
    labels = [y for t in fig.data for y in t.y]
    assert len(labels) == 30
    assert list(fig.layout.yaxis.tickvals) == labels      # every bar named, none skipped
    assert fig.layout.height >= figures.RANK_BAR_PX * 30


def test_a_flagged_span_total_without_a_component_is_ranked_apart():
    """One site without NH3 (not measured), one year flagged: its whole-span N row is
    'flagged' with missing_components 'NH3', and the overview ranked it under "every
    component" and said "every site has a whole-span total holding every component"."""
    from workbench.ui.summaries import network_ranking
    span = pd.DataFrame({"site": ["a", "b"], "element": "N", "flux_kg_ha_yr": [13.2, 20.0],
                         "status": ["flagged", "flagged"], "missing_components": ["NH3", ""],
                         "years_used": "2020 2021"})
    r = network_ranking(span, "N")
    assert dict(zip(r["site"], r["group"])) == {"b": "every component",
                                                "a": "partial: without NH3"}


def test_a_tall_figure_is_exported_at_its_own_height(monkeypatch, tmp_path):
    """The exported 30-site ranking was 520 px high: its labels ran into each other."""
    import kaleido  # noqa: F401    (the export path checks for it)

    from workbench.ui import export
    sizes = []
    monkeypatch.setattr(export, "_write_image",
                        lambda fig, path, fmt, w, h: sizes.append((w, h)))
    span = pd.DataFrame({"site": [f"s{i:02d}" for i in range(30)], "element": "N",
                         "flux_kg_ha_yr": np.linspace(30, 5, 30), "status": "complete",
                         "missing_components": "", "years_used": "2024 2025"})
    from workbench.ui.summaries import network_ranking
    fig = figures.network_ranking_bars(network_ranking(span, "N"), "N")
    export.export_figure(fig, tmp_path / "r.png")
    export.export_figure(figures.network_totals(_table(3)), tmp_path / "t.png")
    assert sizes == [(export.WIDTH, fig.layout.height), (export.WIDTH, figures.TOTALS_HEIGHT)]


def test_a_site_without_open_markers_has_no_open_marker_entry():
    """Seen in the browser: 'ridge (partial or flagged: not ranked)' in the legend of a
    network where only mere's N total was partial."""
    t = _table(2, years=(2021,))
    t["rankable"] = ~((t["site"] == "s01") & (t["element"] == "N"))
    fig = figures.network_totals(t)
    shown = [tr.name for tr in fig.data if tr.showlegend is not False]
    assert shown == ["s00", "s01", "s01 " + figures.OPEN_NAME]
