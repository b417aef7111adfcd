"""What a browser pass of the notebooks showed, held in the figures' layout values.

Seen in JupyterLab + chromium (1,000 px window; 1,400 px with the file browser open):
about 150 px of white under each ranking of the network overview; the gas-scheme
season panels writing the gas names on end; the ion balance's log axes labelled at
every digit; figures placed directly in a tab swapped at once when opened anew.
"""
import json

import numpy as np
import pandas as pd
import plotly.graph_objects as go
import pytest

from workbench.ui import figures, figures_schemes as fs, figures_wet
from workbench.ui.summaries import network_ranking


def _ranking(n, none=0):
    sites = [f"s{i:02d}" for i in range(n + none)]
    span = pd.DataFrame({"site": sites, "element": "N",
                         "flux_kg_ha_yr": np.r_[np.linspace(30, 5, n), [np.nan] * none],
                         "status": ["complete"] * n + ["missing"] * none,
                         "missing_components": "", "years_used": "2024 2025"})
    return network_ranking(span, "N")


@pytest.mark.parametrize("n", [2, 6, 30])
def test_a_ranking_is_as_tall_as_its_bars(n):
    """Old: height max(420, 240 + 17 n) with a 160 px bottom margin for a note most
    rankings lack: 150 px of white under six bars."""
    fig = figures.network_ranking_bars(_ranking(n), "N")
    lay = fig.layout
    assert not any("No total" in (a.text or "") for a in lay.annotations)
    plot = lay.height - lay.margin.t - lay.margin.b
    assert lay.margin.b <= figures.RANK_AXIS_PX            # numbers and axis title only
    assert plot >= figures.RANK_BAR_PX * n                  # every bar named (30 sites)
    assert plot <= max(figures.RANK_PLOT_MIN_PX, figures.RANK_BAR_PX * n)


def test_a_ranking_with_a_note_keeps_room_for_it():
    fig = figures.network_ranking_bars(_ranking(4, none=2), "N")
    note = [a for a in fig.layout.annotations if "No total" in (a.text or "")]
    assert len(note) == 1
    lines = note[0].text.count("<br>") + 1
    # the note starts under the axis title and ends inside the figure
    assert -note[0].yshift >= figures.RANK_AXIS_PX
    assert fig.layout.margin.b >= -note[0].yshift + figures.RANK_NOTE_LINE_PX * lines


@pytest.fixture(scope="module")
def scheme_runs():
    from drydep.dry_synthetic import make_met, make_surfaces
    from workbench.drydep import DryOptions, velocities
    surf = make_surfaces()
    met = make_met(surf, hours=24 * 60, seed=3)
    return {s: velocities(met, surf, DryOptions(gas_scheme=s, particles=()))
            for s in ("wesely1989", "zhang2003")}


def test_the_gas_names_of_the_season_panels_stand_level(scheme_runs):
    """Old: upright bars, the gases on the x axis of four ~130 px panels: plotly turned
    the names on end.  Now horizontal bars, the gases on the shared y axis (read level),
    the Vd axes with few numbers and no turn."""
    spec = fs.scheme_vd_spec(scheme_runs, "alder_hill", "conifer_forest")
    lay = spec["layout"]
    assert {d["orientation"] for d in spec["data"]} == {"h"}
    assert all(list(d["y"]) == list(fs.GASES) for d in spec["data"])
    xs = [k for k in lay if k.startswith("xaxis")]
    ys = [k for k in lay if k.startswith("yaxis")]
    assert len(xs) == len(ys) == 4
    assert all(lay[k]["tickangle"] == 0 and lay[k]["nticks"] <= 3 for k in xs)
    assert len({tuple(lay[k]["range"]) for k in xs}) == 1          # one scale, read across
    assert all(lay[k]["autorange"] == "reversed" for k in ys)      # SO2 on top
    # the unit is written once, under the panels
    assert any("cm s-1" in a["text"] for a in lay["annotations"])
    fs.scheme_vd(scheme_runs, "alder_hill", "conifer_forest")      # plotly accepts it


def _labels(low, high, ticks):
    """The labelled values of a plotly log axis from `low` to `high` with `ticks`."""
    if "tickvals" in ticks:
        v = np.asarray(ticks["tickvals"], dtype=float)
        assert ticks["ticktext"] == [f"{x:g}" for x in v]     # written whole
    else:
        k = np.arange(np.floor(np.log10(low)), np.ceil(np.log10(high)) + 1)
        digits = {1: [1], None: range(1, 10)}[ticks.get("dtick")]
        v = np.array([d * 10.0 ** e for e in k for d in digits])
    return v[(v >= low) & (v <= high)]


#: Room of a tick label on a log axis [px]: up to four digits at plotly's 12 px font
#: (~7 px each) and a gap (common practice; seen in the browser).
LABEL_PX = 36
#: Plot width of the site explorer's figures [px]: 660 less plotly's margins and the
#: legend of the ion balance (~200 px).
PLOT_PX = 660 - 160 - 200


@pytest.mark.parametrize("low, high", [(1.0, 15.0), (0.7, 300.0), (0.5, 4000.0)])
def test_log_axis_labels_leave_room(low, high):
    ticks = figures_wet.log_ticks(low, high)
    labels = _labels(low, high, ticks)
    assert len(labels) >= 2                          # something to read the scale by
    assert len(labels) * LABEL_PX <= PLOT_PX
    assert ticks["minor"]["ticks"] == "outside"      # the digits still ticked, unlabelled
    # plotly's own choice in a plot this wide labelled every digit (the defect)
    assert len(_labels(low, high, {})) * LABEL_PX > PLOT_PX or high / low < 20


def test_the_ion_balance_uses_the_thinned_ticks(session):
    screened = session.run(session.baseline, "ridge", 2021, 2021, "year", None).screened
    spec = figures_wet.ion_balance_spec(screened, "ridge")
    for ax in ("xaxis", "yaxis"):
        assert spec["layout"][ax]["type"] == "log"
        assert spec["layout"][ax].get("dtick") == 1 or "tickvals" in spec["layout"][ax]
    json.dumps(spec["layout"])


def test_figures_in_the_site_explorers_tabs_sit_in_a_box_of_their_own(session):
    """Defect: a figure directly in a Tab was swapped at once when opened anew (an empty
    box until plotly had drawn); in a page of its own it keeps its old drawing."""
    import ipywidgets as widgets

    from workbench.ui.apps import SiteExplorer
    app = SiteExplorer(session, site="ridge", years=(2021, 2021))
    for child in app.tabs.children:
        assert not isinstance(child, go.FigureWidget)
    # a page may hold its figure's box beside a note (monthly fluxes, excluded samples):
    # the figure's own box is looked for at any depth of the page
    holders = [b for c in app.tabs.children for b in _boxes(c)
               if isinstance(b, widgets.VBox) and b.children
               and any(f is b.children[0] for f in app.figs.values())]
    assert len(holders) >= 5
    for name in ("monthly fluxes", "excluded samples"):
        fig = app.figs[name]
        assert any(b.children == (fig,) for c in app.tabs.children for b in _boxes(c)), name


def _boxes(w):
    """Every box in the widget tree under `w`."""
    import ipywidgets as widgets
    if not isinstance(w, widgets.Box):
        return []
    return [w] + [b for c in w.children for b in _boxes(c)]


def test_the_site_explorer_fits_a_narrow_output_area(session):
    """Defect: beside the open file browser of a 1,000 px window (output area ~570 px,
    measured in chromium) the figure column (min-width 690 px) and its 660 px figures
    ran past the output area.  No box of the explorer may insist on more than the area,
    and its figures take the width of their box."""
    import ipywidgets as widgets

    from workbench.ui.apps import SiteExplorer
    app = SiteExplorer(session, site="ridge", years=(2021, 2021))
    left, right = app.children[-2].children           # the assumptions, the figures
    assert right.layout.min_width == "0" and right.layout.max_width == "100%"
    assert left.layout.max_width == "100%"
    for w in (app.save_path_w, app.export_path_w):
        assert w.layout.max_width == "100%"
    from workbench.ui import apps
    assert apps.FIGURE_WIDTH <= apps.NARROW_OUTPUT_PX - apps.TAB_PADDING_PX
    figs = [*app.figs.items(), *(("schemes " + k, f) for k, f in app.schemes.figs.items())]
    assert len(figs) >= 8
    for name, f in figs:
        assert f.layout.width == apps.FIGURE_WIDTH, name
        holder = [b for b in _boxes(app) if any(c is f for c in b.children)]
        assert len(holder) == 1 and holder[0].layout.overflow == "auto hidden", name
    app.unit_w.value = "eq/ha/yr"                        # an update keeps the width
    assert app.figs["budget"].layout.width == apps.FIGURE_WIDTH


def test_the_other_apps_figures_scroll_in_their_own_box(session, two_sites_2021):
    """plotly 7.1 draws a figure without a width at the output area's width, or at its
    700 px fallback where it cannot tell (seen in chromium beside an open file browser:
    the network totals and the sensitivity curves cut at 568 px).  Each figure sits in
    a box of its own that scrolls a wider figure instead of cutting it."""
    from workbench.ui.apps import NetworkOverview, SensitivityExplorer
    from workbench.ui.session import Session
    sens = SensitivityExplorer(session, site="ridge", years=(2021, 2021), run=False)
    net = NetworkOverview(Session.open(two_sites_2021))
    for app, figs in ((sens, [sens.fig]), (net, [net.figs["totals"]])):
        for f in figs:
            holder = [b for b in _boxes(app) if any(c is f for c in b.children)]
            assert len(holder) == 1 and holder[0].layout.overflow == "auto hidden"
    head = [b for b in net.children if any(c is net.progress for c in getattr(b, "children", ()))]
    assert head[0].layout.flex_flow == "row wrap"          # "ready (15.01 s)" was cut
    # the trend table's heading was cut where the table made its box wider than the area
    assert net.analysis_w.layout.max_width == net.apart_w.layout.max_width == "calc(100% - 4px)"
