"""A run in blocks of sites writes the budget.nc of a whole run, pair for pair.

Four sites of the invented demo network ask for different receptor surfaces, so a whole
run lays every site on seven receptors of which each site wants two or three.  A pair no
site of a block asks for is one on which no velocity is computed, in a whole run as in a
block; a whole run still gives it the site's wet deposition, its dry components
"missing" (no deposition velocity in any hour: Vd coverage 0) and a total "partial".  A
block used to leave such pairs as fill values (NaN, empty text), so budget.nc of the two
runs differed although no result did.  The reference is the whole in-process run
(``Study.run``) of the same scenario; the budget Dataset of budget.nc
(``writers.budget_dataset``) must be identical variable by variable.
"""
from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

from ui.demo_subset import study_and_args, write_demo_subset
from workbench.blocks import run_blocks
from workbench.cli import main
from workbench.runcompare import compare_runs
from workbench.writers import budget_dataset

SITES = ("ridge", "fell", "mere", "farm")


@pytest.fixture(scope="module")
def scenario_file(tmp_path_factory):
    return write_demo_subset(tmp_path_factory.mktemp("layout"), SITES, 2021, 2021)


@pytest.fixture(scope="module")
def setup(scenario_file):
    return study_and_args(scenario_file)


@pytest.fixture(scope="module")
def whole(setup):
    study, args = setup
    return study.run(*args)


def assert_same_dataset(a: xr.Dataset, b: xr.Dataset):
    """Identical variable by variable (values, NaN where NaN, dtypes, attributes)."""
    assert list(a.data_vars) == list(b.data_vars)
    assert list(a.coords) == list(b.coords)
    for name in a.variables:
        xr.testing.assert_identical(a[name], b[name])
    assert a.attrs == b.attrs


def test_the_demo_subset_has_pairs_no_site_asks_for(whole):
    active = whole.budget["active"].values
    assert (~active).any() and active.any(axis=1).all()
    # a whole run gives such a pair the site's wet deposition and no dry Vd
    dep = whole.budget["deposition"].transpose("site", "receptor", "period", "component")
    wet = ["/wet/" in str(c) for c in whole.budget["component"].values]
    assert np.isfinite(dep.values[~active][..., wet]).any()


@pytest.mark.parametrize("block_sites", [1, 3])
def test_block_budget_dataset_equals_the_whole_runs(setup, whole, block_sites):
    study, args = setup
    got = run_blocks(study, *args, block_sites=block_sites)
    assert_same_dataset(budget_dataset(whole), budget_dataset(got))
    xr.testing.assert_identical(whole.years, got.years)


def test_block_budget_nc_and_compare_say_no_difference(scenario_file, tmp_path):
    a, b = tmp_path / "plain", tmp_path / "blocks"
    assert main(["run", str(scenario_file), "--out", str(a), "--quiet"]) == 0
    assert main(["run", str(scenario_file), "--out", str(b), "--quiet",
                 "--block-sites", "1"]) == 0
    with xr.open_dataset(a / "budget.nc") as da, xr.open_dataset(b / "budget.nc") as db:
        da, db = da.load(), db.load()
    # the time each was written is the only difference
    assert da.attrs.pop("history") != "" and db.attrs.pop("history") != ""
    assert_same_dataset(da, db)
    c = compare_runs(a, b)
    assert c.same and c.budget.empty, c.lines
