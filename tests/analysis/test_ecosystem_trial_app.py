"""The critical-loads explorer on an ecosystem-effects group's own receptors at the
demo's mere site (its N total is partial: no NO2): a heathland-like wetland with a
nutrient-N load only, a lake (water) with an acidity function only, set so high that no
Monte Carlo draw exceeds it (invented values, eq/ha/yr)."""
import warnings

import pytest

OWN_LOADS = """
[site.critical_loads.wetland]   # nutrient N only
cl_nut_n = 600.0

[site.critical_loads.water]     # acidity function only, far above the deposition
cl_max_s = 5000.0
cl_min_n = 3000.0
cl_max_n = 9000.0
"""


@pytest.fixture(scope="module")
def mere_app(tmp_path_factory):
    from ui.demo_subset import write_demo_subset

    from workbench.ui.apps_analysis import CriticalLoadsExplorer
    from workbench.ui.session import Session
    path = write_demo_subset(tmp_path_factory.mktemp("trial"), ("mere",), 2021, 2021)
    sites = path.parent / "sites.toml"
    text = sites.read_text(encoding="utf-8")
    i = text.index('id = "mere"')
    j = text.index("[site.critical_loads]", i)
    k = text.index("[[site]]", j)
    sites.write_text(text[:j] + OWN_LOADS.lstrip() + "\n" + text[k:], encoding="utf-8")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return CriticalLoadsExplorer(Session.open(path), site="mere")


def test_partial_deposition_never_reads_probability_0(mere_app):
    """No draw exceeds the lake's function, but the deposition is partial (a lower
    bound): the probability is not determined, as in exceedance.csv; it read
    "probability of acidity exceedance 0.00" in the sentence and in the figure."""
    app = mere_app
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app.receptor_w.value = "water"
        app.range_w.value = True
    assert "probability of acidity exceedance 0.00" not in app.statement
    assert "probability of acidity exceedance not determined" in app.statement
    assert "nutrient-N exceedance" not in app.range_text     # the lake has no such load
    names = [t.name for t in app.fig.data]
    assert not any("probability of acidity exceedance 0" in n for n in names), names
    assert "acidity exceedance not determined" in app.exceedance_words


def test_receptor_with_a_nutrient_n_load_only(mere_app):
    """A heathland's only load is nutrient N: the explorer said "no complete critical
    load function in sites.toml" and showed neither its nutrient-N exceedance nor a
    cut that ends it."""
    from workbench.analysis.exceedance import nutrient_n_exceedance
    app = mere_app
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app.range_w.value = False
        app.receptor_w.value = "wetland"
    first = app.path.iloc[0]
    ex = float(nutrient_n_exceedance(first["n_dep_eq_ha_yr"], 600.0))
    assert ex > 0
    assert f"nutrient-N exceedance at least {ex:.0f} eq/ha/yr" in app.exceedance_words
    assert "acidity exceedance not computed (no complete critical load function" \
        in app.exceedance_words
    assert "ends the nutrient-N exceedance" in app.statement
    assert any(t.name.startswith("nutrient-N critical load (600") for t in app.fig.data)


def test_network_table_carries_the_exceedance_note(analysis_scenario):
    """The network overview's exceedance of mere's span (N partial: no NO2) showed a bare
    number or "–" with the status "flagged"; the note of exceedance.csv now stands
    beside it ("lower bounds" or "not determined")."""
    from workbench.ui.apps_analysis import network_analysis_table
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        session = Session.open(analysis_scenario)
        results = {"mere": session.run(session.baseline, "mere", *session.years, "year")}
        row = network_analysis_table(results, session.study.catalogue()).iloc[0]
    # the budget's own status of the totals (it read exceedance.csv's "flagged" for a
    # partial N total); the exceedance's rule stays in its note and exceedance.csv
    assert row["totals_status"].endswith("N partial (no NO2)"), row["totals_status"]
    assert "flagged" not in row["totals_status"]
    note = row["exceedance_note"]
    assert "N total partial (without NO2)" in note, note
    assert ("exceedances are lower bounds (deposition partial)" in note
            or "not determined (0 on the partial deposition)" in note), note
