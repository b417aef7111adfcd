"""Defects seen running the five notebooks in chromium (JupyterLab 4.6, 1,000 and 1,600 px
windows) as a new user, each checked here on the Python side of the app.

- The site explorer's velocity tabs: the title "Deposition velocity, mean diurnal cycle ·
  ridge · conifer_forest · 2023" (71 characters) ran past the 520 px figure's right edge
  and was cut ("... · mere · wetland · 2021-20"); their years were written "2021-2023"
  beside the budget's "2021–2023".
- The critical-loads explorer's path table read "-0" in the row where an exceedance ends
  for a group that is not cut.
- "Export figures" wrote seven PNG files in 35 s with nothing on the page: no message, the
  button still clickable.
"""
import warnings

import numpy as np
import plotly.graph_objects as go
import pytest

from workbench.analysis.whatif import percent_up


def _lines(title):
    return str(title).split("<br>")


#: Most characters of a title line in a 520 px figure: 90 % of it at 7.8 px a character
#: (measured in chromium: 66 characters of plotly's 17 px title font drew 513 px).
CHARS_520 = int(0.9 * 520 / 7.8)


def test_a_long_title_is_broken_after_its_what():
    from workbench.ui.figure_period import TITLE_CHAR_PX, fit_title, title_chars
    assert title_chars(520) == CHARS_520
    t = "Resistances of NH3 (medians by hour) · mere · wetland · 2021–2023"
    fitted = fit_title(t, 520)
    assert _lines(fitted) == ["Resistances of NH3 (medians by hour)", "mere · wetland · 2021–2023"]
    # each line within the figure: measured 7.8 px a character (66 characters, 513 px)
    assert all(len(x) * TITLE_CHAR_PX <= 0.9 * 520 for x in _lines(fitted))
    assert fit_title("Budget · ridge · conifer_forest · 2023", 520) == \
        "Budget · ridge · conifer_forest · 2023"                   # fits: left alone
    long_what = "word " * 30 + "· site · 2023"
    assert all(len(x) <= title_chars(520) for x in _lines(fit_title(long_what, 520)))


@pytest.fixture(scope="module")
def explorer(session):
    from workbench.ui.apps import SiteExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return SiteExplorer(session, site="ridge", years=(2020, 2021))


@pytest.mark.parametrize("tab", ["deposition velocity", "resistances", "budget",
                                 "ion balance", "capture efficiency", "excluded samples"])
def test_every_title_of_the_site_explorer_fits_its_figure(explorer, tab):
    from workbench.ui.apps import FIGURE_WIDTH
    layout = explorer._figure(tab)["layout"]
    title = layout["title"]["text"]
    assert FIGURE_WIDTH == 520
    assert all(len(x) <= CHARS_520 for x in _lines(title)), title
    assert "2020–2021" in title or tab not in ("deposition velocity", "resistances")
    if "<br>" in title:                 # room above the panels for the second line
        assert layout["margin"]["t"] >= 100


def test_the_velocity_tabs_write_the_years_as_the_budget_does(explorer):
    assert explorer._span() == "2020–2021"
    budget = explorer._figure("budget")["layout"]["title"]["text"]
    velocity = explorer._figure("deposition velocity")["layout"]["title"]["text"]
    assert budget.endswith("2020–2021") and velocity.endswith("2020–2021")


def test_a_cut_of_zero_needed_reads_0_not_minus_0():
    assert str(percent_up(np.array([0.0, 0.5]))[0]) == "0.0"
    assert not np.signbit(percent_up(np.array([0.0]))).any()
    assert percent_up(0.0) == 0 and str(percent_up(0.0)) == "0"


def test_the_path_table_has_no_negative_zero():
    import pandas as pd
    from workbench.ui.apps_analysis_words import PATH_COLUMNS, path_display
    row = {c: 100.0 for c in PATH_COLUMNS}
    row.update(fraction=0.027, cut_S=0.02, cut_NOx=0.0, cut_NHx=0.018, ends_exceedance=True)
    shown = path_display(pd.DataFrame([row]))
    assert not np.signbit(shown["cut oxidized N [%]"].to_numpy(float)).any()


def test_export_says_it_is_writing_and_holds_the_button(tmp_path, monkeypatch):
    from workbench.ui import export_controls
    from workbench.ui.export_controls import FigureExport
    seen = []

    def slow_write(fig, path, *a, **k):         # what the page shows while a file is written
        seen.append((control.message_w.value, control.button_w.disabled))
        path.write_text("x")
        return path

    def slow_batch(items, *a, **k):             # PNGs: all in one kaleido session
        return [slow_write(fig, path) for fig, path in items]

    monkeypatch.setattr(export_controls, "export_figure", slow_write)
    monkeypatch.setattr(export_controls, "export_figures", slow_batch)
    control = FigureExport(lambda: {"a": go.Figure(), "b": go.Figure()}, "app",
                           folder=lambda: tmp_path)
    control.button_w.click()
    assert len(seen) == 2
    for message, disabled in seen:
        assert message.startswith("writing 2 figures as PNG into") and str(tmp_path) in message
        assert disabled
    assert not control.button_w.disabled                       # free again after
    assert control.message_w.value.startswith("2 figures written to")


def test_a_failed_export_leaves_no_writing_message(tmp_path, monkeypatch):
    from workbench.ui import export_controls
    from workbench.ui.export_controls import FigureExport

    def broken(fig, path, *a, **k):
        raise OSError("disk full")

    monkeypatch.setattr(export_controls, "export_figure", broken)
    control = FigureExport(lambda: {"a": go.Figure()}, "app", folder=lambda: tmp_path)
    with pytest.raises(OSError):
        control.export()
    assert "not written" in control.message_w.value and "disk full" in control.message_w.value
    assert not control.button_w.disabled


def test_the_range_shares_of_the_critical_loads_explorer_are_in_eq():
    """The critical-loads explorer writes every deposition in eq/ha/yr; its table of the
    range's shares read "5 % alone [kg N/ha]" (dry N) under "N 1196-5761 eq/ha/yr"
    (total N), its first row named "every factor (the range shown)"."""
    import pandas as pd
    from workbench.ui.range_shares_panel import shares_display
    s = pd.DataFrame({"site": "s", "receptor": "grass", "period": "2021",
                      "total": ["N_total", "S_total"], "factor": "all", "part_of": "",
                      "variance_share": 1.0, "log_variance_share": 1.0, "alone_p05": 1.0,
                      "alone_p50": 2.0, "alone_p95": 14.007, "unit": "kg ha-1"})
    n = shares_display(s, "grass", "2021", "N_total", eq=True)
    # 1 kg N = 1000 / 14.007 mol = 71.39 eq (N: 1 eq per mol; IUPAC atomic weight 14.007)
    assert n["5 % alone [eq/ha]"].iloc[0] == pytest.approx(1000 / 14.007, rel=1e-3)
    assert n["95 % alone [eq/ha]"].iloc[0] == pytest.approx(1000, rel=1e-3)
    # 1 kg S = 1000 / 32.06 mol = 62.38 eq (sulfate: 2 eq per mol; atomic weight 32.06)
    s_ = shares_display(s, "grass", "2021", "S_total", eq=True)
    assert s_["5 % alone [eq/ha]"].iloc[0] == pytest.approx(2000 / 32.06, rel=1e-3)
    assert "5 % alone [kg N/ha]" in shares_display(s, "grass", "2021", "N_total").columns


def test_the_critical_loads_explorer_explains_the_range_it_shows(two_sites_2021):
    from workbench.ui.apps_analysis import CriticalLoadsExplorer
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = CriticalLoadsExplorer(Session.open(two_sites_2021), site="ridge")
    assert app.shares_w.total_w.value == "N_total" and app.shares_w.eq
