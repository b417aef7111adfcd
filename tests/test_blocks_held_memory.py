"""What keeps a network's peak set by its blocks in `workbench run`: the mechanism, not a
threshold.

Every block's result (budget, monthly budget, samples, wet) is held in the main process
until the blocks are reduced, so what a block returns per site is what the run holds per
site of the network.  A block asking for two of the network's seven receptor surfaces
returned its budget on all seven (``Study.run(layout=)``): three times its own, and the
run's peak grew about 0.27 MB a site-year faster with the network (measured by
benchmarks/network.py, docs/performance.md "The memory claims re-measured").  A block
now returns its own receptors and one receptor none of its sites asks for; the
reduction copies that one to the others (every such receptor holds the same values: no
velocity there).  Inputs: four sites of the invented demo network, one year.
"""
from __future__ import annotations

import pytest
import xarray as xr

import workbench.blocks as B
from ui.demo_subset import study_and_args, write_demo_subset

SITES = ("ridge", "fell", "mere", "farm")


@pytest.fixture(scope="module")
def setup(tmp_path_factory):
    return study_and_args(write_demo_subset(tmp_path_factory.mktemp("held"), SITES, 2021, 2021))


def _run(study, args, monkeypatch, block_sites):
    """run_blocks, and the receptor axes of every block's held results."""
    held = []
    orig = B.reduce_blocks

    def spy(blocks, *a, **k):
        for b in blocks:
            held.append({key: list(b[key]["receptor"].values.astype(str))
                         for key in ("budget", "monthly") if b.get(key) is not None})
        return orig(blocks, *a, **k)

    monkeypatch.setattr(B, "reduce_blocks", spy)
    got = B.run_blocks(study, *args, block_sites=block_sites)
    monkeypatch.setattr(B, "reduce_blocks", orig)
    return got, held


@pytest.mark.parametrize("block_sites", [1, 3])
def test_a_block_holds_its_own_receptors_and_one_more(setup, monkeypatch, block_sites):
    study, args = setup
    network = list(study.receptors())
    _, held = _run(study, args, monkeypatch, block_sites)
    wanted = [recs for _, recs in B.blocks_with_met(
        B.wanted_blocks(study.catalogue(), network, block_sites), study.inputs, network)]
    assert len(held) == len(wanted) > 1
    for axes, recs in zip(held, wanted):
        assert axes, "a block returned no budget"
        for key, axis in axes.items():
            assert set(recs) <= set(axis), key
            assert len(axis) <= len(recs) + 1, (key, axis, recs)     # was all 7
    assert any(len(a["budget"]) < len(network) for a in held)


@pytest.mark.parametrize("block_sites", [1, 3])
def test_the_reduced_results_are_those_of_blocks_on_every_receptor(setup, monkeypatch,
                                                                   block_sites):
    """The spare receptor copied by the reduction gives the same Datasets as blocks that
    compute their budget on every receptor of the network (the code before)."""
    study, args = setup
    got, _ = _run(study, args, monkeypatch, block_sites)
    monkeypatch.setattr(B, "block_layout", lambda receptors, asked: tuple(receptors))
    ref, held = _run(study, args, monkeypatch, block_sites)
    assert all(len(a["budget"]) == len(study.receptors()) for a in held)
    for name in ("budget", "years", "monthly_budget"):
        a, b = getattr(ref, name), getattr(got, name)
        assert list(a.data_vars) == list(b.data_vars)
        for v in a.variables:
            xr.testing.assert_identical(a[v], b[v])
        assert a.attrs == b.attrs


def test_a_spare_is_the_first_receptor_not_asked_for():
    assert B.block_layout(("a", "b", "c", "d"), ("d", "b")) == ("a", "b", "d")
    assert B.block_layout(("a", "b"), ("b", "a")) == ("a", "b")
    assert B._spare({"receptors": ("b",), "layout": ("a", "b")}) == "a"
    assert B._spare({"receptors": ("a", "b"), "layout": ("a", "b")}) is None
