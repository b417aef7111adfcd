"""A site that does not measure everything: no NH3 column in its air file and a bulk
collector (docs/data_formats.md: a species column may be absent; `collector = "bulk"`).
The explorer says "not measured" and "in the bulk collector's wet" where it said "no
data" or showed a bare 0 marked complete (seen in the browser on such a scenario)."""
import warnings

import pytest

from ui.demo_subset import write_gap_site


@pytest.fixture(scope="module")
def gap_app(tmp_path_factory):
    from workbench.ui.apps import SiteExplorer
    sc = write_gap_site(tmp_path_factory.mktemp("gap"))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return SiteExplorer.from_scenario(sc, site="ridge", years=(2021, 2021))


def _trace(app, name):
    return next(t for t in app.figs["budget"].data if t.name == name)


def test_unmeasured_nh3_is_said_not_measured(gap_app):
    note = gap_app.figs["budget"].layout.annotations[0].text
    assert "not measured: dry NH3" in note and "no data" not in note
    nh3 = _trace(gap_app, "dry NH3")
    assert nh3.y[0] is None                                   # no bar, never a 0
    assert nh3.customdata[0].startswith("not measured at the site")
    n_total = [t for t in gap_app.figs["budget"].data if t.name == "total"][1]   # N's panel
    assert "not measured at the site: NH3" in n_total.customdata[0]
    assert "not measured at this site" in gap_app.nh3_w.value
    # the bracket says which member is missing, not "budget.nc's bracket_*_note says"
    assert "bracket not computed for these years (NH3 not measured at the site)" \
        in gap_app.bracket_w.value


def test_bulk_caught_particles_are_named_in_the_wet(gap_app):
    note = gap_app.figs["budget"].layout.annotations[0].text.replace("<br>", " ")
    assert "in the bulk collector's wet: dry pSO4, dry pNO3, dry pNH4" in note
    p = _trace(gap_app, "dry pSO4")
    assert p.y[0] == 0                                       # its mass is in wet SO4
    assert "caught by the bulk collector" in p.customdata[0].replace("<br>", " ")


def test_a_long_legend_note_gets_room(gap_app):
    from workbench.ui.figures import LEGEND_FRAME_PX, LEGEND_LINE_PX
    lay = gap_app.figs["budget"].layout
    lines = lay.annotations[0].text.count("<br>") + 1
    # the legend's entries (the totals of S and N: one) and two group titles
    entries = len([t for t in gap_app.figs["budget"].data if t.showlegend is not False]) + 2
    assert lay.height >= LEGEND_FRAME_PX + LEGEND_LINE_PX * (entries + lines - 1)


def test_sobol_names_the_factors_without_effect_and_why(gap_app):
    """vd_NH3 and the particle Vd factors had empty bars (index 0) and no word why."""
    from workbench.ui.app_sobol import SAMPLES, SobolExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        sob = SobolExplorer(gap_app.session, site="ridge", years=(2021, 2021),
                            samples=min(SAMPLES))
    text = sob.idle_w.value
    assert "vd_NH3 (not measured at the site)" in text
    assert "vd_pSO4, vd_pNO3, vd_pNH4 (caught by the bulk collector" in text
    assert "vd_SO2" not in text and "gauge_catch" not in text      # those move totals


def test_idle_factors_text_without_a_known_reason():
    import pandas as pd

    from workbench.ui.no_effect import idle_factors_text
    tor = pd.DataFrame({"factor": ["vd_SO2", "vd_NO2", "air_conc"],
                        "output_low": [1.0, 2.0, 3.0], "output_high": [1.5, 2.0, 3.0],
                        "output_base": [1.2, 2.0, 3.0]})
    comps = pd.DataFrame({"pathway": ["dry", "dry"], "species": ["SO2", "NO2"],
                          "note": ["", ""]})
    assert idle_factors_text(tor, comps) == ("No effect on any total of this site and these "
                                             "years (index 0, no bar): vd_NO2, air_conc.")
    assert idle_factors_text(tor.iloc[:1], comps) == ""


def test_critical_loads_never_say_no_exceedance_of_a_partial_deposition(tmp_path):
    """Without NH3 the N deposition is a lower bound: the statement said "There is no
    acidity exceedance." under a line saying "not determined" (v06 of the analyst
    network in the browser)."""
    import re

    from workbench.ui.apps_analysis import CriticalLoadsExplorer
    sc = write_gap_site(tmp_path / "gap")
    toml = sc.parent / "sites.toml"
    text = toml.read_text()
    for key in ("cl_max_s", "cl_max_n", "cl_nut_n"):             # loads far above it
        text = re.sub(rf"^{key} = .*$", f"{key} = 90000.0", text, flags=re.M)
    toml.write_text(text)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = CriticalLoadsExplorer.from_scenario(sc, site="ridge")
    assert "There is no" not in app.statement
    assert "No acidity exceedance of the deposition as measured, which is partial" \
        in app.statement
    assert "not determined" in app.exceedance_words
