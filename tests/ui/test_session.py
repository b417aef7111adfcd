"""The session's runs: a run of one receptor (what the explorer computes) equals that
receptor's part of the whole run."""
import numpy as np
import pytest


def _assert_same(a, b):
    assert set(a.data_vars) == set(b.data_vars)
    for v in a.data_vars:
        x, y = a[v].transpose(*b[v].dims).values, b[v].values
        if x.dtype.kind == "f":
            np.testing.assert_allclose(x, y, rtol=1e-12, atol=0, equal_nan=True, err_msg=v)
        else:
            assert (x == y).all(), v


def test_one_receptor_equals_its_part_of_the_whole_run(session):
    st = session.study_for("ridge", 2021, 2021)
    args = session.baseline.run_args()
    start, end = session.bounds(2021, 2021)
    whole = st.run(resolution="month", start=start, end=end, **args)
    receptors = session.receptors("ridge")
    assert len(receptors) > 1
    for rec in receptors:
        one = st.run(resolution="month", start=start, end=end, receptors=[rec], **args)
        assert list(one.budget["receptor"].values) == [rec]
        _assert_same(one.budget, whole.budget.sel(receptor=[rec]))
        _assert_same(one.years, whole.years.sel(receptor=[rec]))
        _assert_same(one.velocities, whole.velocities.sel(receptor=[rec]))
    with pytest.raises(ValueError, match="not surfaces"):
        st.run(resolution="year", start=start, end=end, receptors=["no_such_surface"], **args)


def test_session_runs_the_receptor_asked_for_and_caches_it(session):
    a = session.run(session.baseline, "ridge", 2021, 2021, "year", receptor="grass")
    assert list(a.years["receptor"].values) == ["grass"]
    assert session.run(session.baseline, "ridge", 2021, 2021, "year", receptor="grass") is a
    every = session.run(session.baseline, "ridge", 2021, 2021, "year")
    assert len(every.years["receptor"]) == len(session.receptors("ridge"))


def test_tight_cache_limits_give_the_same_numbers(session, monkeypatch):
    """With every cache bound set tiny, entries are dropped and computed again while
    options change back and forth: the budgets equal those of fresh studies."""
    import dataclasses

    from workbench import pipeline
    from workbench.graph import Graph
    base = session.study_for("ridge", 2021, 2021)
    graph = Graph(max_entries=6)                       # the one cache, tiny
    st = pipeline.Study(base.inputs, base.site_overrides, graph=graph)
    args = session.baseline.run_args()
    start, end = session.bounds(2021, 2021)
    dry = args["dry_options"]
    variants = [dict(args),
                dict(args, dry_options=dataclasses.replace(dry, wetness_rule="always_wet")),
                dict(args, fixed_velocity={"SO2": 0.4}),
                dict(args, budget_options=dataclasses.replace(args["budget_options"],
                                                              pair_split="all_gas"))]
    for a in variants + variants[::-1]:
        got = st.run(resolution="year", start=start, end=end, receptors=["grass"], **a)
        fresh = pipeline.Study(base.inputs, base.site_overrides).run(
            resolution="year", start=start, end=end, receptors=["grass"], **a)
        _assert_same(got.years, fresh.years)
    assert len(graph) <= 6
    assert graph.counts["velocities"] > 2              # dropped and computed again
