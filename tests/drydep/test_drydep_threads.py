"""The engine's numbers do not depend on its number of threads (issue 11, item 4).

A demo site-year (ridge 2021, all its receptors, every default gas and particle)
through ``velocities`` on 1, 2 and 3 threads (workbench.set_threads): every output
variable equal bit for bit.  With 2 and more threads the blocks are cut smaller (a
site-year fits one block on one thread), so the comparison also covers other
block boundaries.  Nothing here is timed.
"""
import warnings
from pathlib import Path

import numpy as np
import pytest

import workbench
from workbench.drydep import DryOptions, velocities
from workbench.drydep import siteblocks
from workbench.surface import _array

DEMO = Path(__file__).resolve().parents[2] / "demo_data"


@pytest.fixture(scope="module")
def site_year():
    from workbench.io import read_met, read_sites
    cat = read_sites(DEMO / "sites.toml")
    met, _ = read_met(DEMO / "met.csv.gz", cat)
    met = met.sel(site=["ridge"]).sel(time=slice("2021-01-01T01:00", "2022-01-01T00:00")).load()
    return met, cat.surfaces().sel(site=["ridge"])


@pytest.fixture(autouse=True)
def _reset(monkeypatch):
    monkeypatch.setattr(_array, "MIN_PARALLEL_ELEMENTS", 1000)
    monkeypatch.setattr(_array, "THREAD_BLOCK_ELEMENTS", 5000)
    yield
    workbench.set_threads(None)


def _on_threads(met, surf, opt) -> dict:
    """The velocities of `met` on `surf` computed on 1, 2 and 3 threads."""
    runs = {}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        for n in (1, 2, 3):
            workbench.set_threads(n)
            runs[n] = velocities(met, surf, opt)
    return runs


@pytest.mark.parametrize("scheme", ["wesely1989", "zhang2003"])
def test_one_two_three_threads_give_the_same_numbers(site_year, scheme):
    met, surf = site_year
    opt = DryOptions(gas_scheme=scheme)
    runs = _on_threads(met, surf, opt)
    cells = met.sizes["time"] * surf.sizes["receptor"]
    shape = (1, surf.sizes["receptor"], met.sizes["time"])
    on_one = len(list(_array.block_slices(shape, _array.block_size(1))))
    assert len(list(_array.block_slices(shape, _array.block_size(3)))) >= 6 > on_one
    workbench.set_threads(3)
    assert _array.threads_for(cells) == 3
    one = runs[1]
    for n in (2, 3):
        assert list(runs[n].data_vars) == list(one.data_vars)
        for name in one.data_vars:
            np.testing.assert_array_equal(runs[n][name].values, one[name].values,
                                          err_msg=f"{name}, {n} threads")
            assert runs[n][name].attrs == one[name].attrs


@pytest.fixture(scope="module")
def network():
    """Every demo site (4, all 7 receptors), January-February 2021, a coarse fraction
    of pSO4 by site (two sites given, two not: the sources differ by site)."""
    from workbench.io import read_met, read_sites
    cat = read_sites(DEMO / "sites.toml")
    met, _ = read_met(DEMO / "met.csv.gz", cat)
    met = met.sel(time=slice("2021-01-01T01:00", "2021-03-01T00:00")).load()
    surf = cat.surfaces()
    surf["coarse_fraction_pSO4"] = ("site", [0.2, np.nan, 0.35, np.nan])
    return met, surf


@pytest.mark.parametrize("scheme", ["wesely1989", "zhang2003"])
def test_site_blocks_on_threads_give_the_same_numbers_and_attributes(network, scheme,
                                                                     monkeypatch):
    """Several sites: the engine's hourly part runs in blocks of whole sites on the
    threads (limits lowered so that a block is one or two sites); 1, 2 and 3 threads
    give the same variables, numbers, attributes and coordinates."""
    met, surf = network
    per_site = surf.sizes["receptor"] * met.sizes["time"]
    monkeypatch.setattr(siteblocks, "SITE_BLOCK_MIN_ELEMENTS", per_site)
    monkeypatch.setattr(siteblocks, "SITE_BLOCK_ELEMENTS", per_site)
    cuts = siteblocks.site_cuts(met.sizes["site"], per_site, 2)
    assert [c.stop - c.start for c in cuts] == [1, 1, 1, 1]
    assert siteblocks.site_cuts(4, per_site, 3) == cuts                       # one site each
    assert [c.stop - c.start for c in siteblocks.site_cuts(5, 2, 2)] == [3, 2]  # one per thread
    calls = []
    blocks = siteblocks.hourly_site_blocks
    monkeypatch.setattr(siteblocks, "hourly_site_blocks",
                        lambda *a: calls.append(a[-1]) or blocks(*a))
    opt = DryOptions(gas_scheme=scheme)
    runs = _on_threads(met, surf, opt)
    assert calls == [2, 3]             # one thread: one call on every site, as before
    one = runs[1]
    assert one["vd_pSO4"].attrs["coarse_fraction"][0] == 0.2
    for n in (2, 3):
        got = runs[n]
        assert list(got.data_vars) == list(one.data_vars)
        assert got.attrs == one.attrs
        for name in one.coords:
            np.testing.assert_array_equal(got[name].values, one[name].values)
        for name in one.data_vars:
            assert got[name].dims == one[name].dims, name
            assert got[name].dtype == one[name].dtype, name
            np.testing.assert_array_equal(got[name].values, one[name].values,
                                          err_msg=f"{name}, {n} threads")
            assert got[name].attrs == one[name].attrs, name


def test_a_site_year_and_a_cached_call_stay_on_one_thread(network, monkeypatch):
    """Below SITE_BLOCK_MIN_ELEMENTS (the package's: a site-year of the apps), with a
    stage cache, or from a thread other than the main one: no site blocks."""
    from workbench import graph
    met, surf = network
    monkeypatch.setattr(siteblocks, "hourly_site_blocks",
                        lambda *a: pytest.fail("site blocks used"))
    opt = DryOptions(gases=("SO2",), particles=("pSO4",), components=False)
    workbench.set_threads(3)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        velocities(met, surf, opt)                    # 4 sites x 7 x 1416 h < the limit
        monkeypatch.setattr(siteblocks, "SITE_BLOCK_MIN_ELEMENTS", 1)
        velocities(met, surf, opt, cache=graph.Graph())
        velocities(met.isel(site=[0]), surf.isel(site=[0]), opt)   # one site
        from concurrent.futures import ThreadPoolExecutor
        with ThreadPoolExecutor(1) as ex:
            ex.submit(velocities, met, surf, opt).result()


def test_block_size_and_threads_for(monkeypatch):
    monkeypatch.undo()  # the package's sizes
    workbench.set_threads(2)
    assert _array.block_size(1) == _array.BLOCK_ELEMENTS
    assert _array.block_size(1, size=700) == 700
    assert _array.block_size(2) == _array.THREAD_BLOCK_ELEMENTS > _array.BLOCK_ELEMENTS
    assert _array.threads_for(7 * 8760) == 1                     # an app's site-year
    assert _array.threads_for(100 * 3 * 8760) == 2               # a network
    workbench.set_threads(1)
    assert _array.threads_for(100 * 3 * 8760) == 1


def test_dask_tasks_run_their_blocks_on_one_thread(site_year, monkeypatch):
    """Chunks computed by dask's threads (as in a worker) never start the engine's pool,
    and give the in-memory numbers."""
    dask = pytest.importorskip("dask")
    import workbench.threads as T
    met, surf = site_year
    met = met.isel(time=slice(0, 24 * 60))
    opt = DryOptions(gases=("SO2",), particles=("pSO4",), components=False)
    workbench.set_threads(3)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        want = velocities(met, surf, opt)
        monkeypatch.setattr(T, "_get_pool", lambda n: pytest.fail("pool used in a dask task"))
        with dask.config.set(scheduler="threads"):
            got = velocities(met.chunk({"time": 24 * 30}), surf, opt).compute()
    for name in ("vd_SO2", "vd_pSO4", "ra"):
        np.testing.assert_array_equal(got[name].values, want[name].values, err_msg=name)
