"""Site blocks: a run in blocks of sites, in process or on dask, equals the whole run.

The reference is the whole in-process run of the same scenario (four sites of the
invented demo network, one year): the pipeline computes each site on its own, so the
budget.csv and summary.csv rows (values to 1e-12 relative, statuses exactly) and the
screened samples must not depend on how the sites are split or where blocks run.
"""
from __future__ import annotations

import dataclasses
import sys

import numpy as np
import pandas as pd
import pytest
import xarray as xr

from ui.demo_subset import study_and_args, write_demo_subset
from workbench.blocks import NO_VELOCITIES_NOTE, run_blocks, site_blocks
from workbench.cli import build_parser, main
from workbench.comparison import run as run_compared
from workbench.optional import MissingExtraError
from workbench.tables import summary_table
from workbench.wet import samples_table

SITES = ("ridge", "fell", "mere", "farm")


@pytest.fixture(scope="module")
def scenario_file(tmp_path_factory):
    return write_demo_subset(tmp_path_factory.mktemp("blocks"), SITES, 2021, 2021)


@pytest.fixture(scope="module")
def setup(scenario_file):
    return study_and_args(scenario_file)


@pytest.fixture(scope="module")
def whole(setup):
    study, args = setup
    return study.run(*args)


def assert_same(whole, blocks):
    """budget.csv and summary.csv frames and the screened samples of two runs agree."""
    assert len(whole.table) > 0
    pd.testing.assert_frame_equal(whole.table, blocks.table, rtol=1e-12, atol=0)
    pd.testing.assert_frame_equal(summary_table(whole), summary_table(blocks), rtol=1e-12,
                                  atol=0)
    assert (whole.table["status"] == blocks.table["status"]).all()
    pd.testing.assert_frame_equal(samples_table(whole.screened), samples_table(blocks.screened))
    assert list(blocks.budget["site"].values) == list(SITES)
    assert list(blocks.budget["receptor"].values) == list(whole.budget["receptor"].values)
    np.testing.assert_array_equal(blocks.budget["active"].values, whole.budget["active"].values)


def test_site_blocks():
    assert site_blocks(list("abcde"), 2) == [["a", "b"], ["c", "d"], ["e"]]
    assert site_blocks(list("abc"), None) == [["a", "b", "c"]]
    assert site_blocks(list("abc"), 5) == [["a", "b", "c"]]
    with pytest.raises(ValueError, match="at least 1"):
        site_blocks(list("abc"), 0)


@pytest.mark.parametrize("block_sites", [1, 2, 3])
def test_blocks_in_process_equal_the_whole_run(setup, whole, block_sites):
    study, args = setup
    got = run_blocks(study, *args, block_sites=block_sites)
    assert_same(whole, got)
    assert got.velocities is None              # dropped after each block
    # the counts in the wet and screening attributes are the network's, not a block's
    assert got.wet.attrs == whole.wet.attrs
    assert got.screened.attrs == whole.screened.attrs
    assert got.budget.attrs == whole.budget.attrs


def test_blocks_from_inputs_with_site_overrides(setup, whole):
    study, args = setup
    got = run_blocks(study.inputs, *args, block_sites=2, site_overrides=study.site_overrides)
    assert_same(whole, got)


def test_kept_velocities_equal_the_whole_run_on_wanted_pairs(setup, whole):
    from workbench.writers import velocities_dataset
    study, args = setup
    got = run_blocks(study, *args, block_sites=2, keep_velocities=True)
    a, b = velocities_dataset(whole.velocities), velocities_dataset(got.velocities)
    assert list(a["surface"].values) == list(b["surface"].values)
    for v in ("vd_SO2", "vd_pSO4", "ra", "friction_velocity"):
        xr.testing.assert_allclose(a[v], b[v], rtol=1e-12)


def test_compared_schemes_in_blocks(setup):
    study, args = setup
    dry = dataclasses.replace(args[1], compare_schemes=True)
    args = (args[0], dry) + args[2:]
    ref = run_compared(study, *args)
    got = run_blocks(study, *args, block_sites=1)
    assert ref.table["scheme"].nunique() > 1
    pd.testing.assert_frame_equal(ref.table, got.table, rtol=1e-12, atol=0)


@pytest.mark.parametrize("workers", [1, 2])   # 1 worker: 4 blocks through a window of 2
def test_blocks_on_a_threaded_local_cluster(setup, whole, workers):
    distributed = pytest.importorskip("distributed")
    study, args = setup
    with distributed.LocalCluster(n_workers=workers, threads_per_worker=1, processes=False,
                                  dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        said = []
        got = run_blocks(study, *args, block_sites=1, client=client, progress=said.append)
    assert_same(whole, got)
    assert len(said) == len(SITES)


def test_blocks_on_worker_processes(setup, whole):
    distributed = pytest.importorskip("distributed")
    study, args = setup
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        got = run_blocks(study, *args, block_sites=2, client=client)
    assert_same(whole, got)


def test_cli_flags_parse():
    a = build_parser().parse_args(["run", "s.toml", "--out", "o", "--workers", "2",
                                   "--block-sites", "3"])
    assert (a.workers, a.block_sites, a.scheduler) == (2, 3, None)
    a = build_parser().parse_args(["run", "s.toml", "--out", "o", "--scheduler",
                                   "tcp://127.0.0.1:8786"])
    assert (a.workers, a.block_sites, a.scheduler) == (None, None, "tcp://127.0.0.1:8786")
    for bad in ("0", "-1", "two"):
        with pytest.raises(SystemExit):
            build_parser().parse_args(["run", "s.toml", "--out", "o", "--block-sites", bad])


def test_cli_block_run_writes_the_same_tables(scenario_file, tmp_path, capsys):
    assert main(["run", str(scenario_file), "--out", str(tmp_path / "a"), "--quiet"]) == 0
    assert main(["run", str(scenario_file), "--out", str(tmp_path / "b"), "--quiet",
                 "--block-sites", "3"]) == 0
    for name in ("budget.csv", "summary.csv", "samples.csv", "exceedance.csv", "trends.csv",
                 "quality.csv", "precipitation_annual.csv"):
        assert (tmp_path / "a" / name).read_bytes() == (tmp_path / "b" / name).read_bytes(), name
    assert (tmp_path / "a" / "velocities.nc").exists()
    assert not (tmp_path / "b" / "velocities.nc").exists()
    assert "velocities.nc is not written" in (tmp_path / "b" / "report.html").read_text()
    assert "velocities.nc is not written" in NO_VELOCITIES_NOTE


def test_missing_distributed_names_the_extra(setup, scenario_file, tmp_path, monkeypatch,
                                             capsys):
    monkeypatch.setitem(sys.modules, "distributed", None)     # import fails
    study, args = setup
    with pytest.raises(MissingExtraError, match=r"deposition-workbench\[scale\]"):
        run_blocks(study, *args, block_sites=2, client=object())
    code = main(["run", str(scenario_file), "--out", str(tmp_path / "c"), "--quiet",
                 "--workers", "2"])
    err = capsys.readouterr().err
    assert code == 2
    assert "distributed is not installed" in err and "deposition-workbench[scale]" in err
    assert not (tmp_path / "c").exists() or not any((tmp_path / "c").iterdir())


def test_blocks_without_start_and_end_take_the_network_span(setup):
    """Without start/end the periods come from the span of all inputs, not a block's."""
    study, args = setup
    args = args[:5] + (None, None)
    whole = study.run(*args)
    got = run_blocks(study, *args, block_sites=1)
    pd.testing.assert_frame_equal(whole.periods, got.periods)
    assert_same(whole, got)


def test_blocks_group_sites_asking_for_the_same_surfaces(setup):
    """Sites with the same wanted surfaces share a block (not consecutive in the
    catalogue); every pair computed is wanted; the tables equal the whole run's."""
    from workbench.blocks import wanted_blocks
    from workbench.pipeline import Study
    study, args = setup
    over = {**study.site_overrides, "mere": {"land_use": "conifer_forest",
                                             "receptors": ["moorland", "grass"]}}
    ref_study = Study(study.inputs, over)
    ref = ref_study.run(*args)
    groups = wanted_blocks(ref_study.catalogue(), ref_study.receptors(), 2)
    assert [sites for sites, _ in groups][0] == ["ridge", "mere"]     # ridge's set
    got = run_blocks(study.inputs, *args, block_sites=2, site_overrides=over,
                     keep_velocities=True)
    pd.testing.assert_frame_equal(ref.table, got.table, rtol=1e-12, atol=0)
    assert list(got.budget["site"].values) == list(SITES)
    active = got.velocities["active"].values
    assert (~active).any()
    vd = got.velocities["vd_SO2"].values                          # (site, receptor, time)
    assert np.isnan(vd[~active]).all()                            # unwanted: not computed
    assert np.isfinite(vd[active]).any(axis=-1).all()
    assert np.isnan(ref.velocities["vd_SO2"].values[~active]).all()      # nor a whole run


def test_cli_large_network_runs_in_blocks_without_flags(scenario_file, tmp_path, monkeypatch):
    """More sites than AUTO_BLOCK_SITES: blocks without being asked, same tables."""
    import workbench.blocks as blocks
    assert main(["run", str(scenario_file), "--out", str(tmp_path / "a"), "--quiet"]) == 0
    monkeypatch.setattr(blocks, "AUTO_BLOCK_SITES", len(SITES) - 1)
    monkeypatch.setattr(blocks, "DEFAULT_MAX_BLOCK", 1)
    assert main(["run", str(scenario_file), "--out", str(tmp_path / "b"), "--quiet"]) == 0
    for name in ("budget.csv", "summary.csv", "samples.csv"):
        assert (tmp_path / "a" / name).read_bytes() == (tmp_path / "b" / name).read_bytes(), name
    assert (tmp_path / "a" / "velocities.nc").exists()
    assert not (tmp_path / "b" / "velocities.nc").exists()


def test_met_store_read_per_block_in_process_and_by_workers(scenario_file, tmp_path,
                                                            monkeypatch):
    """The met kept in its on-disk store (workbench.io.metstore): blocks in process read
    their sites from it, workers of a local cluster read their own block from its files,
    and a whole run reads it lazily; budget.csv, summary.csv and samples.csv are
    byte-identical to those of the whole run on the met in memory."""
    pytest.importorskip("distributed")
    import workbench.io.metfast as metfast
    import workbench.io.metstore as metstore
    assert main(["run", str(scenario_file), "--out", str(tmp_path / "a"), "--quiet"]) == 0
    monkeypatch.setattr(metstore, "IN_MEMORY_BYTES", 0)
    lazy = []

    def spy(ds, store, limit=None):
        out = metstore.load_small(ds, store, limit)
        lazy.append(metstore.is_lazy(out))
        return out
    monkeypatch.setattr(metfast, "load_small", spy)
    assert main(["run", str(scenario_file), "--out", str(tmp_path / "b"), "--quiet",
                 "--block-sites", "2"]) == 0
    assert main(["run", str(scenario_file), "--out", str(tmp_path / "c"), "--quiet",
                 "--workers", "2"]) == 0
    assert main(["run", str(scenario_file), "--out", str(tmp_path / "d"), "--quiet"]) == 0
    assert lazy == [True, True, True]
    for name in ("budget.csv", "summary.csv", "samples.csv"):
        ref = (tmp_path / "a" / name).read_bytes()
        for run in "bcd":                 # blocks, workers, and a whole run on the store
            assert ref == (tmp_path / run / name).read_bytes(), (run, name)


def _block_outs(setup, block_sites):
    """The study, its receptors and the outputs of :func:`run_block` for each block of at
    most `block_sites` sites asking for the same receptors."""
    from workbench.blocks import block_inputs, run_block, wanted_blocks
    study, args = setup
    kw = dict(zip(("wet_options", "dry_options", "budget_options", "fixed_velocity",
                   "resolution", "start", "end"), args))
    receptors = study.receptors()
    outs = [run_block(block_inputs(study.inputs, sites), study.site_overrides,
                      {**kw, "receptors": recs})
            for sites, recs in wanted_blocks(study.catalogue(), receptors, block_sites)]
    return study, receptors, outs


def test_numpy_reduction_as_xarray_reindex_and_concat(setup):
    """The reduction places each block on the network's receptors and stacks the blocks
    with numpy: identical (values, dtypes, attributes) to xarray's reindex and concat."""
    from workbench.blockreduce import _combine_attrs, _on_receptors, _reindexed, _stacked
    study, receptors, outs = _block_outs(setup, 1)
    parts = [o["budget"] for o in outs]
    assert any(list(p["receptor"].values) != receptors for p in parts)
    placed = [_on_receptors(p, receptors) for p in parts]
    for p, q in zip(placed, parts):
        xr.testing.assert_identical(p, _reindexed(q, receptors))
        assert all(p[v].dtype == q[v].dtype for v in q.data_vars)
    for key, blocks in (("budget", placed), ("wet", [o["wet"] for o in outs])):
        ref = xr.concat(blocks, dim="site", data_vars="minimal", coords="minimal",
                        compat="override", join="exact", combine_attrs=_combine_attrs)
        got = _stacked(blocks, "site")
        xr.testing.assert_identical(got, ref)
        for v in ref.variables:
            assert got[v].attrs == ref[v].attrs, (key, v)


@pytest.mark.parametrize("reverse", [False, True])
def test_blocks_assembled_in_place_as_concat_and_reorder(setup, reverse):
    """Each block placed straight at its sites (catalogue order) and on the network's
    receptors: identical to placing, concatenating and reordering with xarray."""
    from workbench.blockreduce import _assembled, _concat
    study, receptors, outs = _block_outs(setup, 2)
    order = list(SITES)[::-1] if reverse else list(SITES)
    for key, recs in (("budget", receptors), ("monthly", receptors), ("wet", None)):
        parts = [o[key] for o in outs]
        ref = _concat(parts, "site", recs).sel(site=order)
        got = _assembled(parts, recs, order)
        xr.testing.assert_identical(got, ref)
        for v in ref.variables:
            assert got[v].dtype == ref[v].dtype and got[v].attrs == ref[v].attrs, (key, v)


def test_blocks_on_threads_equal_blocks_in_turn(setup, whole):
    """Two blocks at once on threads give the numbers of the blocks run one after the
    other, bit for bit (each block is its own study; the reduction is in block order)."""
    study, args = setup
    one = run_blocks(study, *args, block_sites=1, threads=1)
    two = run_blocks(study, *args, block_sites=1, threads=2)
    assert_same(whole, two)
    pd.testing.assert_frame_equal(one.table, two.table, rtol=0, atol=0)
    xr.testing.assert_identical(one.budget, two.budget)
    xr.testing.assert_identical(one.wet, two.wet)


def test_run_on_threads_keeps_block_order_and_raises_the_first_error():
    import threading
    import time
    from workbench.blocks import _run_on_threads, block_threads
    said = []

    def slow_first(i):               # block 0 finishes after block 1
        time.sleep(0.2 if i == 0 else 0.0)
        return (i, threading.current_thread().name)
    done = [None] * 5
    _run_on_threads(slow_first, done, 2, said.append)
    assert [d[0] for d in done] == list(range(5))
    assert all(d[1].startswith("workbench-block") for d in done)
    assert sorted(said) == list(range(5))

    def fails(i):
        if i == 3:
            raise RuntimeError("block 3 failed")
        return i
    with pytest.raises(RuntimeError, match="block 3 failed"):
        _run_on_threads(fails, [None] * 6, 2, lambda i: None)
    assert block_threads(1) == 1
    out = []
    t = threading.Thread(target=lambda: out.append(block_threads(10)))  # off the main thread
    t.start()
    t.join()
    assert out == [1]


def test_monthly_run_reuses_the_season_coverage_months(setup):
    """The periods stage is keyed by its table: the monthly budget after the yearly one
    (what a block runs) computes no monthly dry components or shares again."""
    from workbench.pipeline import Study
    study, args = setup
    fresh = Study(study.inputs, study.site_overrides)
    year = fresh.run(*args[:4], "year", *args[5:])
    before = dict(fresh.graph.counts)
    month = fresh.run(*args[:4], "month", *args[5:])
    again = {k: fresh.graph.counts[k] - before.get(k, 0) for k in fresh.graph.counts}
    assert again.get("dry_components", 0) == 0 and again.get("period_shares", 0) == 0
    assert again.get("budget", 0) == 1
    assert month.budget.sizes["period"] > year.budget.sizes["period"]
    fresh.periods("month", args[5], args[6])       # the same table, asked otherwise
    node = fresh._periods_node("month", np.datetime64(str(args[5])), args[6])
    assert node.key == fresh._periods_node("month", str(args[5]), args[6]).key


def test_screened_samples_stacked_as_xarray_concat(setup):
    """The screened samples of the blocks are stacked with numpy along ``sample``:
    identical (values, dtypes, attributes) to xarray's outer concat."""
    from workbench.blockreduce import _combine_attrs, _concat, _stacked
    study, receptors, outs = _block_outs(setup, 1)
    parts = [o["screened"] for o in outs]
    assert len(parts) > 1 and all(p.sizes["sample"] for p in parts)
    assert _stacked(parts, "sample") is not None        # the numpy way is taken
    ref = xr.concat(parts, dim="sample", data_vars="minimal", coords="minimal",
                    compat="override", join="outer", combine_attrs=_combine_attrs)
    got = _concat(parts, "sample")
    xr.testing.assert_identical(got, ref)
    for v in ref.variables:
        assert got[v].dtype == ref[v].dtype and got[v].attrs == ref[v].attrs, v
        assert got[v].encoding == ref[v].encoding, v


def test_local_cluster_workers_keep_the_adaptive_malloc_threshold(monkeypatch):
    """The workers of `start_client` start without distributed's MALLOC_TRIM_THRESHOLD_
    (it turned off glibc's adaptive mmap threshold: 30-45 % more CPU per block), and the
    other pre-spawn variables of distributed's configuration stay as they are; they
    import WORKER_PRELOAD as they start, before any task."""
    pytest.importorskip("distributed")
    import os
    from workbench.blocks import UNSET_WORKER_ENVIRON, WORKER_PRELOAD, start_client
    for name in UNSET_WORKER_ENVIRON:       # as in a fresh process (no earlier cluster)
        monkeypatch.delenv(name, raising=False)
    client = start_client(workers=1)
    try:
        env = list(client.run(lambda: dict(os.environ)).values())[0]
        preloaded = list(client.run(lambda: [m in sys.modules for m in WORKER_PRELOAD])
                         .values())[0]
    finally:
        cluster = client.cluster
        client.close()
        cluster.close()
    assert all(name not in env for name in UNSET_WORKER_ENVIRON)
    assert env.get("OMP_NUM_THREADS") == "1"           # distributed's other defaults kept
    assert all(name not in os.environ for name in UNSET_WORKER_ENVIRON)   # nor set here
    assert preloaded == [True] * len(WORKER_PRELOAD)  # imported before any task
