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
        seen.append(k.get("block_sites"))
        return real(*a, **k)
    monkeypatch.setattr(blocks, "run_network", spy)
    monkeypatch.setattr(blocks, "AUTO_BLOCK_SITES", 2)        # 3 sites: blocks, unasked
    monkeypatch.setattr(cli, "BLOCK_SITE_YEARS", 2)           # 2 years: 1 site a block
    assert main(["run", str(scenario), "--out", str(tmp_path / "a"), "--quiet"]) == 0
    assert main(["run", str(scenario), "--out", str(tmp_path / "b"), "--quiet",
                 "--block-sites", "3"]) == 0
    assert seen == [1, 3]
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
