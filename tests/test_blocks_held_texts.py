"""What a block of a network run holds until the reduction: the mechanism, not a threshold.

Every block's result is held in the main process until the blocks are reduced, so what
a block returns per site is what the run holds per site of the network.  Two things of
it grew with the network for nothing (measured with benchmarks/network.py and a
tracemalloc probe, docs/performance.md "What a block holds for the monthly trends"):

- the monthly budget, made for the monthly trends only, was held whole (49 data
  variables, notes and fractions among them) where a trend reads five
  (``tables_budget.LEAN_VARIABLES``);
- the statuses, notes and checks (object arrays of text) held one ``str`` object per
  cell, made so by ``numpy.where``/``numpy.full``/``astype(object)`` over fixed-width
  text, where a few distinct texts are repeated over thousands of cells.

Both fail on the code before (a block held 49 monthly variables; a status of
"complete" was a new object in each cell).  The numbers stay those of before: the
reduced Datasets are identical with and without the shared texts, and the monthly
rows of the trends are the same from the lean monthly budget as from the whole one.
Inputs: four sites of the invented demo network, one year.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import xarray as xr

import workbench.blocks as B
from ui.demo_subset import study_and_args, write_demo_subset
from workbench.block_sites import shared_texts
from workbench.tables_budget import LEAN_VARIABLES, budget_table, lean_budget

SITES = ("ridge", "fell", "mere", "farm")
HELD = ("budget", "monthly", "screened", "wet")


@pytest.fixture(scope="module")
def setup(tmp_path_factory):
    return study_and_args(write_demo_subset(tmp_path_factory.mktemp("texts"), SITES, 2021, 2021))


def _run(study, args, monkeypatch, block_sites=2):
    """run_blocks, and every block's held results as handed to the reduction."""
    held = []
    orig = B.reduce_blocks

    def spy(blocks, *a, **k):
        held.extend({key: b[key] for key in HELD if b.get(key) is not None} for b in blocks)
        return orig(blocks, *a, **k)

    monkeypatch.setattr(B, "reduce_blocks", spy)
    got = B.run_blocks(study, *args, block_sites=block_sites)
    monkeypatch.setattr(B, "reduce_blocks", orig)
    return got, held


@pytest.fixture(scope="module")
def runs(setup):
    """The block run as it is, and with the held texts left as the study made them."""
    study, args = setup
    mp = pytest.MonkeyPatch()
    try:
        got, held = _run(study, args, mp)
        mp.setattr(B, "shared_texts", lambda ds: ds)
        ref, ref_held = _run(study, args, mp)
    finally:
        mp.undo()
    return got, held, ref, ref_held


def _texts(ds):
    """The object variables of `ds` made of str only."""
    for name, v in ds.variables.items():
        flat = v.values.reshape(-1)
        if v.dtype == object and len(flat) and pd.api.types.infer_dtype(
                flat, skipna=False) == "string":
            yield name, flat


def test_a_block_holds_of_the_monthly_budget_what_the_trends_read(runs):
    _, held, _, _ = runs
    assert len(held) > 1
    for h in held:
        assert set(h["monthly"].data_vars) <= set(LEAN_VARIABLES), \
            sorted(set(h["monthly"].data_vars) - set(LEAN_VARIABLES))   # was 49
        assert "deposition" in h["monthly"] and "total_status" in h["monthly"]


def test_a_block_holds_each_text_once(runs):
    """Every text variable of a held Dataset: as many str objects as distinct texts."""
    _, held, _, ref_held = runs
    checked = 0
    for h in held:
        for key, ds in h.items():
            for name, flat in _texts(ds):
                objects = len({id(x) for x in flat})
                assert objects == len(set(flat)), (key, name, objects, len(set(flat)))
                checked += 1
    assert checked > 20
    # the study's own arrays repeat their texts (what the blocks held before)
    assert any(len({id(x) for x in flat}) > len(set(flat))
               for h in ref_held for ds in h.values() for _, flat in _texts(ds))


def test_shared_texts_leave_the_results_identical(runs):
    got, _, ref, _ = runs
    for name in ("budget", "years", "screened", "wet", "monthly_budget"):
        a, b = getattr(ref, name), getattr(got, name)
        xr.testing.assert_identical(a, b)
        assert list(a.variables) == list(b.variables), name
        for v in a.variables:
            assert a[v].dtype == b[v].dtype and a[v].attrs == b[v].attrs, (name, v)
            assert a[v].encoding == b[v].encoding, (name, v)
    pd.testing.assert_frame_equal(ref.table, got.table, rtol=0, atol=0)


def test_the_monthly_rows_of_the_trends_are_the_whole_runs(setup, runs):
    """The rows a trend reads from the blocks' lean monthly budget are those of a whole
    run's monthly budget (every variable), bit for bit; and lean_budget alone changes
    no row of a whole monthly budget."""
    study, args = setup
    got = runs[0]
    start, end = args[5:7]
    if start is None or end is None:             # run_blocks takes the network's span
        s0, e0 = study.span()
        start, end = start or s0, end or e0
    month = study.run(*args[:4], "month", start, end).budget
    assert len(month.data_vars) > len(LEAN_VARIABLES)
    whole = budget_table(month, lean=True)
    pd.testing.assert_frame_equal(budget_table(lean_budget(month), lean=True), whole,
                                  rtol=0, atol=0)
    pd.testing.assert_frame_equal(budget_table(got.monthly_budget, lean=True), whole,
                                  rtol=0, atol=0)


def test_shared_texts_keep_what_is_not_text_only():
    status = np.array(["complete", "missing"] * 3).astype(object).reshape(2, 3)
    mixed = np.array(["a", None, "a"], dtype=object)
    ds = xr.Dataset({"status": (("s", "p"), status, {"long_name": "x"}),
                     "mixed": ("p", mixed), "n": ("p", np.arange(3.0))},
                    coords={"s": np.array(["u", "v"], dtype=object),
                            "label": ("p", np.array(["m", "m", "m"]).astype(object))})
    ds["status"].encoding["dtype"] = "str"
    out = shared_texts(ds)
    xr.testing.assert_identical(out, ds)
    assert out["status"].encoding == ds["status"].encoding
    flat = out["status"].values.reshape(-1)
    assert len({id(x) for x in flat}) == 2
    assert len({id(x) for x in out["label"].values}) == 1          # a coordinate too
    assert out["mixed"].values is ds["mixed"].values                # None among them: as is
    assert out["n"].values is ds["n"].values
    assert shared_texts(None) is None
