"""What a new user met on the invented Haddermoor network (tests/haddermoor_net.py): a
coastal grass site with sea salt beside an inland farm with hourly air and no pNa.

Each test failed on the code before its fix (dd2632a)."""
import warnings

import numpy as np
import pandas as pd
import pytest

from haddermoor_net import make_haddermoor


@pytest.fixture(scope="module")
def haddermoor(tmp_path_factory):
    """(scenario path, budget.csv as a frame, study) of one run of the network."""
    from workbench.cli import run_scenario
    scenario = make_haddermoor(tmp_path_factory.mktemp("haddermoor"))
    out = scenario.parent / "run"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        _, _, study = run_scenario(scenario, out, quiet=True)
    return scenario, pd.read_csv(out / "budget.csv", dtype={"period": str}), study


def test_split_notes_keeps_a_parenthesis_whole():
    from workbench.budgetstatus import split_notes
    assert split_notes("x: a (b; c); d") == ["x: a (b; c)", "d"]
    assert split_notes("a; b") == ["a", "b"]
    assert split_notes("a (b) c; d (e; f; g)") == ["a (b) c", "d (e; f; g)"]
    assert split_notes(float("nan")) == ["nan"] and split_notes("") == []


def test_sum_and_span_notes_keep_their_parentheses_whole(haddermoor):
    """The notes of the pSO4 without pNa ("(sea salt included, an upper bound; small
    inland)") and of a sample whose -999 sodium was masked ("(from ... line 4; 25.5 % of
    the precipitation)") hold "; " inside a parenthesis.  Gathering them on the sum rows
    and the whole-span rows cut them there: "an upper bound; pSO4: small inland)" on a
    sum row, "an upper bound; every year used: pSO4: small inland)" on a span row."""
    _, b, _ = haddermoor
    notes = b["note"].fillna("")
    assert not notes.str.contains(r"; (?:every year used: )?(?:\d{4} )*pSO4: small inland").any()
    assert not notes.str.contains(r"line 4; (?:\d{4}: )?SO4: ").any()
    # the whole-span row gathers the yearly notes part by part (workbench.tables); the
    # network's eight weeks make no span, so its yearly rows are given here
    from workbench.tables import _notes_by_year
    sums_note = pso4 = ("pSO4: no pNa measured at the site: total pSO4 used in place of "
                        "non-sea-salt pSO4 (sea salt included, an upper bound; small inland)")
    years = pd.DataFrame({"site": "tillby", "receptor": "crops", "year": [2021, 2022, 2023],
                          "note": [pso4, pso4 + "; SO4: 3 flagged samples kept (5 %)", pso4]})
    span = _notes_by_year(years, ["site", "receptor"]).loc[("tillby", "crops")]
    assert span == ("every year used: " + pso4 + "; 2022: SO4: 3 flagged samples kept (5 %)")
    sums = b[(b["site"] == "tillby") & (b["species"] == "all") & (b["pathway"] == "dry")
             & (b["element"] == "S") & (b["period"] != "span")]
    assert len(sums) and sums["note"].str.contains(
        sums_note, regex=False).all()
    wet = b[(b["site"] == "saltcove") & (b["species"] == "all") & (b["pathway"] == "wet")
            & (b["element"] == "S") & (b["period"] == "2021-01")]
    assert "Na missing in 1 sample with SO4 (from 2021-01-19 line 4; " in wet["note"].iloc[0]
    # every part of every note has its parentheses closed (common practice of a list)
    from workbench.budgetstatus import split_notes
    for text in notes[notes != ""]:
        for part in split_notes(text):
            assert part.count("(") == part.count(")"), (text, part)


def test_sensitivity_rows_only_for_each_sites_own_surfaces(haddermoor):
    """The engine's arrays hold every receptor of the network at every site; the tables
    of `workbench sensitivity` listed saltcove's crops and deciduous_forest (surfaces it
    does not have) with "no deposition velocity for any hour of the period (check the met
    record ...)", a false lead."""
    from workbench.analysis import sensitivity as S
    from workbench.scenario import load_scenario
    scenario, b, study = haddermoor
    sc = load_scenario(scenario)
    base = {"wet": sc.options["wet"], "dry": sc.options["dry"], "budget": sc.options["budget"],
            "fixed_velocity": sc.fixed_velocity}
    kw = {"resolution": "month", "start": "2021-01-01", "end": "2021-03-01"}
    opt = S.SensitivityOptions(factors={"vd_SO2": (0.5, 1.5), "gauge_catch": (0.9, 1.1)})
    torn = S.tornado(study, base, opt, kw)
    own = {("saltcove", "grass"), ("tillby", "crops"), ("tillby", "deciduous_forest")}
    assert set(zip(torn["site"], torn["receptor"])) == own
    assert not torn["note"].fillna("").str.contains("check the met record").any()
    frame = S.sobol(study, base, S.SensitivityOptions(samples=8, factors=opt.factors), kw)
    assert set(zip(frame["site"], frame["receptor"])) <= own


@pytest.fixture
def shell():
    from IPython.core.interactiveshell import InteractiveShell

    from workbench.ui.controls import short_errors
    sh = InteractiveShell.instance()
    assert short_errors()
    yield sh
    sh.set_custom_exc((), None)
    InteractiveShell.clear_instance()


def test_a_notebook_site_of_another_network_is_one_line(haddermoor, shell, capsys):
    """notebooks/critical_loads.ipynb opens with SITE = "ridge" (the demo's): pointed at
    this network's scenario, ipywidgets raised a TraitError traceback ("Invalid
    selection: value not found") and the next cell a NameError."""
    scenario, _, _ = haddermoor
    cell = (f"SCENARIO = {str(scenario)!r}\nSITE = 'ridge'\n"
            "from workbench.ui.apps_analysis import CriticalLoadsExplorer\n"
            "app = CriticalLoadsExplorer.from_scenario(SCENARIO, site=SITE)\napp\n")
    shell.run_cell(cell)
    out = capsys.readouterr().out
    assert (f"ScenarioError: {scenario}: SITE (the notebook's first cell, or the app's site) "
            "is not a site of this scenario: got 'ridge', expected one of saltcove, tillby, "
            "or None for the first site with data") in out, out
    assert "Traceback" not in out and "TraitError" not in out
    shell.run_cell("print(app.statement)")
    out = capsys.readouterr().out
    assert "Nothing to show: 'app' was not made" in out and "NameError" not in out


@pytest.mark.parametrize("app", ["SiteExplorer", "SensitivityExplorer", "SobolExplorer"])
def test_every_app_names_a_site_it_does_not_have(haddermoor, app):
    import workbench.ui.app_sobol as sobol_module
    import workbench.ui.apps as apps
    from workbench.errors import ScenarioError
    from workbench.ui.session import Session
    scenario, _, _ = haddermoor
    with pytest.raises(ScenarioError, match=r"got 'Tillby', expected one of saltcove, tillby "
                                            r"\(did you mean 'tillby'\?\)"):
        if app == "SobolExplorer":
            sobol_module.SobolExplorer(Session.open(scenario), site="Tillby", run=False)
        else:
            getattr(apps, app).from_scenario(scenario, site="Tillby")


def test_critical_loads_app_opens_on_the_sites_last_year_not_a_new_years_tail(tmp_path):
    """The trial's scenario leaves [period] to the chemistry's span, which runs to the
    end of the last weekly sample: a few days into the next year.  The critical-loads
    app listed that year and opened on it ("There is no acidity exceedance. There is no
    nutrient-N exceedance." of two days of data) while the site exceeds in its whole
    years; the site-budget app already kept to the years a sample starts in
    (Session.site_years)."""
    import warnings

    from workbench.ui.apps_analysis import CriticalLoadsExplorer
    from workbench.ui.session import Session
    scenario = make_haddermoor(tmp_path, start="2021-10-05T09:00", weeks=13, period=False)
    sites = scenario.parent / "sites.toml"          # saltcove's loads (eq/ha/yr, invented)
    sites.write_text(sites.read_text().replace(
        "coast_distance_km = 1.5\n", "coast_distance_km = 1.5\n\n[site.critical_loads]\n"
        "cl_nut_n = 500.0\n"))
    session = Session.open(scenario)
    # the record reaches 2022-01-04: the default span leaves those days out
    # (workbench.periods.default_span), the app clamps as before
    assert session.study.record_span()[1] > np.datetime64("2022-01-04")
    assert session.years == (2021, 2021)
    assert session.site_years("saltcove") == (2021, 2021)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = CriticalLoadsExplorer(session, site="saltcove")
    assert list(app.year_w.options) == ["2021"] and app.year_w.value == "2021"
    assert "saltcove · grass · 2021" in app.statement
    assert "There is no nutrient-N exceedance" not in app.statement, app.statement
    with warnings.catch_warnings():                  # years asked for: clamped, and said
        warnings.simplefilter("ignore", RuntimeWarning)
        app = CriticalLoadsExplorer(session, site="saltcove", years=(2021, 2022))
    assert list(app.year_w.options) == ["2021"]
    assert "saltcove has samples in 2021 only: years set to 2021" in app.progress.label.value


def test_sensitivity_page_heads_with_the_sites_last_year_not_a_new_years_tail(tmp_path):
    """sensitivity.html shows the first site's last period: with [period] left to the
    chemistry's span that was the few days of the next year that the last weekly sample
    reaches into (its dry S scaled up to a year from a day of air), not the site's last
    year."""
    from workbench.analysis.sensitivity import write_sensitivity
    from workbench.scenario import load_scenario
    scenario = make_haddermoor(tmp_path / "net", start="2021-10-05T09:00", weeks=13,
                               period=False)
    with open(scenario, "a", encoding="utf-8") as f:
        f.write('\n[sensitivity]\nsamples = 8\nsites = ["saltcove"]\n'
                '[sensitivity.factors]\nvd_SO2 = [0.5, 1.5]\ngauge_catch = [0.9, 1.1]\n')
    files = write_sensitivity(load_scenario(scenario), tmp_path / "sens", quiet=True)
    frame = pd.read_csv(files["sensitivity.csv"], dtype={"period": str})
    # the tables hold the years of the default span: 2021 (the four
    # days of 2022 are no period of their own, workbench.periods.default_span)
    assert set(frame["period"]) == {"2021"}
    page = files["sensitivity.html"].read_text(encoding="utf-8")
    page = page.replace("\\u00b7", "·")             # the titles as plotly's JSON writes them
    assert "saltcove · grass · 2021" in page and "saltcove · grass · 2022" not in page
