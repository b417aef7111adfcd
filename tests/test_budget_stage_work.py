"""The work a budget option's change does in the budget stage, counted
(docs/performance.md, "The budget's assembly split"): the dry components and the
brackets judged in one call of ``dry_status`` each (eleven calls a budget before),
and what reads no option (the axes, the collectors, the land-use notes, the yearly
factors: stage ``budget_layout``) or only the basis and the bulk options (the wet
components after the bulk collectors and the wet variables: ``wet_assembled``) not
computed again on a completeness option's change."""
import dataclasses
import warnings

import numpy as np
import pytest

from workbench.pipeline import Study

from tiny_inputs import ridge_part_study


@pytest.fixture(scope="module")
def study():
    return ridge_part_study()


def _run(st, opts):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return st.run(opts["wet"], opts["dry"], opts["budget"], resolution="month",
                      start="2021-01-01", end="2021-07-01")


def _counting(monkeypatch):
    """Count the calls of the pieces of the assembly, where the code looks them up."""
    import workbench.budget_assembly as assembly
    import workbench.budgetstatus_dry as status_dry
    calls = {"dry_status": 0, "annual_factor": 0, "period_notes": 0, "collector_shares": 0,
             "wet_outputs": 0}

    def counted(name, real):
        def fn(*a, **k):
            calls[name] += 1
            return real(*a, **k)
        return fn
    for name in calls:
        for module in (assembly, status_dry):
            if hasattr(module, name):
                monkeypatch.setattr(module, name, counted(name, getattr(module, name)))
    return calls


def test_a_completeness_change_judges_the_dry_parts_in_two_calls_and_keeps_the_rest(
        study, monkeypatch):
    """A ``min_air_coverage`` change (months and years: two budgets) calls ``dry_status``
    twice a budget (the components, the brackets; 22 calls before) and makes no yearly
    factor, land-use note, collector share nor wet variable again (two of each before)."""
    st, sc = study
    fresh = Study(st.inputs, st.site_overrides)
    base = {"wet": sc.options["wet"], "dry": sc.options["dry"], "budget": sc.options["budget"]}
    calls = _counting(monkeypatch)
    _run(fresh, base)
    first = dict(calls)
    assert first["dry_status"] == 4 and first["annual_factor"] == 2
    before = dict(calls)
    _run(fresh, dict(base, budget=dataclasses.replace(base["budget"], min_air_coverage=0.61)))
    assert {k: calls[k] - before[k] for k in calls} == {
        "dry_status": 4, "annual_factor": 0, "period_notes": 0, "collector_shares": 0,
        "wet_outputs": 0}


def test_the_split_stages_run_on_what_they_read(study):
    """``budget_layout`` runs once per periods table, whatever the options;
    ``wet_assembled`` again on a bulk option's change, not on a dry or a completeness
    option's change; the budget every time."""
    st, sc = study
    fresh = Study(st.inputs, st.site_overrides)
    base = {"wet": sc.options["wet"], "dry": sc.options["dry"], "budget": sc.options["budget"]}
    _run(fresh, base)
    g = fresh.graph
    assert (g.counts["budget_layout"], g.counts["wet_assembled"], g.counts["budget"]) == (2, 2, 2)

    def changed(group, **values):
        before = dict(g.counts)
        _run(fresh, dict(base, **{group: dataclasses.replace(base[group], **values)}))
        return {k: g.counts[k] - before.get(k, 0)
                for k in ("budget_layout", "wet_assembled", "budget")}
    assert changed("dry", ustar_floor=0.2) == {"budget_layout": 0, "wet_assembled": 0,
                                               "budget": 2}
    assert changed("budget", min_air_coverage=0.62) == {"budget_layout": 0,
                                                        "wet_assembled": 0, "budget": 2}
    assert changed("budget", require_all_seasons=False) == {
        "budget_layout": 0, "wet_assembled": 0, "budget": 2}
    assert changed("budget", bulk_wet_factor=0.7) == {"budget_layout": 0,
                                                      "wet_assembled": 2, "budget": 2}


def test_one_call_judges_as_one_call_per_species():
    """``dry_status`` with the species on a last axis (``ratio`` one per species) gives
    each species the status, failure and note of a call of its own, on shares with
    NaN, bounds met exactly, masked reasons, met gaps and mixing ratios."""
    from workbench.budget_options import BudgetOptions
    from workbench.budgetstatus_dry import dry_status
    rng = np.random.default_rng(3)
    shape = (3, 2, 5, 4)                                   # site, receptor, period, species

    def share():
        x = rng.choice([0.0, 0.1, 0.5, 0.75, 0.9, 1.0, np.nan], size=shape)
        return np.where(rng.random(shape) < 0.5, rng.random(shape), x)
    cov = share()[:, :1].repeat(2, 1)
    vdc, fs, fc = share(), rng.choice([0.0, 0.05, 0.1, 0.3], size=shape), share()
    meas = rng.random((3, 1, 1, 4)) < 0.8
    sok = rng.random((3, 1, 5, 4)) < 0.85
    ratio = np.array([False, True, False, True])
    masked = np.array([["", "x masked", "", ""]] * 3, object)[:, None, None, :]
    pmask = rng.choice(np.array(["", "y masked"], object), size=(3, 1, 5, 4))
    without = np.array(["", "wind speed", "wind speed and temperature"], object)
    gaps = rng.choice(np.array(["", "200 h without wind speed"], object), size=(3, 5))
    gap_h = rng.choice([0.0, 100.0, 200.0], size=(3, 5))
    for options in (BudgetOptions(), BudgetOptions(min_air_coverage=0.5, min_vd_coverage=0.7)):
        st, fl, note = dry_status(cov, vdc, fs, fc, meas, sok, ratio, options, masked=masked,
                                  period_masked=pmask, met_without=without[:, None, None, None],
                                  met_gaps=gaps[:, None, :, None],
                                  met_gap_h=gap_h[:, None, :, None])
        assert set(st.ravel()) >= {"complete", "flagged", "missing"}
        for k in range(shape[-1]):
            one = dry_status(cov[..., k], vdc[..., k], fs[..., k], fc[..., k], meas[..., k],
                             sok[..., k], bool(ratio[k]), options, masked=masked[..., k],
                             period_masked=pmask[..., k],
                             met_without=without[:, None, None],
                             met_gaps=gaps[:, None, :], met_gap_h=gap_h[:, None, :])
            np.testing.assert_array_equal(st[..., k], one[0])
            np.testing.assert_array_equal(fl[..., k], one[1])
            np.testing.assert_array_equal(note[..., k], one[2])


def test_the_budgets_words_do_not_go_through_pandas(study, monkeypatch):
    """A ``min_air_coverage`` change (two budgets) hands xarray no array of words to
    convert through pandas (``_possibly_convert_objects``: 34 arrays of statuses, notes
    and names before, 17 a budget, each a string array of pandas and back), and the
    words are the same ``str``."""
    import xarray.core.variable as xv
    st, sc = study
    fresh = Study(st.inputs, st.site_overrides)
    base = {"wet": sc.options["wet"], "dry": sc.options["dry"], "budget": sc.options["budget"]}
    first = _run(fresh, base)
    converted = []
    real = xv._possibly_convert_objects

    def counted(values):
        converted.append(values.dtype)
        return real(values)
    monkeypatch.setattr(xv, "_possibly_convert_objects", counted)
    r = _run(fresh, dict(base, budget=dataclasses.replace(base["budget"],
                                                          min_air_coverage=0.63)))
    words = [d for d in converted if d == object]
    assert len(words) <= 2, len(words)            # the air species' coordinate, at most
    for ds in (r.budget, r.years):
        for name in ("status", "note", "completeness_failure", "total_status",
                     "total_missing_components"):
            values = ds[name].values
            assert values.dtype == object
            assert {type(x) for x in values.ravel()} == {str}
    assert first.budget["status"].dtype == object
