"""Room for what a figure writes (seen in the browser on the demo network): the budget's
legend of 11 components ran behind a scroll bar (wet NO3 and the total hidden), and the
percentages of the scheme difference were cut at the right edge or written over the
tick labels at the left."""
import warnings

import numpy as np
import pytest

from workbench.ui import figures, figures_schemes


def test_budget_legend_fits(session):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        res = session.run(session.baseline, "ridge", 2021, 2021, "year")
    spec = figures.budget_bars_spec(res.years, "ridge", "conifer_forest", None)
    # entries (the totals of S and N: one), two group titles, the title
    entries = [t for t in spec["data"] if t.get("showlegend", True) is not False]
    lines = len(entries) + 2 + 1
    assert len(entries) == 11 and len(spec["data"]) == 12
    plot_area = spec["layout"]["height"] - 180      # plotly's default top and bottom margins
    assert plot_area >= figures.LEGEND_LINE_PX * lines
    assert figures.legend_height(2) == figures.HEIGHT      # small legends: the usual height


@pytest.mark.parametrize("x", [[2.42, 2.42, -0.12, 0.0, -0.013, 2.0], [-3.0, -1.0], [0.5, 1.0],
                               [None, 0.0]])
def test_difference_labels_have_room(x):
    rng = figures_schemes.label_room(x)
    v = [u for u in x if u is not None]
    span = max(max(v), 0) - min(min(v), 0) or 1.0
    assert rng[0] <= min(min(v), 0) and rng[1] >= max(max(v), 0)
    if min(v) < 0:
        assert min(v) - rng[0] >= 0.2 * span        # room for "-15 %" left of the bar
    if max(v) > 0:
        assert rng[1] - max(v) >= 0.2 * span        # room for "+11 %" right of the bar
    assert np.all(np.isfinite(rng))


def test_difference_spec_uses_the_room():
    import pandas as pd
    t = pd.DataFrame({"wesely1989": [22.3, 0.78], "zhang2003": [24.7, 0.66],
                      "element": ["N", "N"], "difference": [2.42, -0.12],
                      "percent": [10.8, -15.4]}, index=["N dry", "dry HNO3"])
    spec = figures_schemes.budget_change_spec(t, "farm", "crops")
    lo, hi = spec["layout"]["xaxis"]["range"]
    assert lo < -0.12 - 0.2 * 2.54 and hi > 2.42 + 0.2 * 2.54


def test_years_readout_has_room(session):
    """The default 300 px slider cut the readout to '2023 – 202' (sensitivity, Sobol)."""
    from workbench.ui.app_sobol import SobolExplorer
    from workbench.ui.apps import SiteExplorer
    from workbench.ui.apps_more import SensitivityExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        apps = [SiteExplorer(session, site="ridge", years=(2021, 2021)),
                SensitivityExplorer(session, site="ridge", years=(2021, 2021), run=False),
                SobolExplorer(session, site="ridge", years=(2021, 2021))]
    for app in apps:
        assert int(app.years_w.layout.width.rstrip("px")) >= 360, type(app).__name__


def test_nitrogen_panel_has_room_for_its_axis_title():
    """The sensitivity curves and the network totals: the nitrogen panel's y title and
    ticks sit in the gap between the panels (they overlapped at the default gap)."""
    import pandas as pd
    sweep = pd.DataFrame({"value": [0.1, 0.2] * 6, "total": sorted(
        [f"{e}_{p}" for e in "SN" for p in ("wet", "dry", "total")] * 2),
        "rate": np.arange(12.0), "status": "complete"})
    net = pd.DataFrame({"site": "ridge", "period": ["2020", "2021"] * 2,
                        "element": ["S", "S", "N", "N"], "value": [30.0, 31.0, 250.0, 240.0],
                        "rankable": True, "status": "complete", "missing": ""})
    fig = figures.sensitivity_curves(sweep, "x", 0.1, "mmol/m2/yr")
    gap = fig.layout.xaxis2.domain[0] - fig.layout.xaxis.domain[1]
    assert gap >= figures.PANEL_GAP - 1e-9 >= 0.15
    # the network's totals: one panel above the other, the gap between them holds the
    # sulfur panel's years and the nitrogen panel's title (about 60 px)
    fig = figures.network_totals(net, "mmol/m2/yr")
    gap = fig.layout.yaxis.domain[0] - fig.layout.yaxis2.domain[1]
    assert gap * fig.layout.height >= 60


def test_legends_of_the_velocity_and_excluded_figures_fit(session):
    """Seen in the browser on the demo: the diurnal Vd legend of 7 species ran behind a
    scroll bar (pNH4 hidden) in a 380 px figure, and the 'excluded' entry of the
    reasons figure was cut.  Each figure is now tall enough for its whole legend."""
    from workbench.ui import figures_dry, figures_wet
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        res = session.run(session.baseline, "ridge", 2021, 2021, "month")
    rec = str(res.velocities["receptor"].values[0])
    specs = [figures_dry.velocity_diurnal_spec(res.velocities, "ridge", rec, utc_offset_h=1.0),
             figures_dry.resistance_breakdown_spec(res.velocities, "ridge", rec, "SO2", 1.0),
             figures_wet.excluded_by_reason_spec(res.screened, "ridge")]
    shown = [len({t["name"] for t in s["data"] if t.get("showlegend", True)}) for s in specs]
    assert shown[0] == len(figures_dry.DRY_SPECIES) and shown[2] == 2
    lines = (figures_dry.LINE_LEGEND_PX, figures_dry.LINE_LEGEND_PX, figures.LEGEND_LINE_PX)
    for spec, entries, px in zip(specs, shown, lines):
        need = figures.LEGEND_FRAME_PX + px * (entries + 1)
        assert spec["layout"]["height"] >= need, (spec["layout"]["title"], entries)
    assert figures_dry.LINE_LEGEND_PX >= 29        # measured spacing of line entries
