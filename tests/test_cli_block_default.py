"""A run in blocks in this process without --block-sites takes blocks of at most
BLOCK_SITE_YEARS site-years: the peak memory of a block grows with its site-years (2.0 GB
for blocks of 4 sites x 10 years of the 30-site analyst network, 1.2 GB for 2 sites,
docs/performance.md), so a network with a long record no longer needs a larger machine
than a short one.  The tables do not depend on the block size (tests/test_blocks.py)."""
import workbench.blocks as blocks
import workbench.cli as cli
from workbench.cli import default_block_sites, main

from ui.demo_subset import write_demo_subset


def test_default_block_sites_follow_the_record_length(monkeypatch):
    assert [default_block_sites(n) for n in (1, 2, 5, 6, 10, 11, 20, 40)] == \
        [4, 4, 4, 3, 2, 1, 1, 1]
    monkeypatch.setattr(blocks, "DEFAULT_MAX_BLOCK", 2)
    assert default_block_sites(1) == 2


def test_run_in_blocks_passes_the_default_and_keeps_the_tables(tmp_path, monkeypatch):
    scenario = write_demo_subset(tmp_path / "in", ("ridge", "fell", "mere"), 2020, 2021)
    seen = []
    real = blocks.run_network

    def spy(*a, **k):
        seen.append((k.get("block_sites"), k.get("max_block_sites")))
        return real(*a, **k)
    monkeypatch.setattr(blocks, "run_network", spy)
    monkeypatch.setattr(blocks, "AUTO_BLOCK_SITES", 2)        # 3 sites: blocks, unasked
    monkeypatch.setattr(cli, "BLOCK_SITE_YEARS", 2)           # 2 years: 1 site a block
    assert main(["run", str(scenario), "--out", str(tmp_path / "a"), "--quiet"]) == 0
    assert main(["run", str(scenario), "--out", str(tmp_path / "b"), "--quiet",
                 "--block-sites", "3"]) == 0
    assert seen == [(None, 1), (3, 1)]       # the default as the cap; an asked size stands
    for name in ("budget.csv", "summary.csv", "samples.csv"):
        assert (tmp_path / "a" / name).read_bytes() == (tmp_path / "b" / name).read_bytes()


def test_a_site_without_any_record_runs_in_blocks_as_in_a_whole_run(tmp_path):
    """A site listed in sites.toml before its first record (here farm: in the catalogue,
    in no data file) crashed a run in blocks with a traceback (an empty met table in its
    block: "zero-size array to reduction operation minimum"); a network of more than 20
    sites runs in blocks without being asked.  Its block now joins one with met, and the
    tables equal the whole run's."""
    scenario = write_demo_subset(tmp_path / "in", ("ridge", "fell", "mere"), 2020, 2021)
    assert 'id = "farm"' in (scenario.parent / "sites.toml").read_text(encoding="utf-8")
    assert main(["run", str(scenario), "--out", str(tmp_path / "whole"), "--quiet"]) == 0
    assert main(["run", str(scenario), "--out", str(tmp_path / "b1"), "--quiet",
                 "--block-sites", "1"]) == 0
    for name in ("budget.csv", "summary.csv", "samples.csv"):
        assert (tmp_path / "whole" / name).read_bytes() == (tmp_path / "b1" / name).read_bytes()
    summary = (tmp_path / "b1" / "summary.csv").read_text(encoding="utf-8")
    assert "\nfarm," in summary


def test_block_progress_counts_the_blocks_done(tmp_path):
    """On threads the blocks end out of order: the progress said "block 8/16" before
    "block 7/16" (the block's place, not the count done) and "(1 sites)"."""
    from workbench.blocks import run_blocks
    from workbench.preflight import prepare
    from workbench.scenario import load_scenario
    sc = load_scenario(write_demo_subset(tmp_path / "in", ("ridge", "fell", "mere"), 2021,
                                         2021))
    prep = prepare(sc)
    o = sc.options
    said = []
    run_blocks(prep.study, o["wet"], o["dry"], o["budget"], sc.fixed_velocity, "year",
               "2021-01-01", "2022-01-01", block_sites=1, threads=2, progress=said.append)
    assert [t.split(" done")[0] for t in said] == ["block 1/3", "block 2/3", "block 3/3"]
    assert sorted(t.split("done ")[1] for t in said) == ["(1 site)", "(1 site)", "(2 sites)"]


class _FakeStart(blocks.ClusterStart):
    """A cluster already started, of `n` workers, that computes nothing (the blocks run
    through the spy of run_blocks)."""

    def __init__(self, n):
        self.n, self.closed = n, False

    def result(self):
        n = self.n

        class Client:
            def scheduler_info(self):
                return {"workers": {f"w{i}": {} for i in range(n)}}
        return Client()

    def close(self):
        self.closed = True


def _block_size_with_workers(monkeypatch, n_sites, n_workers, **kw):
    """The block size run_network hands to run_blocks with a cluster of `n_workers`."""
    seen = {}

    class Result:
        notes = []

    def spy(*a, **k):
        seen.update(k)
        return Result()
    monkeypatch.setattr(blocks, "run_blocks", spy)

    class Study:
        class inputs:
            class catalogue:
                ids = [f"s{i}" for i in range(n_sites)]
    start = _FakeStart(n_workers)
    blocks.run_network(Study, None, None, None, None, "year", "2016-01-01", "2026-01-01",
                       cluster=start, **kw)
    assert start.closed and seen["client"] is not None
    return seen["block_sites"]


def test_workers_get_blocks_of_the_site_years_rule(monkeypatch):
    """With --workers each worker took blocks of up to DEFAULT_MAX_BLOCK (4) sites
    whatever the record length: 4 sites x 10 years = 40 site-years a block, twice the
    cap of a block in this process.  30 sites on 2 workers: ceil(30 / 4) = 8 -> 4
    before; with the cap of a 10-year record (default_block_sites(10) = 2) -> 2."""
    assert _block_size_with_workers(monkeypatch, 30, 2) == 4          # no cap: as before
    cap = default_block_sites(10)
    assert cap == 2
    assert _block_size_with_workers(monkeypatch, 30, 2, max_block_sites=cap) == 2
    # fewer sites than two blocks per worker of the cap: the share per worker stands
    assert _block_size_with_workers(monkeypatch, 6, 4, max_block_sites=cap) == 1
    assert _block_size_with_workers(monkeypatch, 30, 2, max_block_sites=cap,
                                    block_sites=3) == 3               # asked: stands


def test_run_with_workers_passes_the_cap(tmp_path, monkeypatch):
    """``workbench run --workers 2`` hands run_network the cap of its record length (the
    cluster is replaced by the blocks of this process: no worker is started here)."""
    scenario = write_demo_subset(tmp_path / "in", ("ridge", "fell", "mere"), 2020, 2021)
    seen = []
    real = blocks.run_network

    def spy(*a, **k):
        seen.append((k.get("workers"), k.get("max_block_sites")))
        return real(*a, **{**k, "workers": None, "cluster": None})
    monkeypatch.setattr(blocks, "run_network", spy)
    monkeypatch.setattr(cli, "_early_cluster", lambda *a: None)
    monkeypatch.setattr(cli, "BLOCK_SITE_YEARS", 2)           # 2 years: 1 site a block
    assert main(["run", str(scenario), "--out", str(tmp_path / "w"), "--quiet",
                 "--workers", "2"]) == 0
    assert seen == [(2, 1)]


def test_progress_does_not_name_velocities_nc_in_blocks():
    said = []

    class Blocks:
        velocities = None

    class Whole:
        velocities = object()
    say = cli.output_progress(Blocks, said.append)
    for name in ("budget.nc", "velocities.nc", "report.html"):
        say(name)
    assert said == ["budget.nc", "velocities.nc not written (blocks)", "report.html"]
    whole = []
    cli.output_progress(Whole, whole.append)("velocities.nc")
    assert whole == ["velocities.nc"]
