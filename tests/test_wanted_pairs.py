"""Wanted pairs: a whole run computes the (site, receptor) pairs the sites ask for only.

The reference is the same study computed on the dense site x receptor grid (every site
on every receptor, ``receptors=`` all of them, the layout whole runs had before): each
site is computed on its own, so every wanted number must be the same to the bit, and
the pairs no site asks for must hold no computed value.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import xarray as xr

from ui.demo_subset import study_and_args, write_demo_subset
from workbench.stages import WANTED_PAIRS_NOTE, _site_attrs, pair_groups
from workbench.writers import velocities_dataset, write_budget_csv, write_summary_csv

SITES = ("ridge", "fell", "mere", "farm")


@pytest.fixture(scope="module")
def setup(tmp_path_factory):
    return study_and_args(write_demo_subset(tmp_path_factory.mktemp("pairs"), SITES, 2021,
                                            2021))


@pytest.fixture(scope="module")
def runs(setup):
    study, args = setup
    before = study.graph.counts["velocities"]
    whole = study.run(*args)
    computed = study.graph.counts["velocities"] - before
    dense = study.run(*args, receptors=study.receptors())
    return whole, dense, computed


def test_pair_groups_gather_sites_by_their_receptors():
    surf = xr.Dataset({"active": (("site", "receptor"),
                                  [[1, 1, 0], [0, 1, 1], [1, 1, 0]])},
                      coords={"site": ["a", "b", "c"], "receptor": ["x", "y", "z"]})
    surf["active"] = surf["active"].astype(bool)
    assert pair_groups(surf, ["a", "b", "c"]) == [(("a", "c"), ("x", "y")), (("b",), ("y", "z"))]
    assert pair_groups(surf, ["b"]) == [(("b",), ("y", "z"))]


def test_the_demo_network_wants_some_pairs_only(setup):
    study, _ = setup
    active = study.surfaces()["active"].values
    assert (~active).any() and active.any(axis=1).all()


def test_only_wanted_pairs_are_computed(setup, runs):
    study, _ = setup
    whole, dense, computed = runs
    groups = pair_groups(study.surfaces(), list(SITES))
    assert computed == len(groups) == 4              # one engine call per set of receptors
    vd, ref = whole.velocities, dense.velocities
    active = study.surfaces()["active"].values
    np.testing.assert_array_equal(vd["active"].values, active)
    assert vd.attrs["pairs"] == WANTED_PAIRS_NOTE
    assert list(vd["site"].values) == list(ref["site"].values)
    assert list(vd["receptor"].values) == list(ref["receptor"].values)
    left_out = set(ref.data_vars) - set(vd.data_vars)
    assert not set(vd.data_vars) - set(ref.data_vars)
    assert left_out and all(n.startswith("rc_") and n.count("_") > 1 or "time" in ref[n].dims
                            for n in left_out)      # Rc paths and hourly diagnostics only
    for name, v in vd.data_vars.items():
        if name == "active":
            continue
        assert v.attrs == ref[name].attrs, name             # per-site lists in site order
        a, b = v.transpose(*ref[name].dims).values, ref[name].values
        if {"site", "receptor"} <= set(v.dims):
            i = [v.dims.index("site"), v.dims.index("receptor")]
            a, b = np.moveaxis(a, i, [0, 1]), np.moveaxis(b, i, [0, 1])
            np.testing.assert_array_equal(a[active], b[active], err_msg=name)
            unwanted = a[~active]
            if a.dtype.kind == "f":
                assert np.isnan(unwanted).all(), name
            elif "flag_meanings" in v.attrs and "unknown" in v.attrs["flag_meanings"].split():
                # a flag variable (wetness_source): its "unknown" code, not 0 (a real code)
                words = v.attrs["flag_meanings"].split()
                unknown = np.asarray(v.attrs["flag_values"])[words.index("unknown")]
                assert (unwanted == unknown).all(), name
            else:
                assert not unwanted.astype(bool).any(), name
        else:
            np.testing.assert_array_equal(a, b, err_msg=name)
    assert np.isfinite(ref["vd_SO2"].values[~active]).any()      # the dense grid computes them


def test_wanted_numbers_are_the_dense_grids_to_the_byte(runs, tmp_path):
    whole, dense, _ = runs
    pd.testing.assert_frame_equal(whole.table, dense.table, check_exact=True)
    for write in (write_budget_csv, write_summary_csv):
        a, b = tmp_path / "a.csv", tmp_path / "b.csv"
        write(whole, None, None, a)
        write(dense, None, None, b)
        assert a.read_bytes() == b.read_bytes(), write.__name__


def test_velocities_file_holds_the_wanted_pairs(runs):
    whole, dense, _ = runs
    a, b = velocities_dataset(whole.velocities), velocities_dataset(dense.velocities)
    assert list(a["surface"].values) == list(b["surface"].values)
    assert set(a.data_vars) == set(b.data_vars)             # the file keeps every variable
    assert len(a["surface"]) == int(whole.velocities["active"].sum())
    for v in a.data_vars:
        if "surface" in a[v].dims:
            xr.testing.assert_identical(a[v], b[v])
    assert a.attrs["pairs"] == WANTED_PAIRS_NOTE


def test_a_receptor_a_site_does_not_want_is_computed_on_demand(setup):
    """What an app asks for (``receptors=[...]``) is computed for every site."""
    study, args = setup
    active = study.surfaces()["active"]
    rec = str(active["receptor"].values[-1])
    unwanted = [str(s) for s in active["site"].values if not active.sel(site=s, receptor=rec)]
    assert unwanted
    got = study.run(*args, receptors=[rec]).velocities
    assert np.isfinite(got["vd_SO2"].sel(site=unwanted, receptor=rec).values).any(axis=-1).all()


def test_per_site_attributes_are_merged_as_one_call_gives_them():
    """Lists and ``*_source`` texts per site in site order; the largest weight of a
    mode over the sites (what one call over every site writes); others as they are."""
    mode = "LogNormalMode(mmd=4e-07, gsd=2.0)"
    a = {"units": "m s-1", "coarse_fraction": [0.1], "coarse_fraction_source": "x",
         "modes": f"[({mode}, 0.8), ({mode}, 0.2)]"}
    b = {"units": "m s-1", "coarse_fraction": [0.3, 0.2], "coarse_fraction_source": "y, z",
         "modes": f"[({mode}, 0.7), ({mode}, 0.30000000000000004)]"}
    got = _site_attrs([a, b], [["s2"], ["s1", "s3"]], ["s1", "s2", "s3"])
    assert got == {"units": "m s-1", "coarse_fraction": [0.3, 0.1, 0.2],
                   "coarse_fraction_source": "y, x, z",
                   "modes": f"[({mode}, 0.8), ({mode}, 0.30000000000000004)]"}
