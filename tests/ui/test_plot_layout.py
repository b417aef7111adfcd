"""Layout of the figures as a browser pass at 1,000 px saw them: the sensitivity sweep's
"baseline (model)" label written over the N-total curve, and the network overview's
annual totals squeezed into two narrow panels with their years turned on end.  Checked
on the figure specs (plotly JSON), so no browser is needed."""
import warnings

import numpy as np
import pandas as pd
import pytest

from workbench.ui import figures


def _panel_of(ref: str) -> str:
    """The y axis an annotation or trace refers to ('y', 'y2'...) or '' for paper."""
    ref = (ref or "y").split(" ")[0]
    return "" if ref == "paper" else ref


def _labels_on_curves(fig, near=0.05):
    """Annotations written among a panel's traces: anchored on a data y axis at a height
    within `near` (fraction of the panel's span of values) of a point of a trace drawn
    there."""
    hits = []
    for a in fig.layout.annotations:
        yaxis = _panel_of(a.yref)
        if not yaxis:
            continue
        ys = np.array([v for t in fig.data if (t.yaxis or "y") == yaxis
                       for v in (t.y or ()) if v is not None], float)
        if not len(ys):
            continue
        span = max(np.ptp(np.append(ys, 0.0)), 1e-12)      # rangemode tozero
        if np.min(np.abs(ys - float(a.y))) <= near * span:
            hits.append((a.text, yaxis, a.y))
    return hits


def test_model_baseline_is_named_in_the_legend_not_over_a_curve(session):
    """Defect: the sweep of a velocity left to the model (fixed Vd of SO2 not set) drew
    its baseline line with "baseline (model)" written at its right end, on the N-total
    curve (SO2's velocity does not move N: the curve runs along the baseline)."""
    from workbench.ui.apps_more import SensitivityExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = SensitivityExplorer(session, site="ridge", years=(2021, 2021), run=False)
        app.key_w.value = "fixed_velocity.SO2"
        app.range_w.value = (0.2, 1.0)
        app.steps_w.value = 3
        app.run()
    fig = app.fig
    n_total = next(t for t in fig.data if t.name.startswith("N total"))
    assert np.ptp(np.array(n_total.y, float)) < 1e-9        # the flat curve of the defect
    assert _labels_on_curves(fig) == []
    lines = [s for s in fig.layout.shapes if s.type == "line" and s.y0 == s.y1]
    assert len(lines) == 2                                  # a baseline line per panel
    entry = [t for t in fig.data if t.name == "baseline (model)"]
    assert len(entry) == 1 and entry[0].showlegend is not False
    assert entry[0].line.dash == "dot"                      # drawn as the lines are
    assert lines[1].y0 == pytest.approx(n_total.y[0])


def test_labels_on_curves_sees_a_label_on_a_flat_curve():
    """The check above can fail: a label put on the line of a flat curve is found."""
    import plotly.graph_objects as go
    fig = go.Figure(go.Scatter(x=[0, 1], y=[3.0, 3.0]))
    fig.add_hline(y=3.0, annotation_text="baseline (model)")
    assert _labels_on_curves(fig)
    fig = go.Figure(go.Scatter(x=[0, 1], y=[3.0, 3.0]))
    fig.add_hline(y=3.0)
    assert _labels_on_curves(fig) == []


def test_sweep_with_a_set_baseline_has_no_model_entry():
    table = pd.DataFrame({"value": [0.1, 0.2] * 6, "total": sorted(
        [f"{el}_{pw}" for el in "SN" for pw in ("wet", "dry", "total")] * 2),
        "rate": np.arange(12.0), "status": "complete"})
    fig = figures.sensitivity_curves(table, "x", 0.1)
    assert not any(t.name == "baseline (model)" for t in fig.data)
    fig = figures.sensitivity_curves(table, "x", None, model_baseline={"S": 1.0, "N": np.nan})
    assert [t.name for t in fig.data].count("baseline (model)") == 1
    assert len([s for s in fig.layout.shapes if s.y0 == s.y1]) == 1   # no line at NaN


def _network(n_sites, years, partial=True):
    rows = []
    for i in range(n_sites):
        for el in ("S", "N"):
            for k, y in enumerate(years):
                ok = not partial or (i + k) % 4 != 1
                rows.append({"site": f"site{i}", "element": el, "period": str(y),
                             "value": 5.0 + i + k, "rankable": ok,
                             "status": "complete" if ok else "partial",
                             "missing": "" if ok else "NO2"})
    return pd.DataFrame(rows)


@pytest.mark.parametrize("n_sites, years", [(4, range(2016, 2024)), (3, range(2010, 2024)),
                                            (30, range(1995, 2025)), (2, (2021,))])
def test_network_years_are_written_level_at_a_notebook_width(n_sites, years):
    """Defect (browser at 1,000 px, the demo's 4 sites and 8 years): the sulfur and
    nitrogen panels side by side beside a legend of "ridge (partial or flagged: not
    ranked)" entries got ~150 px each and plotly turned the years on end.  Each panel
    now spans the figure's width, the legend is narrower, and where the years still do
    not fit they are slanted (up to 15 years, every one named) or every k-th year is
    named, level."""
    fig = figures.network_totals(_network(n_sites, years))
    for x in ("xaxis", "xaxis2"):
        ax = fig.layout[x]
        assert tuple(ax.domain) == (0.0, 1.0), x         # each panel the figure's width
        shown = list(ax.tickvals)
        assert shown == sorted(shown) and int(shown[0]) - min(years) < 5
        # every year up to EVERY_YEAR_MAX (slanted where they do not fit level), more
        # years every k-th, level
        level = len(shown) * figures.YEAR_LABEL_PX <= figures.totals_plot_px(fig)
        assert ax.tickangle == (0 if level else figures.YEAR_ANGLE), x
        if len(years) <= figures.EVERY_YEAR_MAX:
            assert shown == [str(y) for y in years], x
        else:
            assert level and len(shown) <= figures.EVERY_YEAR_MAX, x
    assert figures.totals_plot_px(fig) >= 0.5 * figures.NOTEBOOK_PX
    # every year still drawn: the categories are all the years, in order
    assert list(fig.layout.xaxis2.categoryarray) == [str(y) for y in years]
    assert fig.layout.xaxis2.title.text == "year"


def test_panel_width_check_fails_on_panels_side_by_side():
    """The check above can fail: two panels side by side beside the long one-line
    legend entries leave too little room for 8 years."""
    import plotly.graph_objects as go
    from plotly.subplots import make_subplots
    fig = make_subplots(rows=1, cols=2, horizontal_spacing=figures.PANEL_GAP)
    for col in (1, 2):
        fig.add_trace(go.Scatter(x=[str(y) for y in range(2016, 2024)], y=[1] * 8,
                                 name="ridge (partial or flagged: not ranked)"), row=1, col=col)
    assert 8 * figures.YEAR_LABEL_PX > figures.totals_plot_px(fig)


def test_site_explorer_tab_titles_are_whole(session):
    """Defect (browser at 1,000 px): ipywidgets gives each tab at most 144 px and
    shrinks it, and the site explorer's titles were cut ("deposition veloci",
    "capture efficienc", "excluded sample").  Its tab bar carries the class whose rule
    (in the app's own style) sizes each tab to its title and wraps the row; measured
    in chromium at 1,000 px: 4 of 7 titles cut before, none after."""
    import ipywidgets as widgets

    from workbench.ui.apps import SiteExplorer
    from workbench.ui.controls import WRAP_LABELS_CSS
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = SiteExplorer(session, site="ridge", years=(2021, 2021))
    titles = list(app.tabs.titles)
    assert max(len(t) for t in titles) * 7 + 24 > 144       # some do not fit 144 px
    assert "wb-tabs" in app.tabs._dom_classes
    styles = [w.value for w in app.children if isinstance(w, widgets.HTML)
              and "wb-style" in w._dom_classes]
    assert styles == [WRAP_LABELS_CSS]
    assert ".wb-tabs > .lm-TabBar .lm-TabBar-tab {flex: 0 0 auto" in WRAP_LABELS_CSS
    assert "flex-wrap: wrap" in WRAP_LABELS_CSS.split(".wb-tabs")[-1]


def _legend_gap_px(layout):
    """Room between the bottom of the plot and the top of a legend under it [px],
    plotly's rules: paper units are shares of the plot's height (figure height less
    the margins, 100 and 80 px by default); container units of the figure's."""
    height = layout["height"]
    margin = {"t": 100, "b": 80, **layout.get("margin", {})}
    legend = layout["legend"]
    if legend.get("yref") == "container":
        assert legend.get("yanchor") == "bottom"
        lines = legend["_lines"]
        top = legend["y"] * height + figures.LEGEND_LINE_PX * lines
        return margin["b"] - top
    return -legend["y"] * (height - margin["t"] - margin["b"])


def _legend_lines(data):
    return sum(1 + str(t.get("name", "")).count("<br>") for t in data
               if t.get("showlegend", True) is not False and t.get("name"))


def test_legends_under_the_analysis_figures_clear_the_axis_title():
    """Defect (browser at 1,000 px, critical_loads.ipynb): the legend at y = -0.2 of the
    plot touched "N deposition [eq/ha/yr]" (the first entry's line on the axis title's
    line).  The legend now sits at the figure's foot with a line of room per entry, and
    the room for the tick labels and the axis title stays above it."""
    from workbench.analysis.whatif import path_table
    from workbench.ui import figures_analysis
    from workbench.ui.figures_analysis import clf_spec, trend_spec
    AXIS_TITLE_PX = getattr(figures_analysis, "AXIS_TITLE_PX", 70)   # ticks, title, gap
    loads = {"cl_max_s": 950.0, "cl_min_n": 357.0, "cl_max_n": 1420.0, "cl_nut_n": 714.0}
    parts = {"S_wet": 300.0, "S_dry": 420.0, "NOx_wet": 350.0, "NOx_dry": 300.0,
             "NHx_wet": 450.0, "NHx_dry": 610.0}
    path = path_table(parts, {"S": 0.8, "NOx": 0.6, "NHx": 0.6}, loads)
    years = np.arange(2010, 2022)
    specs = [clf_spec(loads, 720.0, 1710.0, path, "ridge", "air only"),
             trend_spec(years, 10 - 0.3 * (years - 2010), {"slope": -0.3, "intercept": 10,
                                                            "p_value": 0.01})]
    for spec in specs:
        layout = dict(spec["layout"])
        layout["legend"] = {**layout["legend"], "_lines": _legend_lines(spec["data"])}
        assert _legend_gap_px(layout) >= AXIS_TITLE_PX, layout["legend"]


def test_legend_gap_sees_the_old_placement():
    """The check above can fail: the old placement (y = -0.2 of the plot, 460 px) left
    56 px under the plot for ticks, axis title and gap."""
    from workbench.ui.figures_analysis import AXIS_TITLE_PX
    old = {"height": 460, "legend": {"orientation": "h", "y": -0.2}}
    assert _legend_gap_px(old) < AXIS_TITLE_PX
