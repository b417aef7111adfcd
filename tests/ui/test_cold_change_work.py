"""The work a cold change of the site explorer does for the N split and the dry-N
bracket, counted: the status of the derived sums without pandas pivots (before: three
per change, about 10 % of it), the bracket without relabelling the period axes (before:
four relabellings per call, on every redraw), and the parts' rows without the columns
nobody reads (docs/performance.md, "The cold change without its repeated work").  The
numbers are checked against the earlier formulas, kept here as references."""
import warnings

import numpy as np
import pandas as pd
import pytest
import xarray as xr

pytestmark = pytest.mark.filterwarnings("ignore::RuntimeWarning")

def _pivot_status(table: pd.DataFrame) -> pd.DataFrame:
    """The earlier derived_status: each part's status, pass and words by a pandas pivot
    of the rows (the first given per site, receptor, period and species)."""
    from workbench.budget import DERIVED_PARTS, combine_status
    from workbench.budget_totals import _first_failure, _joined_names
    comp = table[(table["species"] != "all") & (table["period"] != "span")]
    key = ["site", "receptor", "period"]
    ok = (comp["passes"].astype(str).str.lower().isin(("true", "1")) if "passes" in comp
          else ~comp["status"].astype(str).isin(("flagged", "missing")))
    why = (comp["completeness_failure"].fillna("").astype(str) if "completeness_failure"
           in comp else pd.Series("", index=comp.index))
    parts_of = comp[key + ["species"]].assign(_ok=ok.to_numpy(), _why=why.to_numpy())
    st = comp.pivot_table(index=key, columns="species", values="status", aggfunc="first",
                          observed=True)
    okw = parts_of.pivot_table(index=key, columns="species", values="_ok", aggfunc="first",
                               observed=True).reindex(index=st.index)
    whyw = parts_of.pivot_table(index=key, columns="species", values="_why",
                                aggfunc="first", observed=True).reindex(index=st.index)
    out = pd.DataFrame(index=st.index)
    for name, parts in DERIVED_PARTS.items():
        sub = st.reindex(columns=list(parts)).fillna("missing").to_numpy(object)
        out[f"{name}_status"], _ = combine_status(sub)
        out[f"{name}_missing_components"] = _joined_names(sub == "missing", parts)
        present = sub != "missing"
        fails = present & ~okw.reindex(columns=list(parts)).fillna(True).to_numpy(bool)
        words = whyw.reindex(columns=list(parts)).fillna("").to_numpy(object)
        out[f"{name}_passes"] = ~fails.any(-1) & present.any(-1)
        out[f"{name}_completeness_failure"] = _first_failure(fails, words,
                                                             np.asarray(parts, dtype=object))
    return out.reset_index()


@pytest.fixture(scope="module")
def app(session):
    from workbench.ui.apps import TABS, SiteExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        a = SiteExplorer(session, site="ridge", years=(2021, 2021))
        a.tabs.selected_index = TABS.index("monthly fluxes")
        a.redraw()
    return a


def test_a_cold_change_pivots_nothing_and_relabels_no_axis(app, monkeypatch):
    """A cold change of a dry option (monthly tab shown): no pandas pivot (three before,
    for the status of the derived sums) and no relabelling of a period axis in the
    bracket (four before); the bracket's and the split's stages run once."""
    calls = {"pivot_table": 0, "assign_coords": 0}
    real_pivot = pd.DataFrame.pivot_table
    real_assign = xr.DataArray.assign_coords

    def pivot_table(self, *a, **k):
        calls["pivot_table"] += 1
        return real_pivot(self, *a, **k)

    def assign_coords(self, *a, **k):
        calls["assign_coords"] += 1
        return real_assign(self, *a, **k)
    monkeypatch.setattr(pd.DataFrame, "pivot_table", pivot_table)
    monkeypatch.setattr(xr.DataArray, "assign_coords", assign_coords)
    g = app.result.graph
    before = {k: g.counts[k] for k in ("derived", "part_rows", "year_rates")}
    ctl = app.controls["particles.coarse_mmd"]
    ctl.value = round(ctl.value * 1.0913, 6)                 # a value not seen before
    assert calls == {"pivot_table": 0, "assign_coords": 0}
    assert {k: g.counts[k] - before[k] for k in before} == {
        "derived": 1, "part_rows": 1, "year_rates": 1}
    app.reset()


def test_the_status_of_the_sums_is_the_pivots(app):
    """derived_status gives, for each sum, the status, pass and words the pivots of the
    rows give: on the app's budget.csv rows and on rows with statuses not given, rows
    twice (the first kept), categorical keys and no ``passes`` column."""
    from workbench.budget import derived_status
    base = app.result.table
    rng = np.random.default_rng(7)
    odd = base.copy()
    odd.loc[rng.random(len(odd)) < 0.2, "status"] = np.nan
    twice = pd.concat([odd, base.sample(frac=0.3, random_state=1)]).sample(
        frac=1, random_state=2)
    cats = base.astype({k: "category" for k in ("site", "receptor", "period", "species")})
    bare = base.drop(columns=["passes"])
    for table in (base, odd, twice, cats, bare):
        pd.testing.assert_frame_equal(derived_status(table), _pivot_status(table),
                                      check_exact=True)


def _relabelled(years, derived, site, receptor, unit):
    """The earlier bracket ends: the period axes relabelled to text, picked by label."""
    from workbench.ui.bracket import BRACKET_VARS, _kg_ha_to_mol_m2
    from workbench.ui.summaries import to_unit, total_rates
    t = total_rates(years, site, receptor, None, unit)
    periods = [str(p) for p in t[t["total"] == "N_dry"]["period"]]
    out = []
    for var in BRACKET_VARS:
        da = derived[var].sel(site=site, receptor=receptor)
        da = da.assign_coords(period=da["period"].astype(str)).sel(period=periods)
        fac = years["annual_factor"].assign_coords(
            period=years["period"].astype(str)).sel(period=periods).values
        rate = to_unit(_kg_ha_to_mol_m2(da.values), "N", unit) * fac
        out.append(float(np.nanmean(rate)) if np.isfinite(rate).any() else float("nan"))
    return out


@pytest.mark.parametrize("years", [(2021, 2021), (2020, 2021)])
def test_the_bracket_picks_what_the_relabelling_picked(session, years):
    """The bracket's ends of every receptor, in two units, equal bit for bit those of the
    relabelled axes (the years' derived quantities, and the months' of a monthly run,
    derived again from the years)."""
    from workbench.budget import derived
    from workbench.ui.bracket import dry_n_bracket
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        r = session.run(session.baseline, "ridge", *years, "month")
    for rec in r.years["receptor"].values:
        for unit in ("kg/ha/yr", "eq/ha/yr"):
            for dv in (r.year_derived, r.derived):
                b = dry_n_bracket(r.years, dv, "ridge", str(rec), unit)
                ref = _relabelled(r.years, derived(r.years), "ridge", str(rec), unit)
                np.testing.assert_array_equal([b["all_particle"], b["all_gas"]], ref)


def test_the_parts_rows_are_budget_csvs_without_the_unread_columns(session):
    """The ``part_rows`` stage: budget.csv's component rows (same rows, order and values
    in its columns) without the deposition, its units and fractions (built before and
    read by nothing there)."""
    from workbench.tables import budget_table
    from workbench.tables_budget import component_rows
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        r = session.run(session.baseline, "ridge", 2020, 2021, "month")
    for ds in (r.years, r.budget):
        rows = component_rows(ds)
        assert not {"flux_kg_ha", "flux_eq_ha_yr", "completeness", "note"} & set(rows)
        assert {"site", "receptor", "period", "species", "status", "passes",
                "completeness_failure"} <= set(rows)
        full = budget_table(ds)
        full = full[full["species"] != "all"].reset_index(drop=True)
        pd.testing.assert_frame_equal(full[rows.columns], rows, check_exact=True)


def test_a_budget_option_recompute_matches_no_names(session, monkeypatch):
    """A budget option's recompute computes the budget stages only and looks no name
    up by fuzzy match (before: the velocities' fills asked the Dataset for
    ``land_use_in_force`` with ``get``, whose KeyError ran difflib over every variable
    name, on every run)."""
    import dataclasses
    import difflib
    study = session.study_for("ridge", 2021, 2021)
    o = session.baseline.for_site("ridge").run_args()
    args = dict(start="2021-01-01", end="2022-01-01", **o)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        study.run(**args)
        calls = []
        real = difflib.get_close_matches
        monkeypatch.setattr(difflib, "get_close_matches",
                            lambda *a, **k: calls.append(a) or real(*a, **k))
        before = dict(study.graph.counts)
        budget = dataclasses.replace(args["budget_options"], min_air_coverage=0.7123)
        study.run(**{**args, "budget_options": budget})
    ran = {k: n - before.get(k, 0) for k, n in study.graph.counts.items()
           if n > before.get(k, 0)}
    # the air sample note reads min_air_coverage too; the wet components and the
    # precipitation note read no such option and are not computed again
    assert ran == {"budget": 1, "air_notes": 1}
    assert calls == []
